import { describe, expect, it } from 'vitest';
import { filterLocalLevel, fitLocalLevel, localLevelLogLik, type LocalLevelObservation } from '../../src/numerics/localLevel.js';
import { mulberry32 } from '../stats/prng.js';

/**
 * Independent computation: for the local level model, the diffuse likelihood equals the Gaussian
 * likelihood of the first differences Δy_t = η_t + ε_t − ε_{t−1} (Harvey 1989, *Forecasting, Structural
 * Time Series Models and the Kalman Filter*, §3.4; the level drops out), whose covariance is tridiagonal:
 * Var Δy_t = δ + 2φ + h_t + h_{t−1}, Cov(Δy_t, Δy_{t+1}) = −(φ + h_t). Written here as a dense matrix with
 * a Cholesky factor; the Kalman filter omits the constant −½·log 2π per difference.
 */
function differencedLogLik(z: number[], h: number[], noise: number, drift: number): number {
  const n = z.length - 1;
  const d = Array.from({ length: n }, (_, t) => z[t + 1] - z[t]);
  const C = Array.from({ length: n }, (_, i) => Array.from({ length: n }, (_, j) => {
    if (i === j) return drift + 2 * noise + h[i] + h[i + 1];
    if (j === i + 1) return -(noise + h[i + 1]);
    if (i === j + 1) return -(noise + h[i]);
    return 0;
  }));
  const L = C.map((row) => row.map(() => 0));
  for (let i = 0; i < n; i++) {
    for (let j = 0; j <= i; j++) {
      let s = C[i][j];
      for (let k = 0; k < j; k++) s -= L[i][k] * L[j][k];
      L[i][j] = i === j ? Math.sqrt(s) : s / L[j][j];
    }
  }
  const w: number[] = [];
  for (let i = 0; i < n; i++) {
    let s = d[i];
    for (let k = 0; k < i; k++) s -= L[i][k] * w[k];
    w.push(s / L[i][i]);
  }
  const logDet = 2 * L.reduce((a, row, i) => a + Math.log(row[i]), 0);
  return -0.5 * (logDet + w.reduce((a, x) => a + x * x, 0) + n * Math.log(2 * Math.PI));
}

/** A local level series of two shares (m = [a, 1 − a]); returns the observations and the scalar series z = y₀/√(a(1 − a)). */
function series(seed: number, T: number, a: number, noise: number, drift: number, users: number): { obs: LocalLevelObservation[]; z: number[]; h: number[] } {
  const rand = mulberry32(seed);
  const gauss = () => Math.sqrt(-2 * Math.log(1 - rand())) * Math.cos(2 * Math.PI * rand());
  const sd = Math.sqrt(a * (1 - a));
  let level = a;
  const obs: LocalLevelObservation[] = [];
  for (let t = 0; t < T; t++) {
    if (t > 0) level += Math.sqrt(drift) * sd * gauss();
    const y0 = level + Math.sqrt(noise + 1 / users) * sd * gauss();
    obs.push({ t, y: [y0, 1 - y0], h: 1 / users });
  }
  return { obs, z: obs.map((o) => o.y[0] / sd), h: obs.map((o) => o.h) };
}

describe('local level model, diffuse likelihood (seeded)', () => {
  it('the Kalman filter\'s log-likelihood equals the likelihood of the first differences, computed independently', () => {
    const a = 0.3;
    const { obs, z, h } = series(7, 9, a, 0.01, 0.004, 800);
    for (const [noise, drift] of [[0.01, 0.004], [0, 0.02], [0.05, 0], [0.002, 0.0005]]) {
      const kalman = localLevelLogLik(obs, [a, 1 - a], noise, drift);
      expect(kalman - (z.length - 1) * 0.5 * Math.log(2 * Math.PI)).toBeCloseTo(differencedLogLik(z, h, noise, drift), 9);
    }
  });

  it('the worked value of the doc comment: −½(log 0.03 + 0.04/0.03)', () => {
    // computed by hand: P = 0.01, prior 0.02, F = 0.03, Pearson form 0.01/0.5 + 0.01/0.5 = 0.04
    expect(localLevelLogLik([{ t: 0, y: [0.5, 0.5], h: 0 }, { t: 1, y: [0.6, 0.4], h: 0 }], [0.5, 0.5], 0.01, 0.01)).toBeCloseTo(-0.5 * (Math.log(0.03) + 0.04 / 0.03), 12);
  });

  it('the fit is the maximum: no point of a fine independent grid beats it by more than the grid\'s step', () => {
    const a = 0.4;
    const { obs } = series(11, 8, a, 0.004, 0.002, 2000);
    const fit = fitLocalLevel(obs, [a, 1 - a], 0.5);
    let best = -Infinity;
    for (let i = 0; i <= 200; i++) for (let k = 0; k <= 200; k++) best = Math.max(best, localLevelLogLik(obs, [a, 1 - a], (0.02 * i) / 200, (0.02 * k) / 200));
    expect(fit.logLik).toBeGreaterThanOrEqual(best - 1e-3);
  });

  it('recovers φ and δ from a long series (400 periods)', () => {
    const a = 0.35;
    const { obs } = series(3, 400, a, 0.01, 0.002, 5000);
    const fit = fitLocalLevel(obs, [a, 1 - a], 0.5);
    expect(fit.noise).toBeGreaterThan(0.007);
    expect(fit.noise).toBeLessThan(0.013);
    expect(fit.drift).toBeGreaterThan(0.001);
    expect(fit.drift).toBeLessThan(0.0035);
  });

  it('with a level that stands still, δ is exactly 0 in a good share of short series (8 periods, 300 series)', () => {
    // the pile-up at 0 of the maximum-likelihood δ (Shephard & Harvey 1990, J. Time Series Analysis 11);
    // measured when written: 59% of the series
    const a = 0.5;
    let zeros = 0;
    for (let s = 0; s < 300; s++) if (fitLocalLevel(series(100 + s, 8, a, 0.01, 0, 1000).obs, [a, 1 - a], 0.5).drift === 0) zeros++;
    expect(zeros / 300).toBeGreaterThan(0.4);
  });

  it('the filtered level is the last observation when nothing but the level moves, and the mean when the level stands still', () => {
    const obs = [0.5, 0.55, 0.6, 0.65].map((p, t) => ({ t, y: [p, 1 - p], h: 0 }));
    const walk = filterLocalLevel(obs, [0.575, 0.425], 0, 0.01);
    expect(walk.level[0]).toBeCloseTo(0.65, 12);
    expect(walk.variance).toBeCloseTo(0, 12);
    const still = filterLocalLevel(obs, [0.575, 0.425], 0.01, 0);
    expect(still.level[0]).toBeCloseTo(0.575, 12);
    expect(still.variance).toBeCloseTo(0.01 / 4, 12); // the variance of a mean of 4 values of variance φ
  });
});
