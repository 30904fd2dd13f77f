import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { Extremes, handful, rangeOutliers } from '../../src/ingest/extremes.js';

const DAY = 86_400_000;
const dayKey = (ms: number) => Math.floor(ms / DAY);
const identity = (ref: number) => ref;

function feed(days: number[]): Extremes {
  const ex = new Extremes();
  days.forEach((d, i) => ex.add(d * DAY, `day ${d}`, 'e.csv', i + 2, identity));
  return ex;
}

/**
 * The definition, computed independently by sorting every row: with h = handful(n), the bulk runs from
 * the (h+1)-th earliest to the (h+1)-th latest row; a row among the h earliest (latest) is outlying when
 * it lies more periods before (after) the bulk than the bulk is long, and more than 10.
 */
function bySorting(days: number[]): { early: number[]; late: number[] } | undefined {
  const h = Math.min(5, Math.floor(days.length / 50));
  if (h === 0) return undefined;
  const up = [...days].sort((a, b) => a - b);
  const down = [...days].sort((a, b) => b - a);
  const from = up[h], to = down[h];
  const length = to - from + 1;
  const early = up.slice(0, h).filter((d) => from - d > length && from - d > 10);
  const late = down.slice(0, h).filter((d) => d - to > length && d - to > 10);
  return early.length + late.length ? { early, late } : undefined;
}

describe('handful', () => {
  it('is at most 5 rows and at most one row in 50', () => {
    expect([0, 49, 50, 201, 249, 250, 12_000].map(handful)).toEqual([0, 0, 1, 4, 4, 5, 5]);
  });
});

describe('rangeOutliers', () => {
  it('names the one stray row of a daily log (12,000 rows over 60 days, one in 1900)', () => {
    const days = Array.from({ length: 12_000 }, (_, i) => 20_513 + (i % 60)); // 2026-03-01 on
    days.splice(500, 0, -25_567); // 1900-01-01
    const o = rangeOutliers(feed(days), days.length, dayKey)!;
    expect(o.bulk).toEqual({ fromKey: 20_513, toKey: 20_572 });
    expect(o.early.map((r) => [r.text, r.lineOf(r.ref)])).toEqual([['day -25567', 502]]);
    expect(o.late).toEqual([]);
  });

  it('finds nothing in a log whose ends are dense (a long thin tail is data, not a slip)', () => {
    const days = Array.from({ length: 1000 }, (_, i) => (i < 20 ? i * 10 : 400 + (i % 50)));
    expect(rangeOutliers(feed(days), days.length, dayKey)).toBeUndefined();
  });

  it('matches the definition computed by sorting every row (seeded)', () => {
    const log = fc.record({
      bulk: fc.array(fc.integer({ min: 0, max: 100 }), { minLength: 0, maxLength: 400 }),
      strays: fc.array(fc.integer({ min: -5000, max: 5000 }), { maxLength: 8 }),
    });
    fc.assert(
      fc.property(log, ({ bulk, strays }) => {
        const days = [...bulk, ...strays];
        const got = rangeOutliers(feed(days), days.length, dayKey);
        const want = bySorting(days);
        expect(got && { early: got.early.map((r) => r.wallMs / DAY), late: got.late.map((r) => r.wallMs / DAY) }).toEqual(want);
      }),
      { seed: 8, numRuns: 300 },
    );
  });

  it('keeps the first of equal timestamps, with its line', () => {
    const ex = feed([5, 5, 5, 1, 1, 9]);
    expect(ex.earliest.map((r) => r.ref)).toEqual([5, 6, 2, 3, 4, 7]);
  });
});
