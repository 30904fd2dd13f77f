/**
 * New users per period, from the arrivals of the fit window, by a method the user picks:
 * - `mean`: the arithmetic mean (a one-off spike moves it);
 * - `median` (the default): robust to one-off spikes;
 * - `trimmed`: the 20% trimmed mean (Wilcox 2012, §3.3);
 * - `trend`: the Theil–Sen line through the arrivals (Sen 1968), extrapolated.
 *
 * Outliers are periods whose arrivals lie more than 3.5 modified z-scores from the method's center
 * (the median, or the Theil–Sen line; Iglewicz & Hoaglin 1993), the MAD floored at the Poisson
 * standard deviation √median / 1.4826 (counts that steady vary at least that much). They are listed
 * for a warning and left out of the estimate of how much arrivals vary.
 *
 * Variation, for the bands (a local level model again, `numerics/variogram.ts`): from the other
 * periods, the noise variance σ²_ε (at least the mean: Poisson noise) and the drift σ²_η of the
 * level; the center's own uncertainty is σ²_ε·e/W + σ²_η·Σ_s (s/W)² with e = 1 (mean), π/2 (median,
 * its asymptotic variance under normal noise), 1.06 (20% trimmed mean); for the trend the line's
 * prediction variance σ²_ε·(1/W + (x − x̄)²/Sxx) at the last period, and slope variance σ²_ε/Sxx.
 */
import { TidemarkError } from '../errors.js';
import { median, modifiedZOutliers, theilSen, trimmedIndices, trimmedMean } from '../numerics/robust.js';
import { fitLinearVariogram } from '../numerics/variogram.js';
import { MAX_LAG } from './variation.js';

export const INFLOW_METHODS = ['median', 'mean', 'trimmed', 'trend'] as const;
export type InflowMethod = (typeof INFLOW_METHODS)[number];

export interface InflowEstimate {
  method: InflowMethod;
  /** Arrivals per period at the last period of the window (the method's center there). */
  center: number;
  /** Change per period (trend only; 0 otherwise). */
  slope: number;
  /** Periods the method treated as outliers, with their arrivals. */
  outliers: { period: string; arrivals: number }[];
  /** Periods the trimmed mean left out (trimmed only). */
  trimmed: string[];
  /** Standard deviation of one period's arrivals around the level. */
  noiseSd: number;
  /** Variance the level adds each period. */
  drift: number;
  /** Standard deviation of the center itself. */
  centerSd: number;
  /** Standard deviation of the slope (trend only). */
  slopeSd: number;
  periods: number;
}

/**
 * Estimates the inflow from `arrivals[t]` in the periods `labels[t]` of the fit window.
 *
 * @throws TidemarkError `INPUT_INVALID` (key `inflowMethod`) for an unknown method, `NOT_ENOUGH_DATA`
 *   for no periods.
 * @example estimateInflow([500, 520, 5000, 510, 490], labels, 'median') // center 510, outliers [the 5000 period]
 */
export function estimateInflow(arrivals: readonly number[], labels: readonly string[], method: InflowMethod = 'median'): InflowEstimate {
  if (!(INFLOW_METHODS as readonly string[]).includes(method)) {
    throw new TidemarkError('INPUT_INVALID', `unknown inflow method '${String(method)}'`, { key: 'inflowMethod' }, `methods: ${INFLOW_METHODS.join(', ')}`);
  }
  const W = arrivals.length;
  if (W === 0) throw new TidemarkError('NOT_ENOUGH_DATA', 'no periods to estimate the inflow from', { key: 'inflowMethod' });
  const x = arrivals.map((_, t) => t);
  const line = method === 'trend' ? theilSen(x, arrivals) : { slope: 0, intercept: median(arrivals) };
  const resid = arrivals.map((a, t) => a - (line.intercept + line.slope * t));
  const out = new Set(modifiedZOutliers(resid, Math.sqrt(Math.max(0, median(arrivals))) / 1.4826));
  const trimmed = method === 'trimmed' ? trimmedIndices(arrivals) : [];
  const center = method === 'mean' ? arrivals.reduce((a, b) => a + b, 0) / W
    : method === 'trimmed' ? trimmedMean(arrivals)
    : method === 'median' ? line.intercept
    : Math.max(0, line.intercept + line.slope * (W - 1));
  const keep = x.filter((t) => !out.has(t));
  const pairs: { lag: number; d: number }[] = [];
  for (let a = 0; a < keep.length; a++) for (let b = a + 1; b < keep.length && keep[b] - keep[a] <= MAX_LAG; b++) pairs.push({ lag: keep[b] - keep[a], d: (resid[keep[b]] - resid[keep[a]]) ** 2 });
  const fit = fitLinearVariogram(pairs);
  const noiseVar = Math.max(fit.noise, center);
  const walk = Array.from({ length: Math.max(0, keep.length - 1) }, (_, s) => ((s + 1) / Math.max(1, keep.length)) ** 2).reduce((a, b) => a + b, 0);
  const Wk = Math.max(1, keep.length);
  let centerVar: number, slopeSd = 0;
  if (method === 'trend') {
    const xm = keep.reduce((a, t) => a + t, 0) / Wk;
    const sxx = keep.reduce((a, t) => a + (t - xm) ** 2, 0);
    centerVar = noiseVar * (1 / Wk + (sxx > 0 ? (W - 1 - xm) ** 2 / sxx : 0));
    slopeSd = sxx > 0 ? Math.sqrt(noiseVar / sxx) : 0;
  } else {
    const e = method === 'mean' ? 1 : method === 'median' ? Math.PI / 2 : 1.06;
    centerVar = (noiseVar * e) / Wk + fit.drift * walk;
  }
  return {
    method,
    center,
    slope: method === 'trend' ? line.slope : 0,
    outliers: [...out].sort((a, b) => a - b).map((t) => ({ period: labels[t], arrivals: arrivals[t] })),
    trimmed: trimmed.map((t) => labels[t]),
    noiseSd: Math.sqrt(noiseVar),
    drift: fit.drift,
    centerSd: Math.sqrt(centerVar),
    slopeSd,
    periods: W,
  };
}

/** The expected arrivals h periods after the window's last period (never below 0). */
export function inflowAt(e: Pick<InflowEstimate, 'center' | 'slope'>, h: number): number {
  return Math.max(0, e.center + e.slope * h);
}
