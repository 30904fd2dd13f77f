/**
 * Early signals: a hand-worked example, and seeded random logs against plain loops over the raw
 * events, with the rates' intervals from an independent Wilson formula written here (Wilson 1927;
 * Newcombe 1998a, method 3) and the BH adjustment recomputed from its definition (Benjamini &
 * Hochberg 1995).
 */
import { describe, expect, it } from 'vitest';
import { earlySignals } from '../../src/signals/early.js';
import { observedRange, userTimelines } from '../../src/lifecycle/timelines.js';
import { randomEvents, readRaw, weekOf, weeklyRules, type RawEvent } from '../lifecycle/randomEvents.js';

const W = 7 * 86_400_000;
const at = (user: string, week: number, event: string): RawEvent => ({ user, ms: Date.UTC(2026, 2, 2, 10) + week * W, event, plan: 'hobby', amount: '0' });

function wilson(x: number, n: number): [number, number] {
  const z = 1.959963984540054;
  const c = (x + (z * z) / 2) / (n + z * z), h = (z * Math.sqrt((x * (n - x)) / n + (z * z) / 4)) / (n + z * z);
  return [x === 0 ? 0 : c - h, x === n ? 1 : c + h];
}

describe('earlySignals, hand-worked', () => {
  it('4 newcomers, 2 with a class in their first week (both back in week 2), 2 without (one back)', async () => {
    const raw = [
      at('a', 0, 'class_enrolled'), at('a', 0, 'booking_made'), at('a', 1, 'booking_made'),
      at('b', 0, 'class_enrolled'), at('b', 1, 'booking_made'),
      at('c', 0, 'booking_made'), at('c', 1, 'booking_made'),
      at('d', 0, 'booking_made'),
      at('e', 1, 'booking_made'), // first active in the last week: not observed for 2 weeks
      at('z', 2, 'booking_made'), // a later week, so that week 1 is complete
    ];
    const log = await readRaw(raw, weeklyRules());
    const t = userTimelines(log, 1);
    const r = earlySignals(log, t, observedRange(log, undefined, true), { early: 1, horizon: 1, thresholds: [1, 2] });
    expect(r.newcomers).toBe(5); // a, b, c, d and e (e: week 1 + 1 = week 2 is observed)
    const cls = r.rows.find((x) => x.event === 'class_enrolled' && x.k === 1)!;
    // e did no class and was not back in week 2: at ≥ 1 → 2 of 2; below → c of {c, d, e} = 1 of 3
    expect(cls.atLeast).toMatchObject({ n: 2, retained: 2, rate: 1 });
    expect(cls.below).toMatchObject({ n: 3, retained: 1 });
    expect(cls.lift).toBeCloseTo(3, 12);
    expect(cls.coverage).toBeCloseTo(0.4, 12);
    // Youden's J: 2 of 3 retained have a class, 0 of 2 not retained → 2/3
    expect(cls.youden).toBeCloseTo(2 / 3, 12);
    expect(r.leftOut).toBe(1); // z
    expect(r.caution).toMatch(/correlations, not causes/);
    expect(r.criterion).toMatch(/Youden/);
  });

  it('refuses when no newcomer is observed long enough, saying how many were left out', async () => {
    const log = await readRaw([at('a', 0, 'booking_made'), at('b', 1, 'booking_made')], weeklyRules());
    expect(() => earlySignals(log, userTimelines(log, 1), observedRange(log, undefined, true), { early: 1, horizon: 4, thresholds: [1] })).toThrow(/no newcomer is observed for 5 periods.*2 left out/);
  });
});

describe('earlySignals against plain loops (seeded random logs)', () => {
  it.each([31, 32, 33])('seed %i', async (seed) => {
    const raw = randomEvents(seed, 200, 16);
    const log = await readRaw(raw, weeklyRules());
    const range = observedRange(log, undefined, true);
    const o = { early: 2, horizon: 3, thresholds: [1, 2, 4] };
    const r = earlySignals(log, userTimelines(log, 1), range, o);
    // independent: per user, weeks and events from the raw objects
    const lastWeek = Math.max(...raw.map((e) => weekOf(e.ms)));
    const users = new Map<string, RawEvent[]>();
    for (const e of raw) users.set(e.user, [...(users.get(e.user) ?? []), e]);
    const cohort: { retained: boolean; counts: Map<string | null, number> }[] = [];
    let leftOut = 0;
    for (const evs of users.values()) {
      const first = Math.min(...evs.map((e) => weekOf(e.ms)));
      if (first + o.early + o.horizon - 1 > lastWeek) {
        leftOut++;
        continue;
      }
      const early = evs.filter((e) => weekOf(e.ms) < first + o.early);
      const counts = new Map<string | null, number>([[null, early.length]]);
      for (const e of early) counts.set(e.event, (counts.get(e.event) ?? 0) + 1);
      cohort.push({ retained: evs.some((e) => weekOf(e.ms) === first + o.early + o.horizon - 1), counts });
    }
    expect(r.newcomers).toBe(cohort.length);
    expect(r.leftOut).toBe(leftOut);
    const expected: { event: string | null; k: number; nA: number; xA: number; nB: number; xB: number }[] = [];
    for (const ev of [null, ...new Set(raw.map((e) => e.event))]) {
      for (const k of o.thresholds) {
        const a = cohort.filter((c) => (c.counts.get(ev) ?? 0) >= k), b = cohort.filter((c) => (c.counts.get(ev) ?? 0) < k);
        if (a.length && b.length) expected.push({ event: ev, k, nA: a.length, xA: a.filter((c) => c.retained).length, nB: b.length, xB: b.filter((c) => c.retained).length });
      }
    }
    expect(r.rows.length).toBe(expected.length);
    for (const e of expected) {
      const row = r.rows.find((x) => x.event === e.event && x.k === e.k)!;
      expect([row.atLeast.n, row.atLeast.retained, row.below.n, row.below.retained]).toEqual([e.nA, e.xA, e.nB, e.xB]);
      const [lo, hi] = wilson(e.xA, e.nA);
      expect(row.atLeast.lower).toBeCloseTo(lo, 12);
      expect(row.atLeast.upper).toBeCloseTo(hi, 12);
    }
    // BH from its definition: adjusted p of rank i = min over j ≥ i of m·p(j)/j
    const ps = r.rows.map((x) => x.p), m = ps.length;
    const sorted = [...ps].sort((a, b) => a - b);
    r.rows.forEach((x) => {
      const i = sorted.indexOf(x.p) + 1;
      const adj = Math.min(1, ...sorted.slice(i - 1).map((p, j) => (m * p) / (i + j)));
      expect(x.pAdjusted).toBeCloseTo(Math.min(1, adj), 12);
    });
  });
});
