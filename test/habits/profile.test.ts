/** Habit profiles: a hand-worked example, and seeded random logs against plain loops over the raw events. */
import { describe, expect, it } from 'vitest';
import { habitProfiles } from '../../src/habits/profile.js';
import { observedRange, userTimelines } from '../../src/lifecycle/timelines.js';
import { randomEvents, readRaw, weekOf, weeklyRules, type RawEvent } from '../lifecycle/randomEvents.js';

const W = 7 * 86_400_000;
// 2026-03-02 is a Monday; hour 10 UTC
const at = (user: string, week: number, event: string, dayOffset = 0): RawEvent => ({ user, ms: Date.UTC(2026, 2, 2, 10) + week * W + dayOffset * 86_400_000, event, plan: 'hobby', amount: '0' });

describe('habitProfiles, hand-worked (span 4, 3 active make long-tenured, lapse limit 1)', () => {
  it('splits members into the two groups and measures them', async () => {
    const raw = [
      at('a', 0, 'class_enrolled'), at('a', 1, 'booking_made'), at('a', 2, 'class_enrolled'), at('a', 3, 'booking_made', 2), // long-tenured, run 4
      at('b', 0, 'booking_made'), at('b', 2, 'class_enrolled'), at('b', 3, 'booking_made'), // 3 of 4, run 2, gaps 2 and 1
      at('c', 0, 'booking_made'), // went dormant early: inactive in weeks 2 and 3
      at('d', 0, 'booking_made'), at('d', 3, 'booking_made'), // neither: active in week 3
      at('e', 2, 'booking_made'), // first active in week 2: not observed for 4 weeks
    ];
    const log = await readRaw(raw, weeklyRules({ lapseLimit: 1 }));
    const h = habitProfiles(log, userTimelines(log, 1), observedRange(log, undefined, true), { span: 4, minActive: 3, lapseLimit: 1 });
    expect(h.longTenured.members).toBe(2);
    expect(h.droppedEarly.members).toBe(1);
    expect(h.neither).toBe(1);
    expect(h.leftOut).toBe(1);
    expect(h.longTenured.activeShare).toEqual({ mean: (1 + 0.75) / 2, median: (1 + 0.75) / 2 });
    expect(h.longTenured.longestRun).toEqual({ mean: 3, median: 3 });
    expect(h.longTenured.gaps.map((g) => g.count)).toEqual([4, 1, 0]); // a: 1,1,1; b: 2,1
    const cls = h.longTenured.events.find((x) => x.event === 'class_enrolled')!;
    expect(cls.memberShare).toBe(1);
    expect(cls.periodShare).toBeCloseTo((2 / 4 + 1 / 3) / 2, 12);
    // a's events: Mondays but one Wednesday; b: Mondays
    expect(h.longTenured.weekdays[0]).toBeCloseTo(6 / 7, 12);
    expect(h.longTenured.weekdays[2]).toBeCloseTo(1 / 7, 12);
    expect(h.longTenured.hours[10]).toBe(1);
    expect(h.caution).toMatch(/correlation, not a cause/);
  });

  it('refuses a span too short to show dormancy', async () => {
    const log = await readRaw([at('a', 0, 'booking_made')], weeklyRules());
    expect(() => habitProfiles(log, userTimelines(log, 1), observedRange(log, undefined, true), { span: 3, minActive: 2, lapseLimit: 2 })).toThrow(/a span of 3 periods cannot show a user going dormant/);
  });
});

describe('habitProfiles against plain loops (seeded random logs)', () => {
  it.each([41, 42])('seed %i', async (seed) => {
    const raw = randomEvents(seed, 150, 14);
    const log = await readRaw(raw, weeklyRules());
    const o = { span: 6, minActive: 4, lapseLimit: 2 };
    const h = habitProfiles(log, userTimelines(log, 1), observedRange(log, undefined, true), o);
    const lastWeek = Math.max(...raw.map((e) => weekOf(e.ms)));
    const byUser = new Map<string, RawEvent[]>();
    for (const e of raw) byUser.set(e.user, [...(byUser.get(e.user) ?? []), e]);
    const groups = { lt: [] as RawEvent[][], de: [] as RawEvent[][] };
    let leftOut = 0, neither = 0;
    for (const evs of byUser.values()) {
      const first = Math.min(...evs.map((e) => weekOf(e.ms)));
      if (first + o.span - 1 > lastWeek) {
        leftOut++;
        continue;
      }
      const inSpan = evs.filter((e) => weekOf(e.ms) < first + o.span);
      const weeks = new Set(inSpan.map((e) => weekOf(e.ms) - first));
      if (weeks.size >= o.minActive) groups.lt.push(inSpan);
      else if ([...weeks].every((w) => w < o.span - o.lapseLimit - 1)) groups.de.push(inSpan);
      else neither++;
    }
    expect([h.longTenured.members, h.droppedEarly.members, h.leftOut, h.neither]).toEqual([groups.lt.length, groups.de.length, leftOut, neither]);
    for (const [g, prof] of [[groups.lt, h.longTenured], [groups.de, h.droppedEarly]] as const) {
      const share = g.reduce((a, evs) => a + new Set(evs.map((e) => weekOf(e.ms))).size / o.span, 0) / g.length;
      expect(prof.activeShare!.mean).toBeCloseTo(share, 12);
      const all = g.flat();
      const mondays = all.filter((e) => new Date(e.ms).getUTCDay() === 1).length;
      expect(prof.weekdays[0]).toBeCloseTo(mondays / all.length, 12);
      const booking = g.filter((evs) => evs.some((e) => e.event === 'booking_made')).length;
      expect(prof.events.find((x) => x.event === 'booking_made')!.memberShare).toBeCloseTo(booking / g.length, 12);
    }
  });
});
