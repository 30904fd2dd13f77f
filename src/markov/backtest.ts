/**
 * Rolling-origin backtest of the projection (Tashman 2000, "Out-of-sample tests of forecasting
 * accuracy", International Journal of Forecasting 16(4)). For each origin t with at least `minFit`
 * transitions up to it:
 * 1. fit P on the transitions up to t (all of them, or the last `window`), with the fitted mean fresh
 *    inflow of those transitions — the forecast uses only what was known at t, never the later actual
 *    fresh counts;
 * 2. project h = 1 … H steps from the actual state counts at t;
 * 3. score against the actual state mix at t + h.
 *
 * Scores per horizon h, averaged over states and origins: MAE of shares; the same MAE for the naive
 * forecast "the mix stays as at the origin"; and coverage, the fraction of (origin, state) shares
 * that fall inside the [lo, hi] percentile band (default 10–90) of {@link projectionBands}.
 */
import { TidemarkError } from '../errors.js';
import type { WaistTables } from '../flows/types.js';
import { projectionBands, type BandOptions } from './bands.js';
import { fitPooled, freshIndex, startAt } from './fit.js';
import { assertInteger, assertNonNegativeSquare } from './guards.js';
import { projectUnchecked } from './project.js';
import type { Vector } from './types.js';

export interface BacktestOptions extends Pick<BandOptions, 'prior' | 'allowed'> {
  /** Steps ahead H (default 3). */
  horizon?: number;
  /** Transitions needed up to an origin before it is scored (default 4). */
  minFit?: number;
  /** Fit on the last N transitions up to the origin (default: all of them). */
  window?: number;
  /** Sampled matrices per origin for the bands (default 100; kept small for speed). */
  samples?: number;
  /** Seed; origin number k uses seed + k (default 1). */
  seed?: number;
  /** Score only the latest N origins (default: every origin). */
  maxOrigins?: number;
  /** Band percentiles [lo, hi] (default [10, 90]). */
  band?: [number, number];
  /** The state new users arrive in (default: the tables' arrival state). */
  freshState?: string;
}

export interface BacktestRow {
  horizon: number;
  /** Origins scored at this horizon. */
  origins: number;
  mae: number;
  naiveMae: number;
  /** Fraction of actual shares inside the band. */
  coverage: number;
}

export interface Backtest {
  rows: BacktestRow[];
  /** Labels of the origin periods scored, in order. */
  origins: string[];
}

/**
 * Backtests the projection on waist tables.
 *
 * @throws TidemarkError `INPUT_INVALID` for bad options (horizon 1 to 1000, minFit ≥ 1, window ≥ minFit, maxOrigins ≥ 1,
 *   band lo < hi in [0, 100]); `NOT_ENOUGH_DATA` when no origin has `minFit` transitions before it and a
 *   later period to score against (the message gives the counts); as {@link fitChain}.
 * @example backtest(tables, { horizon: 2 }).rows // [{ horizon: 1, mae, naiveMae, coverage, … }, { horizon: 2, … }]
 */
export function backtest(tables: WaistTables, options: BacktestOptions = {}): Backtest {
  const { horizon = 3, minFit = 4, window, samples = 100, seed = 1, band = [10, 90] } = options;
  assertInteger(horizon, 'horizon', 1, 1000);
  assertInteger(minFit, 'minFit', 1);
  if (window !== undefined) assertInteger(window, 'window', minFit);
  if (options.maxOrigins !== undefined) assertInteger(options.maxOrigins, 'maxOrigins', 1);
  assertInteger(seed, 'seed', 0, 0xffffffff);
  if (!(band[0] >= 0 && band[0] < band[1] && band[1] <= 100)) {
    throw new TidemarkError('INPUT_INVALID', `band must be [lo, hi] with 0 ≤ lo < hi ≤ 100 (got [${band.join(', ')}])`, { key: 'band' });
  }
  const { transitions, periods, stateCounts, states } = tables;
  const fi = freshIndex(states, options.freshState ?? tables.arrivalState);
  const S = states.length;
  // prefix sums over the transitions (each checked once): the counts pooled over lo..k are
  // cum[k + 1] − cum[lo], so each origin's fit costs states², not the number of transitions before it
  const cum: Float64Array[] = [new Float64Array(S * S)];
  const cumFresh = [0];
  transitions.forEach((t, k) => {
    assertNonNegativeSquare(t.counts, states, `counts ${t.from}..${t.to}`);
    const next = cum[k].slice();
    t.counts.forEach((row, i) => row.forEach((v, j) => (next[i * S + j] += v)));
    cum.push(next);
    cumFresh.push(cumFresh[k] + t.fresh);
  });
  const periodAt = new Map(periods.map((label, i) => [label, i]));
  const sums = Array.from({ length: horizon }, () => ({ n: 0, mae: 0, naive: 0, inside: 0, cells: 0 }));
  const origins: string[] = [];
  // the last transition ends in the last period and has nothing after it to score: origins are k ≤ T − 2
  const firstK = Math.max(minFit - 1, options.maxOrigins === undefined ? 0 : transitions.length - 1 - options.maxOrigins);
  for (let k = firstK; k < transitions.length; k++) {
    const p = periodAt.get(transitions[k].to) ?? -1;
    const steps = Math.min(horizon, periods.length - 1 - p);
    if (steps < 1) continue;
    const lo = window === undefined ? 0 : Math.max(0, k + 1 - window);
    const pooled = states.map((_, i) => states.map((_, j) => cum[k + 1][i * S + j] - cum[lo][i * S + j]));
    const fit = fitPooled(states, fi, pooled, cumFresh[k + 1] - cumFresh[lo], startAt(tables, p, transitions[k], fi), { from: transitions[lo].from, to: transitions[k].to, transitions: k + 1 - lo });
    const point = projectUnchecked(fit.matrix, fit.start, fit.inflow, steps);
    const bands = projectionBands(fit.counts, fit.start, fit.inflow, steps, { samples, seed: (seed + k) % 2 ** 32, percentiles: band, prior: options.prior, allowed: options.allowed, withCounts: false });
    const naive = shares(fit.start);
    origins.push(transitions[k].to);
    for (let h = 1; h <= steps; h++) {
      const actual = shares(stateCounts[p + h]);
      const acc = sums[h - 1];
      acc.n += 1;
      acc.mae += meanAbs(point.shares[h], actual);
      acc.naive += meanAbs(naive, actual);
      actual.forEach((a, s) => {
        acc.cells += 1;
        if (a >= bands.shares[0][h][s] - 1e-9 && a <= bands.shares[1][h][s] + 1e-9) acc.inside += 1;
      });
    }
  }
  if (origins.length === 0) {
    throw new TidemarkError('NOT_ENOUGH_DATA', `a backtest needs ${minFit} transitions before an origin and a later period to score, but the data have ${transitions.length} transitions`, { key: 'minFit' }, 'lower minFit or use a longer span of data');
  }
  const rows = sums
    .map((a, i) => ({ horizon: i + 1, origins: a.n, mae: a.mae / a.n, naiveMae: a.naive / a.n, coverage: a.inside / a.cells }))
    .filter((r) => r.origins > 0);
  return { rows, origins };
}

function shares(counts: Vector): Vector {
  const total = counts.reduce((a, b) => a + b, 0);
  return counts.map((v) => (total > 0 ? v / total : 0));
}

function meanAbs(a: Vector, b: Vector): number {
  return a.reduce((s, v, i) => s + Math.abs(v - b[i]), 0) / a.length;
}
