/**
 * Active periods: the grid count and the sort must give the same table; both are checked against an
 * independent count written here (a Map of user|period → events).
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import type { EventLog } from '../../src/ingest/eventLog.js';
import { activePeriods } from '../../src/lifecycle/activity.js';

function logOf(rows: [number, number][], users: number): EventLog {
  return { size: rows.length, user: Int32Array.from(rows.map((r) => r[0])), period: Int32Array.from(rows.map((r) => r[1])), users: Array.from({ length: users }, (_, i) => `m${i}`) } as unknown as EventLog;
}

describe('activePeriods', () => {
  it('grid and sort give the independent count, for any minEvents and range (fast-check)', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 30 }), fc.array(fc.tuple(fc.nat(29), fc.integer({ min: 95, max: 125 })), { maxLength: 400 }), fc.integer({ min: 1, max: 4 }), fc.integer({ min: 95, max: 110 }), fc.integer({ min: 1, max: 30 }),
        (users, raw, minEvents, startKey, span) => {
          const rows = raw.map(([u, p]) => [u % users, p] as [number, number]);
          const log = logOf(rows, users);
          const want = new Map<string, number>();
          for (const [u, p] of rows) if (p >= startKey && p < startKey + span) want.set(`${u}|${p - startKey}`, (want.get(`${u}|${p - startKey}`) ?? 0) + 1);
          const expected = [...want].filter(([, n]) => n >= minEvents).map(([k, n]) => [...k.split('|').map(Number), n]).sort((a, b) => a[0] - b[0] || a[1] - b[1]);
          // the grid counted row by row, the grid counted block by block (blocks of 1, 8 and 64 cells), and the sort
          for (const [grid, bits] of [[true, 0], [true, 1], [true, 3], [true, 6], [false, 0]] as const) {
            const a = activePeriods(log, minEvents, startKey, span, grid, bits);
            expect(Array.from(a.user, (u, i) => [u, a.offset[i], a.events[i]])).toEqual(expected);
            // and written into the log's own columns (spendLog; a fresh log each time, since it is spent)
            const b = activePeriods(logOf(rows, users), minEvents, startKey, span, grid, bits, true);
            expect(Array.from(b.user, (u, i) => [u, b.offset[i], b.events[i]])).toEqual(expected);
          }
        }),
      { seed: 1707, numRuns: 300 },
    );
  });

  it("a period with more events than a byte holds (70,000) is counted exactly by the grid and the sort", () => {
    const rows: [number, number][] = Array.from({ length: 70_000 }, () => [1, 3]);
    rows.push([0, 2]);
    for (const [grid, bits] of [[true, 0], [true, 2], [false, 0]] as const) expect(Array.from(activePeriods(logOf(rows, 2), 1, 0, 5, grid, bits).events)).toEqual([1, 70_000]);
    // and a threshold above 255 counts from the overflow
    expect(Array.from(activePeriods(logOf(rows, 2), 300, 0, 5).user)).toEqual([1]);
    expect(Array.from(activePeriods(logOf(rows, 2), 300, 0, 5, true, 2).user)).toEqual([1]);
  });
  it('a spent log holds the blocked count: cells in its period column, the active periods in both columns (events in fresh memory when they do not fit)', () => {
    // independent count: a Map of user|offset → events, as in the property above
    const count = (rows: [number, number][], minEvents: number, startKey: number, span: number) => {
      const want = new Map<string, number>();
      for (const [u, p] of rows) if (p >= startKey && p < startKey + span) want.set(`${u}|${p - startKey}`, (want.get(`${u}|${p - startKey}`) ?? 0) + 1);
      return [...want].filter(([, n]) => n >= minEvents).map(([k, n]) => [...k.split('|').map(Number), n]).sort((a, b) => a[0] - b[0] || a[1] - b[1]);
    };
    // many events a cell (active ≤ half the rows: the events go after the users), and one event a cell (they do not fit)
    const dense: [number, number][] = Array.from({ length: 600 }, (_, i) => [(i * 7) % 11, 100 + ((i * 3) % 5)]);
    const sparse: [number, number][] = Array.from({ length: 40 }, (_, i) => [i, 100 + (i % 3)]);
    for (const [rows, users, fits] of [[dense, 11, true], [sparse, 40, false]] as const) {
      for (const [minEvents, startKey, span] of [[1, 100, 5], [2, 101, 3], [1, 99, 2]]) {
        const log = logOf([...rows], users);
        const a = activePeriods(log, minEvents, startKey, span, true, 2, true);
        expect(Array.from(a.user, (u, i) => [u, a.offset[i], a.events[i]])).toEqual(count([...rows], minEvents, startKey, span));
        expect(a.user.buffer).toBe(log.period.buffer);
        expect(a.offset.buffer).toBe(log.user.buffer);
        if (minEvents === 1 && startKey === 100) expect(a.events.buffer === log.period.buffer).toBe(fits);
      }
    }
  });
});
