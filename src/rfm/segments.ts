/**
 * RFM segments and the flows between them, period by period.
 *
 * At the end of each period t, every member with an active period in the last `window` periods
 * (t − window + 1 … t) is scored on
 * - recency R: periods since their last active period (0: active in t);
 * - frequency F: key events in the window;
 * - monetary value M (when a value column is given): the sum of that column over every event in the window.
 * Each is turned into a quintile score 1–5 among the members scored in t (5: most recent, most
 * frequent, highest value) by the mid-rank percentile: with b members below a value and e equal to
 * it, of n, the score is 1 + floor(5 · (b + e/2) / n), at most 5, so equal values share a score.
 * (Quintile coding of RFM: Hughes, *Strategic Database Marketing*, 1994, from memory; the mid-rank
 * percentile is the usual definition of a percentile rank with ties.)
 *
 * Segments, named in our own words from the recency score r and the activity score a (= the frequency
 * score, or the mean of the frequency and value scores rounded up when a value column is given):
 * steady (r ≥ 4, a ≥ 4), light but recent (r ≥ 4, a ≤ 2), cooling regular (r ≤ 2, a ≥ 4), fading
 * (r ≤ 2, a ≤ 2), middle (the rest), and outside the window (seen before, but no active period in it).
 *
 * Flows: members scored or outside the window in t − 1 move to their segment in t (a count matrix per
 * transition, as for the lifecycle states); members first active in t arrive. The pooled counts fit
 * a Markov chain (row-normalised, as markov/fit.ts), written as a document `tidemark project
 * --matrix` reads.
 */
import { TidemarkError, showValue } from '../errors.js';
import type { EventLog } from '../ingest/eventLog.js';
import { rowPlace } from '../ingest/detail.js';
import { firstActive, isKeyRow, type ObservedRange, type Timelines } from '../lifecycle/timelines.js';
import { normaliseCounts } from '../markov/fit.js';
import { stationary } from '../markov/stationary.js';
import { periodLabel } from '../periods/calendar.js';
import { plural } from '../text/plural.js';

export const SEGMENTS = ['steady', 'middle', 'light-recent', 'cooling-regular', 'fading', 'outside-window'] as const;
export type Segment = (typeof SEGMENTS)[number];

export const SEGMENT_RULES: Record<Segment, string> = {
  steady: 'recency score ≥ 4 and activity score ≥ 4',
  middle: 'scored, and in no other segment',
  'light-recent': 'recency score ≥ 4 and activity score ≤ 2',
  'cooling-regular': 'recency score ≤ 2 and activity score ≥ 4',
  fading: 'recency score ≤ 2 and activity score ≤ 2',
  'outside-window': 'seen before, but no active period in the window',
};

/** The segment of a recency score r and an activity score a (1–5 each). */
export function segmentOf(r: number, a: number): Segment {
  if (r >= 4 && a >= 4) return 'steady';
  if (r >= 4 && a <= 2) return 'light-recent';
  if (r <= 2 && a >= 4) return 'cooling-regular';
  if (r <= 2 && a <= 2) return 'fading';
  return 'middle';
}

/**
 * Quintile scores 1–5 of `values` by the mid-rank percentile: 1 + floor(5 · (below + equal/2) / n), at most 5.
 * @throws TidemarkError INPUT_INVALID for a value that is not a finite number.
 * @example quintileScores([10, 20, 30, 40, 50]) // [1, 2, 3, 4, 5]; quintileScores([0, 0, 0, 7]) // [2, 2, 2, 5]
 */
export function quintileScores(values: ArrayLike<number>): Uint8Array {
  const n = values.length;
  const sorted = Float64Array.from(values).sort();
  if (n && !Number.isFinite(sorted[0] + sorted[n - 1])) throw new TidemarkError('INPUT_INVALID', 'quintileScores: values must be finite numbers');
  const out = new Uint8Array(n);
  for (let i = 0; i < n; i++) {
    const v = values[i];
    const below = lowerBound(sorted, v);
    const equal = lowerBound(sorted, v, true) - below;
    out[i] = Math.min(5, 1 + Math.floor((5 * (below + equal / 2)) / n));
  }
  return out;
}

/** First index with sorted[i] ≥ v (or > v when `after`). */
function lowerBound(sorted: Float64Array, v: number, after = false): number {
  let lo = 0, hi = sorted.length;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (sorted[mid] < v || (after && sorted[mid] === v)) lo = mid + 1;
    else hi = mid;
  }
  return lo;
}

export interface RfmOptions {
  /** Periods in the window (≥ 1). */
  window: number;
  /** An attribute column holding a number per event (a price, a fee); optional. */
  valueColumn?: string;
}

/** The value ranges each score covered in a period: [min, max] of the raw values that got score s (null: none). */
export type ScoreRanges = ([number, number] | null)[];

export interface RfmPeriod {
  period: string;
  scored: number;
  counts: Record<Segment, number>;
  /** ranges[dimension][s − 1]. Recency in periods since the last active one. */
  ranges: { recency: ScoreRanges; frequency: ScoreRanges; value?: ScoreRanges };
}

export interface RfmOutput {
  options: RfmOptions;
  segments: { name: Segment; rule: string }[];
  scoring: string;
  periods: RfmPeriod[];
  transitions: { from: string; to: string; counts: number[][]; arrivals: Record<Segment, number> }[];
  /** Pooled over every transition; rows: from, columns: to, in the order of `segments`. */
  pooled: number[][];
  /** A chain for `tidemark project --matrix`: states, row-stochastic matrix, start (the last period) and inflow (mean arrivals). */
  model: { states: Segment[]; matrix: number[][]; start: Record<Segment, number>; inflow: Record<Segment, number> };
  emptyRows: Segment[];
  longRun: string;
  reading: string;
}

export const RFM_SCORING = 'Each period, users with an active period in the window are scored 1-5 on recency (periods since their last active one; 5 = most recent), frequency (key events in the window) and, with a value column, value (its sum over the window): 1 + floor(5 × (users below + half the users equal) / users scored), at most 5. The activity score is the frequency score, or with a value column the mean of the frequency and value scores, rounded up.';

/** Periods scored in one run at most (each period sorts its scored members). */
export const RFM_MAX_PERIODS = 20_000;

const zeroCounts = (): Record<Segment, number> => Object.fromEntries(SEGMENTS.map((s) => [s, 0])) as Record<Segment, number>;

/** Per event row, the number in the value column (0 when empty). */
function valuesOf(log: EventLog, column: string): Float64Array {
  const col = log.attributes.find((a) => a.name === column);
  if (!col) {
    throw new TidemarkError('INPUT_INVALID', `the events have no column '${showValue(column, 40)}'`, { key: 'valueColumn' },
      log.attributes.length ? `Columns: ${log.attributes.map((a) => showValue(a.name, 40)).join(', ')}` : 'The events have no extra columns');
  }
  const parsed = col.values.map((v) => (v.trim() === '' ? 0 : /^[+-]?(\d+\.?\d*|\.\d+)(e[+-]?\d+)?$/i.test(v.trim()) ? Number(v) : NaN));
  const out = new Float64Array(log.size);
  for (let i = 0; i < log.size; i++) {
    const v = parsed[col.codes[i]];
    if (!Number.isFinite(v)) {
      const at = log.detail ? rowPlace(log.files, log.detail, i) : { file: log.files[0], line: undefined };
      throw new TidemarkError('INPUT_INVALID', `'${showValue(col.values[col.codes[i]])}' is not a number`, { file: at.file, line: at.line, column }, 'Write values as plain decimal numbers (12.50), or leave the cell empty');
    }
    out[i] = v;
  }
  return out;
}

function ranges(raw: Float64Array, score: Uint8Array): ScoreRanges {
  const r: ScoreRanges = [null, null, null, null, null];
  for (let i = 0; i < raw.length; i++) {
    const s = score[i] - 1, v = raw[i];
    const cur = r[s];
    if (!cur) r[s] = [v, v];
    else {
      if (v < cur[0]) cur[0] = v;
      if (v > cur[1]) cur[1] = v;
    }
  }
  return r;
}

/**
 * RFM segments of every period from the start of the range to its last observed period, and the
 * flows between them.
 * @throws TidemarkError INPUT_INVALID for a window < 1, an unknown value column or a value that is not
 *   a number (naming its line); NOT_ENOUGH_DATA when the range holds no period with a scored member.
 * @example one member active in weeks 0 and 1 with 2 and 3 events, window 2: in week 1 R = 0, F = 5;
 *   alone in the period, every score is 1 + floor(5 · 0.5) = 3 → middle.
 */
export function rfmSegments(log: EventLog, t: Timelines, range: ObservedRange, o: RfmOptions): RfmOutput {
  if (!(Number.isInteger(o.window) && o.window >= 1)) throw new TidemarkError('INPUT_INVALID', `the window must be a whole number ≥ 1, got ${o.window}`, { key: 'window' });
  const value = o.valueColumn === undefined ? undefined : valuesOf(log, o.valueColumn);
  const first = range.dataFromKey, last = range.lastKey;
  const P = last - first + 1;
  if (P < 1) throw new TidemarkError('NOT_ENOUGH_DATA', 'no period to score', { key: 'from' });
  // rows by period offset (counting sort), key events and values per (row) → per member per period
  const byPeriodStart = new Int32Array(P + 1);
  for (let i = 0; i < log.size; i++) {
    const k = log.period[i] - first;
    if (k >= 0 && k < P) byPeriodStart[k + 1]++;
  }
  for (let k = 0; k < P; k++) byPeriodStart[k + 1] += byPeriodStart[k];
  const fill = byPeriodStart.slice(0, P);
  const rowsByPeriod = new Int32Array(byPeriodStart[P]);
  for (let i = 0; i < log.size; i++) {
    const k = log.period[i] - first;
    if (k >= 0 && k < P) rowsByPeriod[fill[k]++] = i;
  }
  const U = t.users;
  const freq = new Float64Array(U), val = new Float64Array(U);
  const activeCount = new Int32Array(U); // active periods in the window
  const lastActive = new Int32Array(U).fill(-1);
  const firstKey = new Int32Array(U).fill(-1);
  const activeAt: number[][] = Array.from({ length: P }, () => []);
  for (let u = 0; u < U; u++) {
    const f = firstActive(t, u);
    if (f === undefined) continue;
    firstKey[u] = f;
    for (let a = t.activeStart[u]; a < t.activeStart[u + 1]; a++) {
      const k = t.activePeriod[a] - first;
      if (k >= 0 && k < P) activeAt[k].push(u);
    }
  }
  const seg = new Int8Array(U).fill(-1), prevSeg = new Int8Array(U).fill(-1);
  const S = SEGMENTS.length, OUT = SEGMENTS.indexOf('outside-window');
  const periods: RfmPeriod[] = [];
  const transitions: RfmOutput['transitions'] = [];
  const pooled = SEGMENTS.map(() => new Array<number>(S).fill(0));
  const arrivalsTotal = new Array<number>(S).fill(0);
  const seen: number[] = []; // members first active so far
  const add = (k: number, sign: number) => {
    for (let j = byPeriodStart[k]; j < byPeriodStart[k + 1]; j++) {
      const i = rowsByPeriod[j];
      const u = log.user[i];
      if (isKeyRow(log, i)) freq[u] += sign;
      if (value) val[u] += sign * value[i];
    }
    for (const u of activeAt[k]) activeCount[u] += sign;
  };
  const outStart = range.fromKey - first;
  // scores at --from need only the window before it: members first active earlier are already seen
  const begin = Math.max(0, outStart - o.window);
  if (P - begin > RFM_MAX_PERIODS) {
    throw new TidemarkError('INPUT_INVALID', `scoring ${plural(P - begin, 'period')} is more than the ${RFM_MAX_PERIODS.toLocaleString('en-US')} tidemark scores in one run`, { key: 'from' }, 'Pass a later --from, or use a coarser grain');
  }
  for (let u = 0; u < U; u++) if (firstKey[u] >= 0 && firstKey[u] - first < begin) seen.push(u);
  for (let k = begin; k < P; k++) {
    add(k, 1);
    if (k - o.window >= begin) add(k - o.window, -1);
    for (const u of activeAt[k]) {
      lastActive[u] = k;
      if (firstKey[u] === k + first) seen.push(u);
    }
    const scored = seen.filter((u) => activeCount[u] > 0);
    const rec = Float64Array.from(scored, (u) => k - lastActive[u]);
    const fr = Float64Array.from(scored, (u) => freq[u]);
    const rScore = quintileScores(rec.map((x) => -x));
    const fScore = quintileScores(fr);
    const vr = value ? Float64Array.from(scored, (u) => val[u]) : undefined;
    const vScore = vr ? quintileScores(vr) : undefined;
    prevSeg.set(seg);
    seg.fill(-1);
    for (const u of seen) seg[u] = OUT;
    scored.forEach((u, j) => {
      const a = vScore ? Math.ceil((fScore[j] + vScore[j]) / 2) : fScore[j];
      seg[u] = SEGMENTS.indexOf(segmentOf(rScore[j], a));
    });
    if (k < outStart) continue;
    const counts = zeroCounts();
    for (const u of seen) counts[SEGMENTS[seg[u]]]++;
    periods.push({ period: periodLabel(k + first, log.scheme), scored: scored.length, counts, ranges: { recency: ranges(rec, rScore), frequency: ranges(fr, fScore), ...(vr && vScore ? { value: ranges(vr, vScore) } : {}) } });
    if (k === outStart) continue;
    const m = SEGMENTS.map(() => new Array<number>(S).fill(0));
    const arrivals = zeroCounts();
    for (const u of seen) {
      if (prevSeg[u] >= 0) m[prevSeg[u]][seg[u]]++;
      else {
        arrivals[SEGMENTS[seg[u]]]++;
        arrivalsTotal[seg[u]]++;
      }
    }
    m.forEach((row, i) => row.forEach((v, j) => (pooled[i][j] += v)));
    transitions.push({ from: periods[periods.length - 2].period, to: periods[periods.length - 1].period, counts: m, arrivals });
  }
  if (!periods.some((p) => p.scored > 0)) throw new TidemarkError('NOT_ENOUGH_DATA', 'no user is active in the range', { key: 'from' });
  const states = [...SEGMENTS];
  const { matrix, emptyRows } = normaliseCounts(pooled, states);
  const lastP = periods[periods.length - 1];
  const inflow = Object.fromEntries(SEGMENTS.map((s, i) => [s, transitions.length ? arrivalsTotal[i] / transitions.length : 0])) as Record<Segment, number>;
  const long = stationary({ states, matrix });
  const share = (s: Segment) => (lastP.scored ? `${((lastP.counts[s] / Math.max(1, lastP.scored)) * 100).toFixed(0)}%` : '–');
  const steadyStay = pooled[0].reduce((a, b) => a + b, 0) ? pooled[0][0] / pooled[0].reduce((a, b) => a + b, 0) : null;
  const reading = `In ${lastP.period}, ${share('steady')} of the ${plural(lastP.scored, 'user')} scored ${lastP.scored === 1 ? 'was' : 'were'} steady and ${share('fading')} fading${steadyStay === null ? '' : `; a steady user stayed steady the next period ${(steadyStay * 100).toFixed(0)}% of the time`} (${plural(transitions.length, 'transition')} pooled).`;
  return {
    options: o,
    segments: SEGMENTS.map((name) => ({ name, rule: SEGMENT_RULES[name] })),
    scoring: RFM_SCORING,
    periods,
    transitions,
    pooled,
    model: { states, matrix, start: lastP.counts, inflow },
    emptyRows: emptyRows as Segment[],
    longRun: long.sentence,
    reading,
  };
}
