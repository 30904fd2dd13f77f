/**
 * The linear semivariogram of a random walk plus noise (the local level model; Harvey 1989,
 * *Forecasting, Structural Time Series Models and the Kalman Filter*, §2.3): for y_t = μ_t + ε_t,
 * μ_t = μ_{t−1} + η_t, the expected squared difference of two values L periods apart is
 * E[(y_{t+L} − y_t)²] = 2σ²_ε + L·σ²_η. Fitted by least squares to the squared differences of every
 * pair of periods, with both parameters kept ≥ 0 (a least-squares variogram fit, Cressie 1993,
 * *Statistics for Spatial Data*, rev. ed., §2.6).
 */

export interface VariogramFit {
  /** σ²_ε: the noise that does not persist from period to period. */
  noise: number;
  /** σ²_η: the variance the level adds each period (the drift of a random walk). */
  drift: number;
  /** Pairs of periods the fit used. */
  pairs: number;
}

/**
 * Fits E[d] = 2·noise + lag·drift to `pairs` of (lag ≥ 1, squared difference d), noise and drift ≥ 0.
 * Among the unconstrained fit and the two fits on the boundary (noise = 0, drift = 0) it returns the
 * feasible one with the smallest sum of squared errors (for two parameters this is the constrained
 * least-squares solution). No pairs give zeros.
 *
 * @example fitLinearVariogram([{ lag: 1, d: 4 }, { lag: 2, d: 6 }, { lag: 3, d: 8 }]) // { noise: 1, drift: 2, pairs: 3 }
 */
export function fitLinearVariogram(pairs: readonly { lag: number; d: number }[]): VariogramFit {
  const n = pairs.length;
  if (n === 0) return { noise: 0, drift: 0, pairs: 0 };
  let sx = 0, sy = 0, sxx = 0, sxy = 0;
  for (const { lag, d } of pairs) {
    sx += lag;
    sy += d;
    sxx += lag * lag;
    sxy += lag * d;
  }
  const sse = (c: number, s: number) => pairs.reduce((a, { lag, d }) => a + (d - c - s * lag) ** 2, 0);
  const candidates: [number, number][] = [];
  const det = n * sxx - sx * sx;
  if (det > 0) {
    const s = (n * sxy - sx * sy) / det;
    const c = (sy - s * sx) / n;
    if (s >= 0 && c >= 0) candidates.push([c, s]);
  }
  candidates.push([Math.max(0, sy / n), 0]);
  candidates.push([0, sxx > 0 ? Math.max(0, sxy / sxx) : 0]);
  let best = candidates[0];
  for (const c of candidates) if (sse(c[0], c[1]) < sse(best[0], best[1]) - 1e-15) best = c;
  return { noise: best[0] / 2, drift: best[1], pairs: n };
}
