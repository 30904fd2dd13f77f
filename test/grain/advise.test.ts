/**
 * The grain advisor: a hand-worked example, the quantile definition (Hyndman & Fan 1996, definition
 * 1: the inverse of the empirical distribution function), and the gaps of seeded random logs against
 * plain loops over the raw events.
 */
import { describe, expect, it } from 'vitest';
import { adviseGrain, quantileInverseEcdf, suggestGrain } from '../../src/grain/advise.js';
import { userTimelines } from '../../src/lifecycle/timelines.js';
import { dayOf, randomEvents, readRaw, weeklyRules, type RawEvent } from '../lifecycle/randomEvents.js';

const D = 86_400_000;
const ev = (user: string, day: number, hour = 10): RawEvent => ({ user, ms: Date.UTC(2026, 2, 1) + day * D + hour * 3_600_000, event: 'booking_made', plan: 'hobby', amount: '0' });

describe('quantileInverseEcdf (Hyndman & Fan 1996, definition 1)', () => {
  it('is the smallest value with at least p·n values at or below it', () => {
    // worked by hand: 5 values, 0.8·5 = 4 → the 4th smallest; 0.5·5 = 2.5 → the 3rd
    expect(quantileInverseEcdf([1, 1, 2, 7, 7], 0.8)).toBe(7);
    expect(quantileInverseEcdf([1, 1, 2, 7, 7], 0.5)).toBe(2);
    expect(quantileInverseEcdf([1, 1, 2, 7, 7], 0.4)).toBe(1);
    expect(quantileInverseEcdf([3], 1)).toBe(3);
    expect(() => quantileInverseEcdf([], 0.5)).toThrow(/no values/);
    expect(() => quantileInverseEcdf([1], 0)).toThrow(/p must be/);
  });
});

describe('suggestGrain', () => {
  it.each([
    [1, 3, 'day', 2], // daily returns; a 3-day gap spans 2 quiet days
    [5, 12, 'week', 1], // ceil(12 / 7) − 1 = 1
    [7, 21, 'week', 2],
    [8, 40, 'month', 1],
    [60, 200, 'month', 6], // rarer than monthly: still a month, ceil(200 / 31) − 1 = 6
  ] as const)('p80 %i, p95 %i → %s, lapse limit %i', (p80, p95, grain, lapse) => {
    expect(suggestGrain(p80, p95)).toEqual({ grain, lapseLimit: lapse });
  });
});

describe('adviseGrain', () => {
  it('hand-worked: days {3, 4, 11} and {1, 8}, a one-day member, two events on one day', async () => {
    const log = await readRaw([ev('ada', 3), ev('ada', 4), ev('ada', 4, 18), ev('ada', 11), ev('bo', 1), ev('bo', 8), ev('cy', 2)], weeklyRules());
    const a = adviseGrain(log, userTimelines(log, 1));
    expect(a.gaps).toBe(3); // 1, 7, 7
    expect(a.users).toBe(3);
    expect(a.returningUsers).toBe(2);
    expect(a.percentiles).toEqual({ p50: 7, p80: 7, p90: 7, p95: 7 });
    expect(a.suggestion).toEqual({ grain: 'week', lapseLimit: 1 });
    expect(a.distribution.find((b) => b.from === 1)!.gaps).toBe(1);
    expect(a.distribution.find((b) => b.from === 7)!.gaps).toBe(2);
    expect(a.reading).toMatch(/80% within 7 days, so a week grain fits/);
  });

  it('no returning user: no suggestion, and a reading that says why', async () => {
    const log = await readRaw([ev('ada', 3), ev('bo', 4)], weeklyRules());
    const a = adviseGrain(log, userTimelines(log, 1));
    expect(a.suggestion).toBeNull();
    expect(a.reading).toMatch(/No user came back/);
  });

  it.each([21, 22, 23])('seeded log %i: gaps and percentiles match plain loops over the raw events', async (seed) => {
    const raw = randomEvents(seed);
    const keys = ['booking_made', 'checked_in'];
    const log = await readRaw(raw, weeklyRules({ activity: { keyEvents: keys } }));
    const a = adviseGrain(log, userTimelines(log, 1));
    const days = new Map<string, Set<number>>();
    for (const e of raw) if (keys.includes(e.event)) days.set(e.user, (days.get(e.user) ?? new Set()).add(dayOf(e.ms)));
    const gaps: number[] = [];
    for (const s of days.values()) {
      const d = [...s].sort((x, y) => x - y);
      for (let i = 1; i < d.length; i++) gaps.push(d[i] - d[i - 1]);
    }
    gaps.sort((x, y) => x - y);
    expect(a.gaps).toBe(gaps.length);
    expect(a.users).toBe(days.size);
    const pick = (p: number) => gaps[Math.ceil(p * gaps.length) - 1];
    expect(a.percentiles).toEqual({ p50: pick(0.5), p80: pick(0.8), p90: pick(0.9), p95: pick(0.95) });
    for (const b of a.distribution) expect(b.gaps).toBe(gaps.filter((g) => g >= b.from && (b.to === null || g <= b.to)).length);
  });
});
