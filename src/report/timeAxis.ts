/**
 * Time axes that read at any width: tick labels are chosen by the span and the room, never repeat,
 * always label the latest period, and carry the year — on the first label, wherever the year
 * changes, and on the latest — so "1 Jan" is never shown without it.
 *
 * The rule: try ever coarser label sets and keep the first whose labels do not collide (centres
 * apart by half the two labels' widths plus 8 px, a label's width estimated at 0.62 × the font size
 * a character, about DejaVu Sans's digit width):
 * - day and week grain: every period, every 2nd (and for days every 7th and 14th), counted back from
 *   the latest, labelled "4 May"; then calendar months — every 1, 2, 3, 6 or 12 months, a month's
 *   first period labelled "May" (or the year alone for every 12) — with the latest period added (a
 *   month label too close to it gives way);
 * - month grain: the calendar levels only.
 * When even yearly labels collide, labels are dropped from the left of the latest one until they fit.
 */
import type { Frame } from './frame.js';
import { plotWidth } from './frame.js';

export type TimeGrain = 'day' | 'week' | 'month';

export interface PeriodTick {
  /** The period label (`YYYY-MM-DD`) the tick stands at. */
  period: string;
  /** The label's lines: "4 May" or "May", and the year on a second line where it is shown. */
  lines: string[];
}

const MONTHS = ['Jan', 'Feb', 'Mar', 'Apr', 'May', 'Jun', 'Jul', 'Aug', 'Sep', 'Oct', 'Nov', 'Dec'];
const CHAR = 0.62;
const GAP = 8;

type Level = { every: number } | { months: number };

const LEVELS: Record<TimeGrain, Level[]> = {
  day: [{ every: 1 }, { every: 2 }, { every: 7 }, { every: 14 }, { months: 1 }, { months: 2 }, { months: 3 }, { months: 6 }, { months: 12 }],
  week: [{ every: 1 }, { every: 2 }, { months: 1 }, { months: 2 }, { months: 3 }, { months: 6 }, { months: 12 }],
  month: [{ months: 1 }, { months: 2 }, { months: 3 }, { months: 6 }, { months: 12 }],
};

const parts = (p: string) => ({ year: Number(p.slice(0, 4)), month: Number(p.slice(5, 7)) - 1, day: Number(p.slice(8, 10)) });
const dayLabel = (p: string, grain: TimeGrain) => (grain === 'month' ? MONTHS[parts(p).month] : `${parts(p).day} ${MONTHS[parts(p).month]}`);

/** Candidate ticks of one level: [index, first line]. The latest period is always one. */
function levelTicks(periods: readonly string[], grain: TimeGrain, level: Level): [number, string][] {
  const n = periods.length;
  if ('every' in level) {
    const out: [number, string][] = [];
    for (let i = n - 1; i >= 0; i -= level.every) out.unshift([i, dayLabel(periods[i], grain)]);
    return out;
  }
  const out: [number, string][] = [];
  let seen = '';
  periods.forEach((p, i) => {
    const { year, month } = parts(p);
    const key = `${year}-${month}`;
    if (key === seen) return;
    seen = key;
    if (month % level.months !== 0) return;
    // the first period starting in the month; when the data start later in it, labelled by its date
    const opens = grain === 'month' || parts(p).day <= (grain === 'week' ? 7 : 1);
    out.push([i, !opens ? dayLabel(p, grain) : level.months === 12 ? String(year) : MONTHS[month]]);
  });
  if (!out.length || out[out.length - 1][0] !== n - 1) out.push([n - 1, dayLabel(periods[n - 1], grain)]);
  return out;
}

const width = (lines: string[], font: number) => Math.max(...lines.map((l) => l.length)) * font * CHAR;

/**
 * Add the year as a second line on the first tick, wherever the year changes, and on the latest tick
 * (a chart that scrolls opens there); never to a label that is the year itself.
 */
function withYears(periods: readonly string[], ticks: [number, string][]): PeriodTick[] {
  let last = NaN;
  return ticks.map(([i, label], k) => {
    const year = parts(periods[i]).year;
    const lines = (year !== last || k === ticks.length - 1) && label !== String(year) ? [label, String(year)] : [label];
    last = year;
    return { period: periods[i], lines };
  });
}

/** True when no two neighbouring labels overlap at `step` px a period. */
function fits(ticks: PeriodTick[], index: Map<string, number>, step: number, font: number): boolean {
  for (let k = 1; k < ticks.length; k++) {
    const gap = (index.get(ticks[k].period)! - index.get(ticks[k - 1].period)!) * step;
    if (gap < (width(ticks[k].lines, font) + width(ticks[k - 1].lines, font)) / 2 + GAP) return false;
  }
  return true;
}

/**
 * The ticks of a time axis over `periods` (ascending `YYYY-MM-DD` labels of one grain) drawn `plotPx`
 * wide with one period every `plotPx / periods.length` px (a point scale with half a step of padding).
 * @example periodTicks(['2026-12-21', '2026-12-28', '2027-01-04'], 'week', 600)
 *   // [{ period: '2026-12-21', lines: ['21 Dec', '2026'] }, { period: '2026-12-28', lines: ['28 Dec'] }, { period: '2027-01-04', lines: ['4 Jan', '2027'] }]
 */
export function periodTicks(periods: readonly string[], grain: TimeGrain, plotPx: number, fontSize = 11): PeriodTick[] {
  if (!periods.length) return [];
  const step = plotPx / periods.length;
  const index = new Map(periods.map((p, i) => [p, i]));
  let ticks: PeriodTick[] = [];
  for (const level of LEVELS[grain]) {
    let raw = levelTicks(periods, grain, level);
    ticks = withYears(periods, raw);
    // a calendar label too close to the latest one gives way to it
    if ('months' in level && ticks.length > 1 && !fits(ticks.slice(-2), index, step, fontSize)) {
      raw = [...raw.slice(0, -2), raw[raw.length - 1]];
      ticks = withYears(periods, raw);
    }
    if (fits(ticks, index, step, fontSize)) return ticks;
  }
  // even yearly labels collide: keep the latest, then every label that clears the one kept to its right
  const kept: PeriodTick[] = [ticks[ticks.length - 1]];
  for (let k = ticks.length - 2; k >= 0; k--) if (fits([ticks[k], kept[0]], index, step, fontSize)) kept.unshift(ticks[k]);
  return withYears(periods, kept.map((t) => [index.get(t.period)!, t.lines[0]]));
}

/** A Vega expression that maps a tick's value (by its key) to its label lines. */
function labelLookup(entries: [string | number, string[]][]): string {
  return `(${JSON.stringify(Object.fromEntries(entries.map(([k, v]) => [String(k), v])))})[datum.value] || ''`;
}

export interface TimeXOptions {
  field: string;
  periods: readonly string[];
  grain: TimeGrain;
  frame: Frame;
  title: string | null;
  /** Room the value axis takes from the frame, px (default 64). */
  axisPx?: number;
}

/**
 * A Vega-Lite x encoding for a field holding period labels: a point scale over `periods` (one step a
 * period, so months of unequal length stay one step each) with the ticks of {@link periodTicks}.
 */
export function timeX(o: TimeXOptions): Record<string, unknown> {
  const ticks = periodTicks(o.periods, o.grain, plotWidth(o.frame, o.axisPx), o.frame.fontSize);
  return {
    field: o.field,
    type: 'ordinal',
    sort: null,
    scale: { type: 'point', domain: [...o.periods], padding: 0.5 },
    title: o.title,
    axis: { values: ticks.map((t) => t.period), labelExpr: labelLookup(ticks.map((t) => [t.period, t.lines])), labelAngle: 0, labelOverlap: false, labelPadding: 4, grid: false },
  };
}

/**
 * The same ticks for a temporal field on a UTC scale (period start dates as `YYYY-MM-DD` strings or
 * UTC milliseconds), for charts that join dated periods of different kinds on one axis.
 */
export function timeXUtc(o: TimeXOptions): Record<string, unknown> {
  const ticks = periodTicks(o.periods, o.grain, plotWidth(o.frame, o.axisPx), o.frame.fontSize);
  const ms = (p: string) => Date.UTC(Number(p.slice(0, 4)), Number(p.slice(5, 7)) - 1, Number(p.slice(8, 10)));
  return {
    field: o.field,
    type: 'temporal',
    scale: { type: 'utc' },
    title: o.title,
    axis: { values: ticks.map((t) => ms(t.period)), labelExpr: labelLookup(ticks.map((t) => [ms(t.period), t.lines])).replace('[datum.value]', '[+datum.value]'), labelAngle: 0, labelOverlap: false, labelPadding: 4, grid: false },
  };
}

/** The value axis's side: on the right when the chart scrolls (it opens at the latest period, on the right). */
export function valueAxisOrient(f: Frame): 'left' | 'right' {
  return f.scroll ? 'right' : 'left';
}
