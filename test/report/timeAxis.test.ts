/**
 * Time axes: labels that never overlap, always mark the latest period, carry the year where it is
 * needed, and thin out as the span grows or the room shrinks. Dates are checked against Intl's own
 * formatting (en-US month names, day first: "4 May"), an independent formatter; positions against a plain computation of a
 * point scale with half a step of padding (the chart's scale).
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { periodTicks, timeX } from '../../src/report/timeAxis.js';
import { NARROW, WIDE } from '../../src/report/frame.js';

const DAY = 86_400_000;
const iso = (ms: number) => new Date(ms).toISOString().slice(0, 10);
const monthLabel = (p: string) => new Date(`${p}T00:00:00Z`).toLocaleDateString('en-US', { month: 'short', timeZone: 'UTC' });
/** "4 May": the day, then the month's short name (Intl, en-US month names: "Sep", not en-GB's "Sept"). */
const dayLabel = (p: string) => `${new Date(`${p}T00:00:00Z`).getUTCDate()} ${monthLabel(p)}`;
const days = (from: string, n: number, step = 1) => Array.from({ length: n }, (_, i) => iso(Date.parse(`${from}T00:00:00Z`) + i * step * DAY));
const months = (year: number, month: number, n: number) => Array.from({ length: n }, (_, i) => iso(Date.UTC(year, month - 1 + i, 1)));

/** Centres of neighbouring labels are apart by at least half their widths plus 8 px (the rule in timeAxis.ts). */
function noOverlap(periods: string[], ticks: { period: string; lines: string[] }[], plotPx: number, font: number) {
  const step = plotPx / periods.length;
  const x = (p: string) => (periods.indexOf(p) + 0.5) * step;
  const w = (lines: string[]) => Math.max(...lines.map((l) => l.length)) * font * 0.62;
  for (let k = 1; k < ticks.length; k++) expect(x(ticks[k].period) - x(ticks[k - 1].period)).toBeGreaterThanOrEqual((w(ticks[k].lines) + w(ticks[k - 1].lines)) / 2 + 8 - 1e-9);
}

describe('periodTicks', () => {
  it('labels every week of a short span, with the year where the span crosses one and on the latest', () => {
    const weeks = days('2026-12-14', 4, 7);
    const t = periodTicks(weeks, 'week', 600);
    expect(t.map((x) => x.period)).toEqual(weeks);
    expect(t.map((x) => x.lines)).toEqual([['14 Dec', '2026'], ['21 Dec'], ['28 Dec'], ['4 Jan', '2027']]);
    for (const x of t) expect(x.lines[0]).toBe(dayLabel(x.period));
  });

  it('thins 30 weeks to calendar months at a phone width, and still labels the latest week', () => {
    const weeks = days('2026-05-04', 30, 7);
    const t = periodTicks(weeks, 'week', NARROW.width - 64, NARROW.fontSize);
    expect(t[t.length - 1]).toEqual({ period: '2026-11-23', lines: ['23 Nov', '2026'] });
    const calendar = t.slice(0, -1);
    expect(calendar.length).toBeGreaterThanOrEqual(3);
    for (const x of calendar) {
      // the first week that starts in its month, labelled by the month
      expect(Number(x.period.slice(8, 10))).toBeLessThanOrEqual(7);
      expect(x.lines[0]).toBe(monthLabel(x.period));
    }
    expect(t[0].lines[1]).toBe('2026');
    noOverlap(weeks, t, NARROW.width - 64, NARROW.fontSize);
  });

  it('gives more labels the more room there is, and fewer the longer the span', () => {
    const weeks = days('2026-05-04', 30, 7);
    expect(periodTicks(weeks, 'week', WIDE.width - 64, 12).length).toBeGreaterThan(periodTicks(weeks, 'week', 300, 12).length);
    const long = days('2024-01-01', 156, 7);
    const t = periodTicks(long, 'week', 300, 11);
    expect(t.length).toBeLessThan(12);
    // three years: every year is named
    for (const y of ['2024', '2025', '2026']) expect(t.some((x) => x.lines.includes(y))).toBe(true);
  });

  it('a month grain over two years: months, quarters or years, and no label twice in one year', () => {
    const ms = months(2025, 3, 24);
    for (const px of [200, 400, 900]) {
      const t = periodTicks(ms, 'month', px, 11);
      const texts = t.map((x) => `${x.lines[0]} ${x.period.slice(0, 4)}`);
      expect(new Set(texts).size).toBe(texts.length);
      expect(t[t.length - 1].period).toBe(ms[ms.length - 1]);
      noOverlap(ms, t, px, 11);
    }
  });

  it('one period: one label, with its year', () => {
    expect(periodTicks(['2026-05-04'], 'day', 300)).toEqual([{ period: '2026-05-04', lines: ['4 May', '2026'] }]);
  });

  it('never overlaps, always ends at the latest period, and names every year it shows (seeded spans and widths)', () => {
    fc.assert(fc.property(
      fc.constantFrom<'day' | 'week' | 'month'>('day', 'week', 'month'), fc.integer({ min: 1, max: 900 }), fc.integer({ min: 120, max: 1000 }), fc.integer({ min: 0, max: 2000 }),
      (grain, n, px, offset) => {
        const start = iso(Date.UTC(2023, 0, 2) + offset * DAY);
        const periods = grain === 'month' ? months(Number(start.slice(0, 4)), Number(start.slice(5, 7)), Math.min(n, 240)) : days(start, n, grain === 'week' ? 7 : 1);
        const t = periodTicks(periods, grain, px, 11);
        expect(t[t.length - 1].period).toBe(periods[periods.length - 1]);
        noOverlap(periods, t, px, 11);
        // the first label and each label in a new year carry that year
        let year = '';
        for (const x of t) {
          const y = x.period.slice(0, 4);
          if (y !== year) expect(x.lines.includes(y) || x.lines[0] === y).toBe(true);
          year = y;
        }
      },
    ), { seed: 1402, numRuns: 300 });
  });
});

describe('timeX', () => {
  it('is a point scale over the periods with the ticks as axis values', () => {
    const weeks = days('2026-05-04', 10, 7);
    const x = timeX({ field: 'period', periods: weeks, grain: 'week', frame: WIDE, title: 'week starting' }) as { scale: { domain: string[]; type: string }; axis: { values: string[]; labelExpr: string } };
    expect(x.scale).toMatchObject({ type: 'point', domain: weeks });
    expect(x.axis.values[x.axis.values.length - 1]).toBe('2026-07-06');
    expect(x.axis.labelExpr).toContain('"2026-07-06":["6 Jul","2026"]');
  });
});
