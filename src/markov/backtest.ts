/**
 * Rolling-origin backtest of the projection and its bands (Tashman 2000, "Out-of-sample tests of
 * forecasting accuracy", International Journal of Forecasting 16(4)). For each origin t with at least
 * `minFit` transitions up to it:
 * 1. fit P, the rates' variation and the inflow on the transitions up to t (all of them, or the last
 *    `window`) — only what was known at t;
 * 2. project h = 1 … H steps from the actual state counts at t, and simulate the bands
 *    (`simulate.ts`);
 * 3. score against the actual state mix at t + h.
 *
 * Scores per horizon h, over (origin, state) cells: the mean absolute error of shares; the empirical
 * coverage of the inner (25th–75th percentile, 50%) and outer (`band`, 80% by default) bands; and the
 * mean interval score of each band (Gneiting & Raftery 2007, "Strictly proper scoring rules,
 * prediction, and estimation", JASA 102:359–378, §6.2: for a central (1 − α) interval [l, u] and the
 * outcome x, (u − l) + (2/α)(l − x)·[x < l] + (2/α)(x − u)·[x > u]; lower is better), for the model and
 * two baselines with the usual normal intervals (Hyndman & Athanasopoulos, *Forecasting: Principles
 * and Practice*, 3rd ed., §5.5): no change (the share stays as at t; σ_h = σ√h, σ the root mean square
 * of one-period changes over the fit window) and seasonal naive (the share one season earlier;
 * σ_h = σ√(k + 1), k = ⌊(h − 1)/m⌋, σ from the changes over one season). The seasonal baseline needs a
 * season of history before the origin; without one it is left out and the reason given.
 *
 * Recalibration (on by default), from the cells at horizon h of the latest {@link SCORE_ORIGINS} earlier
 * origins whose outcome was known at the origin (origin + h ≤ this origin: no look-ahead); the latest
 * only, since the errors of a changing audience are not exchangeable over a long log (`recalibrate.ts`):
 * 1. intercept correction (Clements & Hendry 1996, Journal of Applied Econometrics 11:475–494; 1998,
 *    *Forecasting Economic Time Series*, ch. 8): each state's band is moved by the median of that state's
 *    signed errors (actual share − the paths' median, in units of the outer band's half-width), once
 *    {@link SHIFT_ORIGINS} such origins exist;
 * 2. asymmetric split conformal prediction with a normalised score (Vovk, Gammerman & Shafer 2005,
 *    *Algorithmic Learning in a Random World*; Shafer & Vovk 2008, JMLR 9:371–421; Romano, Patterson &
 *    Candès 2019, "Conformalized quantile regression", NeurIPS, Theorem 2): each cell is scored on each
 *    side of its moved band (`sideScores`: how far beyond the moved median the actual share fell, in units
 *    of that side, signed), and each side of the band is scaled by the empirical quantile of its scores at
 *    (1 + level)/2, once {@link MIN_SCORES} scores exist (the model's widths before).
 * With `horizonWeights` (default {@link HORIZON_WEIGHTS}, [1]: each horizon alone) both steps can pool the
 * horizon's cells with those of horizons h ± d at smaller weights (`pooledRecords`; a weighted median, and
 * the weighted conformal quantile of Tibshirani, Barber, Candès & Ramdas 2019, "Conformal prediction under
 * covariate shift", NeurIPS), so the corrections and factors change smoothly from one horizon to the next;
 * the counts that start them (6 origins, 30 scores) are of the horizon's own cells.
 * The coverage, interval scores and missed periods are of the bands so made; `model…` fields keep the
 * model's. The same over the latest origins of all scored give the corrections and factors for the
 * projection at the last period (`recalibration`).
 *
 * Periods where the outer band missed at least half of the cells aimed at them (10 cells or more) are
 * listed: the flows changed there beyond their past variation (a structural break).
 */
import { TidemarkError } from '../errors.js';
import type { WaistTables } from '../flows/types.js';
import { normalQuantile } from '../stats/normal.js';
import { fitPooled, freshIndex, startAt } from './fit.js';
import { assertInteger, assertNonNegativeSquare } from './guards.js';
import { estimateInflow, inflowAt, type InflowMethod } from './inflow.js';
import { projectVarying } from './project.js';
import { pathPercentiles, simulatePaths } from './simulate.js';
import type { Vector } from './types.js';
import { commonShare, rateVariation } from './variation.js';
import { centreShift, innerAlt, pooledRecords, recalibratedBands, sideScores, signedError, widthFactors, type BandScoreRecord, type SideFactors } from './recalibrate.js';

export { bandScore, centreShift, conformalQuantile, pooledRecords, sideScores, signedError, usedRecords, weightedMedian, widen, widthFactors } from './recalibrate.js';

export interface BacktestOptions {
  /** Steps ahead H (default 8). */
  horizon?: number;
  /** Transitions needed up to an origin before it is scored (default 4). */
  minFit?: number;
  /** Fit on the last N transitions up to the origin (default: all of them). */
  window?: number;
  /** Sampled paths per origin for the bands (default 100). */
  samples?: number;
  /** Seed; origin number k uses seed + k (default 1). */
  seed?: number;
  /** Score only the latest N origins (default: every origin). */
  maxOrigins?: number;
  /** Outer band percentiles [lo, hi] (default [10, 90]); the inner band is always [25, 75]. */
  band?: [number, number];
  /** The state new users arrive in (default: the tables' arrival state). */
  freshState?: string;
  /** How the inflow is estimated (default median). */
  inflowMethod?: InflowMethod;
  /** Periods in a season, for the seasonal-naive baseline (none: the baseline is left out). */
  season?: number;
  /** Recalibrate each origin's bands by the scores of earlier origins (default true; false scores the model's bands alone). */
  calibrate?: boolean;
  /** Past scores (cells) a horizon needs before its bands are recalibrated (default {@link MIN_SCORES}). */
  minScores?: number;
  /** Only the scores of the latest N origins whose outcome is known count (default {@link SCORE_ORIGINS}). */
  scoreOrigins?: number;
  /** Past origins a state needs before its centre is corrected (default {@link SHIFT_ORIGINS}). */
  minShiftOrigins?: number;
  /** Weights of the scores of horizons h ± d pooled into horizon h's recalibration, by d = 0, 1, … (default {@link HORIZON_WEIGHTS}; [1]: horizon h alone). */
  horizonWeights?: readonly number[];
  /** Also return every scored cell (`cells`), for checks (default false). */
  detail?: boolean;
}

/** One scored (origin, horizon, state) cell: the model's band and the one scored (recalibrated or not), [inner lo, inner hi, outer lo, outer hi]. */
export interface BacktestCell {
  /** The origin's number (0 = the first scored) and its period index. */
  origin: number;
  period: number;
  horizon: number;
  state: number;
  actual: number;
  median: number;
  model: [number, number, number, number];
  band: [number, number, number, number];
}

/** Past (origin, state) scores a horizon needs before its bands are recalibrated. */
export const MIN_SCORES = 30;
/** Origins whose scores count toward a recalibration: the latest this many with known outcomes. */
export const SCORE_ORIGINS = 15;
/** Origins with a known outcome a state needs before its centre is corrected (6 × 5 states = {@link MIN_SCORES}). */
export const SHIFT_ORIGINS = 6;

/**
 * Weights by distance in the horizon (0, 1, …) of the scores pooled into a horizon's recalibration
 * (`pooledRecords`): by default [1], each horizon's own scores alone. Pooling with the neighbours at 1/4
 * ([1, 0.25]) made the corrections and factors change about half as much from one horizon to the next and
 * kept the development sets' cells in range, but lost a cell on a set scored once afterwards (unseen4 in
 * `test/markov/scoreLogs.ts`: 95 of 96 for the 50% band against 96), so it is an option, not the default
 * (DEVELOPERS.md, fifth pass).
 */
export const HORIZON_WEIGHTS: readonly number[] = [1];

/** The inner band's percentiles (a 50% band). */
export const INNER_BAND: [number, number] = [25, 75];

export interface IntervalScores {
  inner: number;
  outer: number;
}

export interface BacktestRow {
  horizon: number;
  /** Origins scored at this horizon. */
  origins: number;
  mae: number;
  naiveMae: number;
  /** MAE of the seasonal-naive forecast; null when no origin had a season of history. */
  seasonalMae: number | null;
  /** Fraction of actual shares inside the outer band. */
  coverage: number;
  /** Fraction of actual shares inside the inner (50%) band. */
  innerCoverage: number;
  /** Mean interval scores of shares (lower is better). */
  intervalScore: { model: IntervalScores; noChange: IntervalScores; seasonalNaive: IntervalScores | null };
  /** The model's own bands before recalibration: outer and inner coverage, interval scores. */
  modelCoverage: number;
  modelInnerCoverage: number;
  modelIntervalScore: IntervalScores;
  /** Origins at this horizon whose bands were recalibrated (moved or scaled; the rest had too few past scores and kept the model's). */
  recalibrated: number;
}

/** The recalibration at the last period, for the projection: per horizon, the factors the model's band widths are scaled by. */
export interface Recalibration {
  /** Past (origin, state) scores needed, and origins whose scores count (the latest with known outcomes). */
  minScores: number;
  scoreOrigins: number;
  /** Origins (per state) needed before a state's centre is corrected. */
  minShiftOrigins: number;
  /** Weights by distance in the horizon of the scores pooled into each horizon's corrections and factors. */
  horizonWeights: number[];
  /**
   * Per horizon: the records counted (the horizon's own), the factors [lower, upper] of each band's sides (null with too few
   * records) and each state's centre correction in units of its outer band's half-width (null when none).
   */
  horizons: { horizon: number; scores: number; inner: [number, number] | null; outer: [number, number] | null; shift: number[] | null }[];
}

export interface Backtest {
  rows: BacktestRow[];
  /** Labels of the origin periods scored, in order. */
  origins: string[];
  bands: { inner: [number, number]; outer: [number, number] };
  /** Coverage the bands aim at: their nominal width ± 10 points. */
  target: { inner: [number, number]; outer: [number, number] };
  /** Transitions each origin's fit pooled (null: all up to the origin). */
  window: number | null;
  samples: number;
  season: number | null;
  /** Why the seasonal-naive baseline is missing, when it is. */
  seasonalNote?: string;
  /** Periods whose actual mix the outer band missed in at least half of the cells aimed at them. */
  missed: { period: string; cells: number; outside: number }[];
  /** The band widths' recalibration from the origins' scores (null when calibrate is false). */
  recalibration: Recalibration | null;
  /** Every scored cell, when asked for (`detail`). */
  cells?: BacktestCell[];
}

/**
 * Backtests the projection on waist tables.
 *
 * @throws TidemarkError `INPUT_INVALID` for bad options (horizon 1 to 1000, minFit ≥ 1, window ≥ minFit, maxOrigins ≥ 1,
 *   band lo < hi in [0, 100], season ≥ 1); `NOT_ENOUGH_DATA` when no origin has `minFit` transitions before it and a
 *   later period to score against (the message gives the counts); as {@link fitChain}.
 * @example backtest(tables, { horizon: 2 }).rows // [{ horizon: 1, mae, coverage, innerCoverage, intervalScore, … }, { horizon: 2, … }]
 */
export function backtest(tables: WaistTables, options: BacktestOptions = {}): Backtest {
  const { horizon = 8, minFit = 4, window, samples = 100, seed = 1, band = [10, 90], season, calibrate = true, minScores = MIN_SCORES, scoreOrigins = SCORE_ORIGINS, minShiftOrigins = SHIFT_ORIGINS, horizonWeights = HORIZON_WEIGHTS } = options;
  assertInteger(minShiftOrigins, 'minShiftOrigins', 1);
  if (horizonWeights.length === 0 || !(horizonWeights[0] > 0) || horizonWeights.some((w) => !Number.isFinite(w) || w < 0)) {
    throw new TidemarkError('INPUT_INVALID', `horizonWeights must be finite weights ≥ 0, the first > 0 (got [${horizonWeights.join(', ')}])`, { key: 'horizonWeights' });
  }
  assertInteger(horizon, 'horizon', 1, 1000);
  assertInteger(minFit, 'minFit', 1);
  assertInteger(samples, 'samples', 1, 100000);
  if (window !== undefined) assertInteger(window, 'window', minFit);
  if (options.maxOrigins !== undefined) assertInteger(options.maxOrigins, 'maxOrigins', 1);
  if (season !== undefined) assertInteger(season, 'season', 1, 1000);
  assertInteger(minScores, 'minScores', 1);
  assertInteger(scoreOrigins, 'scoreOrigins', 1);
  assertInteger(seed, 'seed', 0, 0xffffffff);
  if (!(band[0] >= 0 && band[0] < band[1] && band[1] <= 100)) {
    throw new TidemarkError('INPUT_INVALID', `band must be [lo, hi] with 0 ≤ lo < hi ≤ 100 (got [${band.join(', ')}])`, { key: 'band' });
  }
  const { transitions, periods, stateCounts, states } = tables;
  const fi = freshIndex(states, options.freshState ?? tables.arrivalState);
  const S = states.length;
  // prefix sums over the transitions (each checked once): the counts pooled over lo..k are
  // cum[k + 1] − cum[lo], so each origin's point fit costs states², not the number of transitions before it
  const cum: Float64Array[] = [new Float64Array(S * S)];
  const cumFresh = [0];
  transitions.forEach((t, k) => {
    assertNonNegativeSquare(t.counts, states, `counts ${t.from}..${t.to}`);
    const next = cum[k].slice();
    t.counts.forEach((row, i) => row.forEach((v, j) => (next[i * S + j] += v)));
    cum.push(next);
    cumFresh.push(cumFresh[k] + t.fresh);
  });
  const share = stateCounts.map(shares);
  const periodAt = new Map(periods.map((label, i) => [label, i]));
  const levels = [INNER_BAND[0], INNER_BAND[1], band[0], band[1], 50];
  const levelInner = (INNER_BAND[1] - INNER_BAND[0]) / 100;
  const levelOuter = (band[1] - band[0]) / 100;
  // every scored (origin, state) cell's scores, by horizon: the origin's number, when its outcome is known, and its scores
  const scores: BandScoreRecord[][] = Array.from({ length: horizon }, () => []);
  const sideRatio = innerSideRatio(band);
  const alphaInner = 1 - (INNER_BAND[1] - INNER_BAND[0]) / 100;
  const alphaOuter = 1 - (band[1] - band[0]) / 100;
  const zInner = normalQuantile(1 - alphaInner / 2);
  const zOuter = normalQuantile(1 - alphaOuter / 2);
  const blank = () => ({ n: 0, cells: 0, mae: 0, naive: 0, inside: 0, insideInner: 0, is: [0, 0], isNaive: [0, 0], sCells: 0, sMae: 0, isSeason: [0, 0], mInside: 0, mInsideInner: 0, mIs: [0, 0], recal: 0 });
  const sums = Array.from({ length: horizon }, blank);
  const targets = new Map<number, { cells: number; outside: number }>();
  const origins: string[] = [];
  const cells: BacktestCell[] = [];
  const firstK = Math.max(minFit - 1, options.maxOrigins === undefined ? 0 : transitions.length - 1 - options.maxOrigins);
  for (let k = firstK; k < transitions.length; k++) {
    const p = periodAt.get(transitions[k].to) ?? -1;
    const steps = Math.min(horizon, periods.length - 1 - p);
    if (steps < 1) continue;
    const lo = window === undefined ? 0 : Math.max(0, k + 1 - window);
    const win = transitions.slice(lo, k + 1);
    const pooled = states.map((_, i) => states.map((_, j) => cum[k + 1][i * S + j] - cum[lo][i * S + j]));
    const fit = fitPooled(states, fi, pooled, cumFresh[k + 1] - cumFresh[lo], startAt(tables, p, transitions[k], fi), { from: transitions[lo].from, to: transitions[k].to, transitions: k + 1 - lo });
    const inflow = estimateInflow(win.map((t) => t.fresh), win.map((t) => t.to), options.inflowMethod);
    const split = states.map((_, i) => (i === fi ? 1 : 0));
    const point = projectVarying(fit.matrix, fit.start, (h) => split.map((f) => f * inflowAt(inflow, h)), steps);
    const rows = rateVariation(win, states);
    const sim = simulatePaths({ rows, inflow, split, common: commonShare(rows) }, fit.start, steps, { samples, seed: (seed + k) % 2 ** 32 });
    const q = states.map((_, s) => pathPercentiles(sim, levels, (c, b) => shareAt(c, b, S, s)));
    // baselines: root mean square of one-period (and one-season) changes of each share over the window
    const first = periodAt.get(transitions[lo].from) ?? 0;
    const naiveSd = states.map((_, s) => rms(range(first + 1, p).map((t) => share[t][s] - share[t - 1][s])));
    const seasonSd = season === undefined ? undefined : states.map((_, s) => rms(range(Math.max(first, season), p).map((t) => share[t][s] - share[t - season][s])));
    const seasonal = season !== undefined && p - season >= 0 && range(Math.max(first, season), p).length >= 2;
    const originNo = origins.length;
    origins.push(transitions[k].to);
    for (let h = 1; h <= steps; h++) {
      const actual = share[p + h];
      const acc = sums[h - 1];
      acc.n += 1;
      const target = targets.get(p + h) ?? { cells: 0, outside: 0 };
      targets.set(p + h, target);
      // the centre's correction and the sides' factors from the cells of earlier origins whose outcome at
      // this horizon (and, pooled with smaller weights, at its neighbours) was known at p (the latest
      // scoreOrigins of them at each horizon)
      const pool = calibrate ? pooledRecords(scores, h, p, originNo, scoreOrigins, horizonWeights) : null;
      const f = pool && pool.own.length >= minScores ? widthFactors(pool.used, 1, levelInner, levelOuter, pool.weight, horizonWeights[0]) : null;
      let moved = false;
      states.forEach((_, s) => {
        const a = actual[s];
        const [mil, miu, mol, mou, med] = q[s].map((row) => row[h]);
        const alt = innerAlt(med, mol, mou, sideRatio);
        const shift = pool && ownOf(pool.own, s) >= minShiftOrigins ? centreShift(pool.used, s, 1, pool.weight) * (mou - mol) / 2 : 0;
        const m = med + shift;
        scores[h - 1].push({ origin: originNo, known: p + h, state: s, error: signedError(a, med, mol, mou), inner: sideScores(a, m, mil + shift, miu + shift, alt), outer: sideScores(a, m, mol + shift, mou + shift) });
        const ONE: SideFactors = [1, 1];
        const [il, iu, ol, ou] = f || shift !== 0 ? recalibratedBands(med, [mil, miu, mol, mou], f?.inner ?? ONE, f?.outer ?? ONE, sideRatio, shift) : [mil, miu, mol, mou];
        if (f || shift !== 0) moved = true;
        if (options.detail) cells.push({ origin: originNo, period: p, horizon: h, state: s, actual: a, median: med, model: [mil, miu, mol, mou], band: [il, iu, ol, ou] });
        acc.cells += 1;
        acc.mae += Math.abs(point.shares[h][s] - a);
        acc.naive += Math.abs(share[p][s] - a);
        const inOuter = a >= ol - 1e-9 && a <= ou + 1e-9;
        if (inOuter) acc.inside += 1;
        if (a >= il - 1e-9 && a <= iu + 1e-9) acc.insideInner += 1;
        if (a >= mol - 1e-9 && a <= mou + 1e-9) acc.mInside += 1;
        if (a >= mil - 1e-9 && a <= miu + 1e-9) acc.mInsideInner += 1;
        target.cells += 1;
        if (!inOuter) target.outside += 1;
        acc.is[0] += intervalScore(il, iu, a, alphaInner);
        acc.is[1] += intervalScore(ol, ou, a, alphaOuter);
        acc.mIs[0] += intervalScore(mil, miu, a, alphaInner);
        acc.mIs[1] += intervalScore(mol, mou, a, alphaOuter);
        const w = naiveSd[s] * Math.sqrt(h);
        acc.isNaive[0] += intervalScore(share[p][s] - zInner * w, share[p][s] + zInner * w, a, alphaInner);
        acc.isNaive[1] += intervalScore(share[p][s] - zOuter * w, share[p][s] + zOuter * w, a, alphaOuter);
        if (seasonal && seasonSd) {
          const back = season * (Math.floor((h - 1) / season) + 1);
          const f = share[p + h - back][s];
          const ws = seasonSd[s] * Math.sqrt(Math.floor((h - 1) / season) + 1);
          acc.sCells += 1;
          acc.sMae += Math.abs(f - a);
          acc.isSeason[0] += intervalScore(f - zInner * ws, f + zInner * ws, a, alphaInner);
          acc.isSeason[1] += intervalScore(f - zOuter * ws, f + zOuter * ws, a, alphaOuter);
        }
      });
      if (moved) acc.recal += 1;
    }
  }
  if (origins.length === 0) {
    throw new TidemarkError('NOT_ENOUGH_DATA', `a backtest needs ${minFit} transitions before an origin and a later period to score, but the data have ${transitions.length} transitions`, { key: 'minFit' }, 'lower minFit or use a longer span of data');
  }
  const rows = sums
    .filter((a) => a.n > 0)
    .map((a, i) => ({
      horizon: i + 1,
      origins: a.n,
      mae: a.mae / a.cells,
      naiveMae: a.naive / a.cells,
      seasonalMae: a.sCells > 0 ? a.sMae / a.sCells : null,
      coverage: a.inside / a.cells,
      innerCoverage: a.insideInner / a.cells,
      intervalScore: {
        model: { inner: a.is[0] / a.cells, outer: a.is[1] / a.cells },
        noChange: { inner: a.isNaive[0] / a.cells, outer: a.isNaive[1] / a.cells },
        seasonalNaive: a.sCells > 0 ? { inner: a.isSeason[0] / a.sCells, outer: a.isSeason[1] / a.sCells } : null,
      },
      modelCoverage: a.mInside / a.cells,
      modelInnerCoverage: a.mInsideInner / a.cells,
      modelIntervalScore: { inner: a.mIs[0] / a.cells, outer: a.mIs[1] / a.cells },
      recalibrated: a.recal,
    }));
  const nominal = (band[1] - band[0]) / 100;
  const out: Backtest = {
    rows,
    origins,
    bands: { inner: [...INNER_BAND], outer: [band[0], band[1]] },
    target: { inner: [0.4, 0.6], outer: [round2(nominal - 0.1), round2(nominal + 0.1)] },
    window: window ?? null,
    samples,
    season: season ?? null,
    recalibration: calibrate
      ? {
          minScores,
          scoreOrigins,
          minShiftOrigins,
          horizonWeights: [...horizonWeights],
          horizons: scores.map((_, i) => {
            const pool = pooledRecords(scores, i + 1, Infinity, origins.length, scoreOrigins, horizonWeights);
            const f = pool.own.length >= minScores ? widthFactors(pool.used, 1, levelInner, levelOuter, pool.weight, horizonWeights[0]) : null;
            const shift = states.map((_, st) => (ownOf(pool.own, st) >= minShiftOrigins ? centreShift(pool.used, st, 1, pool.weight) : 0));
            return { horizon: i + 1, scores: pool.own.length, inner: f?.inner ?? null, outer: f?.outer ?? null, shift: shift.some((x) => x !== 0) ? shift : null };
          }),
        }
      : null,
    missed: [...targets.entries()].filter(([, v]) => v.cells >= 10 && v.outside * 2 >= v.cells).sort((a, b) => a[0] - b[0]).map(([t, v]) => ({ period: periods[t], cells: v.cells, outside: v.outside })),
  };
  if (options.detail) out.cells = cells;
  if (rows.every((r) => r.seasonalMae === null)) {
    out.seasonalNote = season === undefined ? 'no season length was given' : `it needs ${season + 2} periods of history before an origin (a season and two changes over it); the data have ${periods.length}`;
  }
  return out;
}

/** The inner band's side over the outer band's for a normal: z at the inner band's level over z at the outer's (0.674/1.282 for 50% and 80%). */
export function innerSideRatio(band: readonly [number, number]): number {
  const zo = normalQuantile(0.5 + (band[1] - band[0]) / 200);
  return zo > 0 ? normalQuantile(0.5 + (INNER_BAND[1] - INNER_BAND[0]) / 200) / zo : 1;
}

/** The interval score of a central (1 − α) interval [l, u] for the outcome x (Gneiting & Raftery 2007, eq. 43). */
export function intervalScore(l: number, u: number, x: number, alpha: number): number {
  return u - l + (x < l ? (2 / alpha) * (l - x) : 0) + (x > u ? (2 / alpha) * (x - u) : 0);
}

/** Records of state s among a horizon's own records. */
function ownOf(own: readonly BandScoreRecord[], s: number): number {
  let n = 0;
  for (const x of own) if (x.state === s) n++;
  return n;
}

function shareAt(c: Float64Array, base: number, S: number, s: number): number {
  let total = 0;
  for (let j = 0; j < S; j++) total += c[base + j];
  return total > 0 ? c[base + s] / total : 0;
}

function shares(counts: Vector): Vector {
  const total = counts.reduce((a, b) => a + b, 0);
  return counts.map((v) => (total > 0 ? v / total : 0));
}

/** lo … hi inclusive (empty when hi < lo). */
function range(lo: number, hi: number): number[] {
  return hi < lo ? [] : Array.from({ length: hi - lo + 1 }, (_, i) => lo + i);
}

function rms(v: number[]): number {
  return v.length ? Math.sqrt(v.reduce((a, x) => a + x * x, 0) / v.length) : 0;
}

const round2 = (x: number) => Math.round(x * 100) / 100;
