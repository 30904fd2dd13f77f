/** Per-user timelines: checked against plain loops over the raw events of seeded random logs. */
import { describe, expect, it } from 'vitest';
import { activeIn, firstActive, observedRange, userTimelines } from '../../src/lifecycle/timelines.js';
import { randomEvents, readRaw, weekOf, weeklyRules } from './randomEvents.js';

describe('userTimelines', () => {
  it.each([1, 2])('active periods with minEvents %i match a count of key events per user and week', async (minEvents) => {
    const raw = randomEvents(11);
    const keys = ['booking_made', 'checked_in', 'class_enrolled'];
    const log = await readRaw(raw, weeklyRules({ activity: { keyEvents: keys, minEvents } }));
    const t = userTimelines(log, minEvents);
    // independent: count key events per (user, week) from the raw objects
    const counts = new Map<string, Map<number, number>>();
    for (const e of raw) {
      if (!keys.includes(e.event)) continue;
      const m = counts.get(e.user) ?? new Map<number, number>();
      m.set(weekOf(e.ms), (m.get(weekOf(e.ms)) ?? 0) + 1);
      counts.set(e.user, m);
    }
    // row 0 of the log is raw[0]: the offset between the log's period keys and weekOf
    const week0 = log.period[0] - weekOf(raw[0].ms);
    for (let u = 0; u < log.users.length; u++) {
      const expected = [...(counts.get(log.users[u])?.entries() ?? [])].filter(([, n]) => n >= minEvents).sort((a, b) => a[0] - b[0]);
      const got = Array.from(t.activePeriod.subarray(t.activeStart[u], t.activeStart[u + 1]), (p) => p - week0);
      expect(got).toEqual(expected.map(([w]) => w));
      expect(Array.from(t.activeEvents.subarray(t.activeStart[u], t.activeStart[u + 1]))).toEqual(expected.map(([, n]) => n));
      if (expected.length) {
        expect(firstActive(t, u)! - week0).toBe(expected[0][0]);
        expect(activeIn(t, u, expected[0][0] + week0)).toBe(true);
      } else expect(firstActive(t, u)).toBeUndefined();
      // rows in time order
      const ms = Array.from(t.order.subarray(t.rowStart[u], t.rowStart[u + 1]), (i) => log.wallMs[i]);
      expect(ms).toEqual([...ms].sort((a, b) => a - b));
      expect(ms.length).toBe(raw.filter((e) => e.user === log.users[u]).length);
    }
  });

  it('observedRange leaves out an incomplete last week unless asked to keep it', async () => {
    // the last event on the Tuesday of the last week: the data stop 2/7 of the way through it
    const raw = randomEvents(12, 30, 6).filter((e) => weekOf(e.ms) < 5);
    raw.push({ user: 'm0', ms: Date.UTC(2026, 3, 7, 10), event: 'booking_made', plan: 'hobby', amount: '1.00' });
    const log = await readRaw(raw, weeklyRules());
    const r = observedRange(log, undefined, false);
    expect(r.leftOut?.label).toBe('2026-04-06');
    expect(r.lastKey).toBe(observedRange(log, undefined, true).lastKey - 1);
  });
});
