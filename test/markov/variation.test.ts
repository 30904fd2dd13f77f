import { describe, expect, it } from 'vitest';
import { rateVariation } from '../../src/markov/variation.js';
import { weeks } from './helpers.js';

const labels = weeks(10);
const window = (rows: number[][][]) => rows.map((counts, t) => ({ from: labels[t], to: labels[t + 1], counts, fresh: 0 }));

describe('rateVariation', () => {
  it('pooled rates are the row-normalised sums; a state nobody left has no rates', () => {
    const v = rateVariation(window([[[30, 10], [0, 0]], [[50, 10], [0, 0]]]), ['a', 'b']);
    expect(v[0].rates).toEqual([0.8, 0.2]);
    expect(v[0].users).toBe(100);
    expect(v[1]).toMatchObject({ rates: null, users: 0, estimated: false });
  });

  it('fewer than 3 periods with users: not estimated, φ = δ = 0, the level variance is 1/N', () => {
    const v = rateVariation(window([[[30, 10]], [[50, 10]]].map((r) => [r[0].concat(), [0, 0]])), ['a', 'b'])[0];
    expect(v).toMatchObject({ periods: 2, noise: 0, drift: 0, estimated: false });
    expect(v.level).toBeCloseTo(1 / 100, 12);
  });

  it('identical rates in every period and no binomial part to speak of give φ = δ = 0', () => {
    // the same counts each period: every squared distance is 0, less its binomial part → clipped to 0
    const v = rateVariation(window(Array.from({ length: 6 }, () => [[700, 300], [0, 1]])), ['a', 'b'])[0];
    expect(v.noise).toBe(0);
    expect(v.drift).toBe(0);
    expect(v.estimated).toBe(true);
  });

  it('rates that climb steadily show drift; rates that alternate show noise (hand-made counts of 10,000 users)', () => {
    const climb = rateVariation(window([0.5, 0.55, 0.6, 0.65, 0.7, 0.75].map((p) => [[p * 10000, (1 - p) * 10000], [0, 1]])), ['a', 'b'])[0];
    const zigzag = rateVariation(window([0.5, 0.6, 0.5, 0.6, 0.5, 0.6].map((p) => [[p * 10000, (1 - p) * 10000], [0, 1]])), ['a', 'b'])[0];
    expect(climb.drift).toBeGreaterThan(climb.noise);
    expect(zigzag.noise).toBeGreaterThan(zigzag.drift);
    expect(zigzag.drift).toBe(0);
  });

  it('matches an independent computation of the moment estimator (a plain loop over pairs and a least-squares line)', () => {
    // a share that alternates and falls: 0.6, 0.48, 0.6, 0.46, 0.56, 0.42 of 900 users, 100 more elsewhere
    const rows = [0.6, 0.48, 0.6, 0.46, 0.56, 0.42].map((p) => [Math.round(p * 900), Math.round((1 - p) * 900), 100]);
    const v = rateVariation(window(rows.map((r) => [r, [0, 1, 0], [0, 0, 1]])), ['a', 'b', 'c'])[0];
    const T = rows.length;
    const n = rows.map((r) => r.reduce((a, b) => a + b, 0));
    const N = n.reduce((a, b) => a + b, 0);
    const m = [0, 1, 2].map((j) => rows.reduce((a, r) => a + r[j], 0) / N);
    const V = 1 - m.reduce((a, x) => a + x * x, 0);
    const xs: number[] = [], ys: number[] = [];
    for (let t = 0; t < T; t++) for (let u = t + 1; u < T; u++) {
      xs.push(u - t);
      ys.push((rows[t].reduce((a, x, j) => a + (x / n[t] - rows[u][j] / n[u]) ** 2, 0) - V * (1 / n[t] + 1 / n[u])) / V);
    }
    const k = xs.length, sx = xs.reduce((a, b) => a + b, 0), sy = ys.reduce((a, b) => a + b, 0);
    const sxx = xs.reduce((a, b) => a + b * b, 0), sxy = xs.reduce((a, x, i) => a + x * ys[i], 0);
    const slope = (k * sxy - sx * sy) / (k * sxx - sx * sx);
    const icpt = (sy - slope * sx) / k;
    // this window's line has a positive intercept and slope, so the constraints do not bind
    expect(slope).toBeGreaterThan(0);
    expect(icpt).toBeGreaterThan(0);
    expect(v.drift).toBeCloseTo(slope, 12);
    expect(v.noise).toBeCloseTo(icpt / 2, 12);
    // level variance: φ·Σw² + (1 − φ)/N + δ·Σ_s C_s², equal weights 1/6 here: Σw² = 1/6, C_s = s/6
    expect(v.level).toBeCloseTo(v.noise / 6 + (1 - v.noise) / N + v.drift * [1, 2, 3, 4, 5].reduce((a, s) => a + (s / 6) ** 2, 0), 12);
  });
});
