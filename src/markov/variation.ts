/**
 * How much the transition rates move from period to period, estimated from the fit window.
 *
 * Model (per state i, the row of rates out of it): the rates of period t are
 * p_t = μ_t + ε_t + binomial noise, where the level μ_t is a random walk (μ_t − μ_{t−1} has variance
 * δ·m(1 − m) in each cell) and ε_t is noise that does not persist (variance φ·m(1 − m)); m are the
 * pooled rates. This is the local level model (random walk plus noise; Harvey 1989, *Forecasting,
 * Structural Time Series Models and the Kalman Filter*, §2.3) with Dirichlet variation on the simplex
 * of a row (the Dirichlet-multinomial for overdispersed counts; Mosimann 1962, Biometrika 49:65–82).
 *
 * Estimation, by restricted (diffuse) maximum likelihood (`numerics/localLevel.ts`): the Kalman filter of
 * the model, the binomial part of period t's variance (1/n_t) known, φ and δ maximising the diffuse
 * likelihood over [0, {@link MAX_VARIATION}] (Harvey 1989, §3.4; Tunnicliffe Wilson 1989, JRSS B 51). It
 * weighs each cell by Pearson's 1/m_j and each period once, where the least-squares variogram used
 * before weighed every pair of periods alike (see DEVELOPERS.md for what each gave). Fewer than
 * {@link MIN_PERIODS} periods with users leaving the state leave φ = δ = 0 (the row is listed as not
 * estimated).
 *
 * The futures start from the level at the window's end, the filter's estimate (recent periods weigh
 * more when the level moves), not from the pooled rates; its variance is the filter's, plus δ for each
 * period after the last one with users in the state. Rows not estimated start from the pooled rates
 * with their sampling variance 1/N.
 */
import type { TransitionCounts } from '../flows/types.js';
import { filterLocalLevel, fitLocalLevel } from '../numerics/localLevel.js';

/** Periods with users leaving a state needed to estimate how its rates vary. */
export const MIN_PERIODS = 3;
/** Upper bound of φ and δ (a share of m(1 − m)): keeps every Dirichlet concentration above 1. */
export const MAX_VARIATION = 0.5;
/** Longest lag between two periods in the inflow's variogram (keeps long windows linear in their length). */
export const MAX_LAG = 26;

export interface RowVariation {
  state: string;
  /** Pooled rates out of the state over the window; null when no user left it (kept absorbing). */
  rates: number[] | null;
  /** Users leaving the state, summed over the window. */
  users: number;
  /** Periods of the window with users leaving the state. */
  periods: number;
  /** φ: period-to-period variation that does not persist, as a share of m(1 − m). */
  noise: number;
  /** δ: variance the level adds each period, as a share of m(1 − m). */
  drift: number;
  /** Variance of the level at the window's end (of `filtered`, or of the pooled rates when not estimated), as a share of m(1 − m). */
  level: number;
  /** False when the window had too few periods to estimate φ and δ (they are 0). */
  estimated: boolean;
  /** The level at the window's end (Kalman filter), when estimated: the center the futures start from. */
  filtered?: number[];
  /** The filter's innovations y_t − a_t (period index t, binomial part h = 1/n_t), for {@link commonShare}. */
  innovations?: { t: number; v: number[]; h: number }[];
}

/**
 * The variation of every row's rates over `transitions` (one window, in order).
 *
 * @example rateVariation(window, states)[1] // { state: 'engaged', rates: [0, 0.7, 0, 0.2, 0.1], noise: 0.002, drift: 0.0005, filtered: [0, 0.69, 0, 0.21, 0.1], … }
 */
export function rateVariation(transitions: readonly TransitionCounts[], states: readonly string[]): RowVariation[] {
  return states.map((state, i) => {
    const rows = transitions.map((t) => t.counts[i]);
    const n = rows.map((r) => r.reduce((a, b) => a + b, 0));
    const N = n.reduce((a, b) => a + b, 0);
    if (N === 0) return { state, rates: null, users: 0, periods: 0, noise: 0, drift: 0, level: 0, estimated: false };
    const m = states.map((_, j) => rows.reduce((a, r) => a + r[j], 0) / N);
    const V = 1 - m.reduce((a, v) => a + v * v, 0);
    const used = n.map((_, t) => t).filter((t) => n[t] > 0);
    const estimated = used.length >= MIN_PERIODS && V > 0;
    if (estimated) {
      const obs = used.map((t) => ({ t, y: rows[t].map((v) => v / n[t]), h: 1 / n[t] }));
      const { noise, drift } = fitLocalLevel(obs, m, MAX_VARIATION);
      const f = filterLocalLevel(obs, m, noise, drift);
      const gap = n.length - 1 - used[used.length - 1];
      const level = Math.min(MAX_VARIATION, f.variance + gap * drift);
      return { state, rates: m, users: N, periods: used.length, noise, drift, level, estimated, filtered: f.level.map((v, j) => (m[j] > 0 ? Math.max(v, 1e-9) : 0)), innovations: f.innovations.map((x) => ({ ...x, h: 1 / n[x.t] })) };
    }
    // too few periods to estimate φ and δ: the pooled rates, with their sampling variance alone
    return { state, rates: m, users: N, periods: used.length, noise: 0, drift: 0, level: 1 / N, estimated };
  });
}


/** Upper bound of the common share ρ. */
export const MAX_COMMON = 0.9;

/**
 * ρ, the share of the rates' variation (φ and δ) that all rows share, from the cross-row covariance of
 * the filters' innovations: with w_itj = v_itj/√m_ij (row i's innovation in period t toward destination
 * j, scaled as in Pearson's form), every pair of estimated rows i ≠ k gives
 *   ρ_ik = Σ_{t,j} w_itj·w_ktj / √(e_i·e_k),  e_i = Σ_{t,j} (w_itj² − h_it·(1 − m_ij)),
 * over the periods and destinations both have (e_i: the innovations' variance beyond the binomial part
 * h = 1/n). ρ is the mean of ρ_ik over the pairs, weighted by the periods they share, kept in
 * [0, {@link MAX_COMMON}]. This is the one-factor reading of a covariance matrix (Spearman's common
 * factor; Anderson, *An Introduction to Multivariate Statistical Analysis*, 3rd ed., §14.2) with one
 * shock per destination shared by the rows; a week that moves every state at once (more activity
 * everywhere) gives ρ > 0, which rows drawn independently would miss. Fewer than two estimated rows
 * give 0.
 *
 * @example commonShare(rateVariation(window, states)) // 0.4 when the weeks' activity moves all rows together
 */
export function commonShare(rows: readonly RowVariation[]): number {
  const est = rows.filter((r) => r.estimated && r.rates && r.innovations && r.innovations.length > 0);
  let sum = 0, weight = 0;
  for (let a = 0; a < est.length; a++) {
    for (let b = a + 1; b < est.length; b++) {
      const A = est[a], B = est[b];
      const ma = A.rates as number[], mb = B.rates as number[];
      const byT = new Map((B.innovations ?? []).map((x) => [x.t, x]));
      let cross = 0, ea = 0, eb = 0, periods = 0;
      for (const x of A.innovations ?? []) {
        const y = byT.get(x.t);
        if (!y) continue;
        let shared = false;
        for (let j = 0; j < ma.length; j++) {
          if (!(ma[j] > 0 && mb[j] > 0)) continue;
          shared = true;
          const wa = x.v[j] / Math.sqrt(ma[j]), wb = y.v[j] / Math.sqrt(mb[j]);
          cross += wa * wb;
          ea += wa * wa - x.h * (1 - ma[j]);
          eb += wb * wb - y.h * (1 - mb[j]);
        }
        if (shared) periods++;
      }
      if (periods < 2 || ea <= 0 || eb <= 0) continue;
      sum += periods * (cross / Math.sqrt(ea * eb));
      weight += periods;
    }
  }
  return weight > 0 ? Math.min(MAX_COMMON, Math.max(0, sum / weight)) : 0;
}
