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
 * Estimation, by the method of moments: for every pair of periods t < u of the window, the squared
 * distance Σ_j (p_tj − p_uj)² less its binomial part V·(1/n_t + 1/n_u), divided by
 * V = Σ_j m_j(1 − m_j), has expectation 2φ + (u − t)·δ; φ and δ come from a least-squares fit of that
 * line with both ≥ 0 (`numerics/variogram.ts`), over pairs at most {@link MAX_LAG} periods apart. Fewer than {@link MIN_PERIODS} periods with users
 * leaving the state leave φ = δ = 0 (the row is listed as not estimated).
 *
 * The level at the end of the window is uncertain too: with weights w_t = n_t/N, the pooled rates
 * differ from it by variance m(1 − m)·(φ·Σw_t² + (1 − φ)/N + δ·Σ_s C_s²), C_s = Σ_{t≤s} w_t (the
 * random walk's steps between each period and the last).
 */
import type { TransitionCounts } from '../flows/types.js';
import { fitLinearVariogram } from '../numerics/variogram.js';

/** Periods with users leaving a state needed to estimate how its rates vary. */
export const MIN_PERIODS = 3;
/** Upper bound of φ and δ (a share of m(1 − m)): keeps every Dirichlet concentration above 1. */
export const MAX_VARIATION = 0.5;
/** Longest lag between two periods in the variogram (keeps long windows linear in their length). */
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
  /** Variance of the pooled rates around the level at the window's end, as a share of m(1 − m). */
  level: number;
  /** False when the window had too few periods to estimate φ and δ (they are 0). */
  estimated: boolean;
}

/**
 * The variation of every row's rates over `transitions` (one window, in order).
 *
 * @example rateVariation(window, states)[1] // { state: 'engaged', rates: [0, 0.7, 0, 0.2, 0.1], noise: 0.002, drift: 0.0005, … }
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
    let noise = 0, drift = 0;
    if (estimated) {
      const pairs: { lag: number; d: number }[] = [];
      for (let a = 0; a < used.length; a++) {
        for (let b = a + 1; b < used.length && used[b] - used[a] <= MAX_LAG; b++) {
          const t = used[a], u = used[b];
          let d = 0;
          for (let j = 0; j < m.length; j++) d += (rows[t][j] / n[t] - rows[u][j] / n[u]) ** 2;
          pairs.push({ lag: u - t, d: (d - V * (1 / n[t] + 1 / n[u])) / V });
        }
      }
      const fit = fitLinearVariogram(pairs);
      noise = Math.min(MAX_VARIATION, fit.noise);
      drift = Math.min(MAX_VARIATION, fit.drift);
    }
    let sumW2 = 0, walk = 0, cum = 0;
    for (let t = 0; t < n.length; t++) {
      const w = n[t] / N;
      sumW2 += w * w;
      cum += w;
      if (t < n.length - 1) walk += cum * cum;
    }
    const level = noise * sumW2 + (1 - noise) / N + drift * walk;
    return { state, rates: m, users: N, periods: used.length, noise, drift, level, estimated };
  });
}
