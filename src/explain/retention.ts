/**
 * Status-split retention from {@link RetentionCell}s: rates with Wilson intervals, period-over-period
 * changes with a pooled z-test, Newcombe's interval and Benjamini–Hochberg adjustment across the
 * family of changes, and the inputs of a Kitagawa decomposition.
 *
 * A period is named by the period retained into (`to`). Cells with the same (to, state, segment) are
 * added together. Policy: see `kitagawa.ts` — a rate of n = 0 is null (with its n), a change with an
 * empty side has null statistics and stays out of the BH family; `small` marks n below `minN`.
 * Period labels are not checked against the data (a label with no cells yields n = 0); the caller
 * validates them against `WaistTables.periods`.
 */
import { TidemarkError } from '../errors.js';
import type { RetentionCell } from '../flows/types.js';
import { bhAdjust } from '../stats/bh.js';
import { newcombeDifference } from '../stats/newcombe.js';
import { wilsonInterval } from '../stats/wilson.js';
import { twoProportionZTest } from '../stats/ztest.js';
import { rateOptions, type RateOptions } from './options.js';
import { kitagawaFromCounts, type KitagawaCounts, type KitagawaResult } from './kitagawa.js';

export interface RetentionRate {
  to: string;
  state: string;
  segment: string;
  n: number;
  retained: number;
  /** retained / n; null when n = 0. */
  rate: number | null;
  /** Wilson score interval; null when n = 0. */
  lower: number | null;
  upper: number | null;
  small: boolean;
}

export interface RetentionChange {
  state: string;
  segment: string;
  base: RetentionRate;
  compare: RetentionRate;
  /** compare − base; null when either side has n = 0. */
  change: number | null;
  /** Newcombe (1998b) method-10 interval for the change. */
  lower: number | null;
  upper: number | null;
  /** Pooled two-proportion z statistic and two-sided p. */
  z: number | null;
  p: number | null;
  /** BH-adjusted p across every change in the result that has a p. */
  pAdjusted: number | null;
  /** pAdjusted ≤ q. */
  significant: boolean;
  /** Either side is small. */
  small: boolean;
}

function checkCells(cells: readonly RetentionCell[]): void {
  cells.forEach((c, i) => {
    if (!(Number.isFinite(c.n) && c.n >= 0 && Number.isFinite(c.retained) && c.retained >= 0 && c.retained <= c.n)) {
      throw new TidemarkError('INPUT_INVALID', `retention cell needs 0 ≤ retained ≤ n, got ${c.retained} of ${c.n}`, { key: `cells[${i}]` });
    }
  });
}

function rateOf(to: string, state: string, segment: string, n: number, retained: number, o: Required<RateOptions>): RetentionRate {
  if (n === 0) return { to, state, segment, n, retained, rate: null, lower: null, upper: null, small: n < o.minN };
  const w = wilsonInterval(retained, n, o.confidence);
  return { to, state, segment, n, retained, rate: w.estimate, lower: w.lower, upper: w.upper, small: n < o.minN };
}

/** Cells added up by (to, state, segment), in order of first appearance. */
function sumCells(cells: readonly RetentionCell[]): RetentionCell[] {
  const out = new Map<string, RetentionCell>();
  for (const c of cells) {
    const key = JSON.stringify([c.to, c.state, c.segment]);
    const cell = out.get(key);
    if (cell) {
      cell.n += c.n;
      cell.retained += c.retained;
    } else out.set(key, { ...c });
  }
  return [...out.values()];
}

/**
 * Retention rate with a Wilson interval per (to, state, segment).
 *
 * @throws {TidemarkError} INPUT_INVALID for a cell with retained > n or negative counts, or bad options.
 * @example retentionRates([{ to: '2026-03-02', state: 'engaged', segment: '', n: 263, retained: 81 }])[0]
 *   // { rate: 0.30798…, lower: 0.25529…, upper: 0.36621…, small: false, … }
 */
export function retentionRates(cells: readonly RetentionCell[], options: RateOptions = {}): RetentionRate[] {
  checkCells(cells);
  const o = rateOptions(options);
  return sumCells(cells).map((c) => rateOf(c.to, c.state, c.segment, c.n, c.retained, o));
}

export interface ChangeOptions extends RateOptions {
  /** Base period (label of the period retained into). */
  base: string;
  /** Compared period. */
  compare: string;
  /** False discovery rate for `significant`; default 0.05. */
  q?: number;
}

/**
 * Change of retention from `base` to `compare` for every (state, segment) seen in either period,
 * in order of first appearance.
 *
 * @throws {TidemarkError} INPUT_INVALID for a bad cell or option.
 * @example retentionChanges(cells, { base: '2026-03-02', compare: '2026-03-09' })[0]
 *   // with 48/80 then 56/70: { change: 0.2, lower: 0.0524…, upper: 0.3339…, z: 2.650…, p: 0.00805…, … }
 */
export function retentionChanges(cells: readonly RetentionCell[], options: ChangeOptions): RetentionChange[] {
  checkCells(cells);
  const o = rateOptions(options);
  const q = options.q ?? 0.05;
  if (!(q > 0 && q <= 1)) throw new TidemarkError('INPUT_INVALID', `q must be in (0, 1], got ${q}`, { key: 'q' });
  const keys = new Map<string, { state: string; segment: string }>();
  const counts = new Map<string, { n: number; retained: number }>();
  for (const c of sumCells(cells)) {
    if (c.to !== options.base && c.to !== options.compare) continue;
    const key = JSON.stringify([c.state, c.segment]);
    if (!keys.has(key)) keys.set(key, { state: c.state, segment: c.segment });
    counts.set(JSON.stringify([c.to, c.state, c.segment]), { n: c.n, retained: c.retained });
  }
  const changes = [...keys.values()].map(({ state, segment }): RetentionChange => {
    const get = (to: string) => counts.get(JSON.stringify([to, state, segment])) ?? { n: 0, retained: 0 };
    const b = get(options.base);
    const c = get(options.compare);
    const base = rateOf(options.base, state, segment, b.n, b.retained, o);
    const compare = rateOf(options.compare, state, segment, c.n, c.retained, o);
    const small = base.small || compare.small;
    if (b.n === 0 || c.n === 0) {
      return { state, segment, base, compare, change: null, lower: null, upper: null, z: null, p: null, pAdjusted: null, significant: false, small };
    }
    const ci = newcombeDifference(c.retained, c.n, b.retained, b.n, o.confidence);
    const test = twoProportionZTest(c.retained, c.n, b.retained, b.n);
    return { state, segment, base, compare, change: ci.difference, lower: ci.lower, upper: ci.upper, z: test.z, p: test.p, pAdjusted: null, significant: false, small };
  });
  const tested = changes.filter((ch) => ch.p !== null);
  const adjusted = bhAdjust(tested.map((ch) => ch.p!));
  tested.forEach((ch, i) => {
    ch.pAdjusted = adjusted[i];
    ch.significant = adjusted[i] <= q;
  });
  return changes;
}

export interface DecomposeOptions {
  base: string;
  compare: string;
  /** Group the decomposition by prior state or by segment (summing over the other). */
  by: 'state' | 'segment';
  /** Keep only cells of this state and/or segment (e.g. one state's tenure bands). */
  where?: { state?: string; segment?: string };
}

/**
 * Kitagawa inputs (counts per group) for the base and compare periods, in order of first appearance.
 *
 * @throws {TidemarkError} INPUT_INVALID for a bad cell.
 * @example kitagawaInputs(cells, { base: '2026-03-02', compare: '2026-03-09', by: 'state' })
 *   // [{ key: 'fresh', n0, retained0, n1, retained1 }, { key: 'engaged', … }, …]
 */
export function kitagawaInputs(cells: readonly RetentionCell[], options: DecomposeOptions): KitagawaCounts[] {
  checkCells(cells);
  if (options.by !== 'state' && options.by !== 'segment') {
    throw new TidemarkError('INPUT_INVALID', `by must be 'state' or 'segment', got '${String(options.by)}'`, { key: 'by' });
  }
  const groups = new Map<string, KitagawaCounts>();
  for (const c of cells) {
    if (c.to !== options.base && c.to !== options.compare) continue;
    if (options.where?.state !== undefined && c.state !== options.where.state) continue;
    if (options.where?.segment !== undefined && c.segment !== options.where.segment) continue;
    const key = options.by === 'state' ? c.state : c.segment;
    const g = groups.get(key) ?? { key, n0: 0, retained0: 0, n1: 0, retained1: 0 };
    // When base and compare are the same period the decomposition is of a period with itself.
    if (c.to === options.base) {
      g.n0 += c.n;
      g.retained0 += c.retained;
    }
    if (c.to === options.compare) {
      g.n1 += c.n;
      g.retained1 += c.retained;
    }
    groups.set(key, g);
  }
  return [...groups.values()];
}

/**
 * Kitagawa decomposition of the retention change from `base` to `compare`.
 *
 * @throws {TidemarkError} INPUT_INVALID for a bad cell.
 * @example decomposeRetention(cells, { base: '2026-03-02', compare: '2026-03-09', by: 'segment' }).change
 */
export function decomposeRetention(cells: readonly RetentionCell[], options: DecomposeOptions): KitagawaResult {
  return kitagawaFromCounts(kitagawaInputs(cells, options));
}
