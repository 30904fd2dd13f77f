/**
 * The cohort triangle as a heat map: the share of each acquisition cohort active N periods after its
 * first, the share written in each cell where it fits, the cohort's size beside its row, and a colour
 * scale stretched over the shares the chart holds (not 0–100%), so that a range of 10–45% uses the
 * whole ramp.
 *
 * - **Daily logs** are shown by weekly cohorts (the week of the first active day, by the rules' week
 *   start) and weekly ages: cell k is the average share of the cohort's users active on a day k of
 *   days 7k − 6 … 7k after their first (user-days active ÷ user-days observed). A day-by-day triangle
 *   of a half-year log has hundreds of rows of near-equal cells.
 * - **An unusually large cohort** — more than twice the median size of the cohorts shown, with at
 *   least four shown — is marked beside its size (a promotion, an import, or the first period of an
 *   export that starts mid-history).
 */
import type { TopLevelSpec } from 'vega-lite';
import type { CohortsOutput } from '../../explain/cohortReport.js';
import type { CohortRow } from '../../flows/types.js';
import { periodKeyOfDate, periodLabel } from '../../periods/calendar.js';
import type { Weekday } from '../../rules/schema.js';
import { noun, plural } from '../../text/plural.js';
import { WIDE, type Frame } from '../frame.js';
import { RAMP, RAMP_INK_SWITCH, SERIES } from '../palette.js';
import { type Chart } from './types.js';

/** Ages the chart shows at most (a year of weeks): the full rows are in cohorts.json. */
export const TRIANGLE_AGES = 52;
/** A cohort is marked as large above this multiple of the median size of the cohorts shown. */
export const LARGE_COHORT = 2;
/** The mark beside a large cohort's size. */
export const LARGE_MARK = '▲';

export interface TriangleCell {
  cohort: string;
  age: number;
  /** Users (or, for weekly ages of a daily log, user-days) observed at this age. */
  n: number;
  active: number;
  share: number;
}

export interface TriangleData {
  /** 'week' when a daily log was grouped into weekly cohorts and ages. */
  grain: string;
  weekly: boolean;
  cohorts: { cohort: string; size: number; large: boolean }[];
  cells: TriangleCell[];
  ages: number;
}

const median = (xs: number[]) => {
  const s = [...xs].sort((a, b) => a - b);
  return s.length ? (s.length % 2 ? s[(s.length - 1) / 2] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2) : 0;
};

/**
 * The triangle's cohorts and cells (ages 1 … {@link TRIANGLE_AGES}); a daily log grouped by week as
 * described above, with `weekStart` from the rules.
 * @example triangleData([{ cohort: '2026-05-04', size: 10, active: [10, 4] }], 'week', 'monday').cells
 *   // [{ cohort: '2026-05-04', age: 1, n: 10, active: 4, share: 0.4 }]
 */
export function triangleData(rows: readonly CohortRow[], grain: string, weekStart: Weekday): TriangleData {
  let cohorts: { cohort: string; size: number }[];
  let cells: TriangleCell[];
  const weekly = grain === 'day';
  if (weekly) {
    const scheme = { grain: 'week' as const, weekStart };
    const byWeek = new Map<string, { size: number; active: number[]; n: number[] }>();
    for (const r of rows) {
      const week = periodLabel(periodKeyOfDate(r.cohort, scheme)!, scheme);
      const g = byWeek.get(week) ?? { size: 0, active: [], n: [] };
      g.size += r.size;
      // day a ≥ 1 after the first falls in weekly age ceil(a / 7)
      for (let a = 1; a < r.active.length && a <= TRIANGLE_AGES * 7; a++) {
        const k = Math.ceil(a / 7);
        g.active[k] = (g.active[k] ?? 0) + r.active[a];
        g.n[k] = (g.n[k] ?? 0) + r.size;
      }
      byWeek.set(week, g);
    }
    cohorts = [...byWeek].map(([cohort, g]) => ({ cohort, size: g.size }));
    cells = [...byWeek].flatMap(([cohort, g]) => g.n.flatMap((n, k) => (n > 0 ? [{ cohort, age: k, n, active: g.active[k], share: g.active[k] / n }] : [])));
  } else {
    cohorts = rows.map((r) => ({ cohort: r.cohort, size: r.size }));
    cells = rows.flatMap((r) => r.active.flatMap((active, age) => (age > 0 && age <= TRIANGLE_AGES && r.size > 0 ? [{ cohort: r.cohort, age, n: r.size, active, share: active / r.size }] : [])));
  }
  const mid = median(cohorts.map((c) => c.size));
  return {
    grain: weekly ? 'week' : grain,
    weekly,
    cohorts: cohorts.map((c) => ({ ...c, large: cohorts.length >= 4 && c.size > LARGE_COHORT * mid })),
    cells,
    ages: Math.max(0, ...cells.map((c) => c.age)),
  };
}

/** The colour domain: the shares of the cells that are not small, widened to whole 5% steps. */
export function shareDomain(cells: readonly TriangleCell[], minCell: number): [number, number] {
  const shares = cells.filter((c) => c.n >= minCell).map((c) => c.share);
  const all = shares.length ? shares : cells.map((c) => c.share);
  if (!all.length) return [0, 1];
  // in whole 5% steps (integers, so that no rounding error creeps in), at least two steps wide
  let lo = Math.floor(Math.min(...all) * 20 + 1e-9);
  let hi = Math.ceil(Math.max(...all) * 20 - 1e-9);
  if (hi - lo < 2) [lo, hi] = [Math.max(0, lo - 1), Math.min(20, hi + 1)];
  return [lo / 20, hi / 20];
}

export function cohortTriangleChart(rows: readonly CohortRow[], c: CohortsOutput, o: { grain: string; weekStart: Weekday; minCell: number }): Chart {
  const t = triangleData(rows, o.grain, o.weekStart);
  const minN = t.weekly ? o.minCell * 7 : o.minCell;
  const cells = t.cells.map((x) => ({ ...x, small: x.n < minN, label: `${Math.round(x.share * 100)}` }));
  const domain = shareDomain(t.cells, minN);
  const order = t.cohorts.map((x) => x.cohort);
  const sizes = Object.fromEntries(t.cohorts.map((x) => [x.cohort, `${x.size.toLocaleString('en-US')}${x.large ? ` ${LARGE_MARK}` : ''}`]));
  const large = t.cohorts.filter((x) => x.large);
  const ages = Array.from({ length: t.ages }, (_, k) => k + 1);
  const ink = domain[0] + RAMP_INK_SWITCH * (domain[1] - domain[0]);
  const draw = (f: Frame): TopLevelSpec => {
    // room for the cohort dates on the left and the sizes on the right, then one column an age
    const cellW = (f.width - 12 * f.fontSize * 0.62 - 9 * f.fontSize * 0.62 - 40) / Math.max(ages.length, 1);
    const text = cellW >= 2 * f.fontSize * 0.62 + 6;
    const rowH = Math.max(f.fontSize + 5, text ? 17 : 0);
    const y = { field: 'cohort', type: 'ordinal', scale: { domain: order }, title: `cohort (first active ${t.grain})` };
    return {
      $schema: 'https://vega.github.io/schema/vega-lite/v6.json',
      width: f.width,
      height: Math.max(3, order.length) * rowH,
      autosize: { type: 'fit-x', contains: 'padding' },
      layer: [
        {
          data: { values: cells },
          mark: { type: 'rect', stroke: 'white', strokeWidth: 0.5 },
          encoding: {
            x: { field: 'age', type: 'ordinal', scale: { domain: ages }, title: `${t.grain}s since first active`, axis: { labelAngle: 0, labelOverlap: 'greedy', orient: 'top' } },
            y,
            color: { field: 'share', type: 'quantitative', scale: { domain, range: RAMP, clamp: true }, title: 'active share', legend: { format: '.0%', orient: 'bottom', direction: 'horizontal', gradientLength: Math.min(260, f.width - 140), values: [domain[0], (domain[0] + domain[1]) / 2, domain[1]] } },
            opacity: { condition: { test: 'datum.small', value: 0.35 }, value: 1 },
          },
        },
        ...(text ? [{
          data: { values: cells },
          mark: { type: 'text', fontSize: Math.max(9, f.fontSize - 2), baseline: 'middle' },
          encoding: {
            x: { field: 'age', type: 'ordinal', scale: { domain: ages } },
            y: { ...y, axis: null },
            text: { field: 'label' },
            color: { condition: { test: `datum.share > ${ink}`, value: 'white' }, value: '#1b2733' },
          },
        }] : []),
        {
          data: { values: t.cohorts },
          mark: { type: 'tick', opacity: 0 },
          encoding: {
            y: {
              ...y,
              axis: {
                orient: 'right', title: 'users', domain: false, ticks: false, labelExpr: `(${JSON.stringify(sizes)})[datum.value] || ''`,
                labelColor: large.length ? { condition: { test: `indexof(${JSON.stringify(large.map((x) => x.cohort))}, datum.value) >= 0`, value: SERIES[2] }, value: '#33414e' } : '#33414e',
                labelFontWeight: large.length ? { condition: { test: `indexof(${JSON.stringify(large.map((x) => x.cohort))}, datum.value) >= 0`, value: 'bold' }, value: 'normal' } : 'normal',
              },
            },
          },
        },
      ],
      resolve: { axis: { y: 'independent' } },
    } as unknown as TopLevelSpec;
  };
  const one = c.classic[0];
  const readings = c.shapes.filter((s) => s.reading !== 'too short');
  const falling = readings.filter((s) => s.reading === 'still falling').length;
  const reading = [
    one && one.pooled.rate !== null ? `Pooled, ${(Number(one.pooled.rate) * 100).toFixed(0)}% of users are active ${plural(one.from, o.grain)} after their first` : '',
    readings.length ? `${falling} of ${plural(readings.length, t.weekly ? 'daily cohort' : 'cohort')} with enough history ${falling === 1 ? 'is' : 'are'} still falling, the rest flattening or rising` : "no cohort has enough history yet for a reading of its curve's shape",
    large.length ? `unusually large: ${large.map((x) => `${x.cohort} (${plural(x.size, 'user')})`).join(', ')}` : '',
  ].filter(Boolean).join('; ');
  return {
    id: 'cohort-triangle',
    title: 'Acquisition cohorts',
    subtitle: t.weekly
      ? `A daily log, shown by weekly cohorts: each cell is the average share of the week's new users active on a day of week N after their first active day (days 1–7 are week 1); the size of each cohort is on the right`
      : `Share of each cohort active N ${noun(2, o.grain)} after its first active ${o.grain} (in %); the size of each cohort is on the right${rows.some((r) => r.active.length > TRIANGLE_AGES + 1) ? ` (N up to ${TRIANGLE_AGES})` : ''}`,
    reading: `${reading.charAt(0).toUpperCase()}${reading.slice(1)}.`,
    note: `The colours span ${Math.round(domain[0] * 100)}–${Math.round(domain[1] * 100)}%, the range of the cells. ${large.length ? `${LARGE_MARK} marks a cohort more than ${LARGE_COHORT} times the median size of the cohorts shown. ` : ''}Cells from fewer than ${plural(minN, t.weekly ? 'user-day' : 'user')} are faded. Shape readings compare each cohort curve's late slope with its early one (the rule is in cohorts.json).`,
    spec: draw(WIDE),
    draw,
    table: { name: 'cohort-triangle', header: ['cohort', 'age', t.weekly ? 'user_days' : 'users', 'active', 'share'], rows: t.cells.map((x) => [x.cohort, x.age, x.n, x.active, x.share]) },
  };
}
