import { describe, expect, it } from 'vitest';
import { commonShare, MAX_COMMON, rateVariation, type RowVariation } from '../../src/markov/variation.js';
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

  it('matches an independent computation: a plain Kalman loop gives the same filtered level, and no grid point a higher likelihood', () => {
    // a share that alternates and falls: 0.6, 0.48, 0.6, 0.46, 0.56, 0.42 of 900 users, 100 more elsewhere
    const rows = [0.6, 0.48, 0.6, 0.46, 0.56, 0.42].map((p) => [Math.round(p * 900), Math.round((1 - p) * 900), 100]);
    const v = rateVariation(window(rows.map((r) => [r, [0, 1, 0], [0, 0, 1]])), ['a', 'b', 'c'])[0];
    const n = rows.map((r) => r.reduce((a, b) => a + b, 0));
    const N = n.reduce((a, b) => a + b, 0);
    const m = [0, 1, 2].map((j) => rows.reduce((a, r) => a + r[j], 0) / N);
    // the local level model's Kalman filter with a diffuse start (Harvey 1989, §3.4), written out:
    // innovation variance F = P + δ + φ + 1/n_t, Pearson's form Σ v_j²/m_j over K − 1 = 2 degrees of freedom
    const kalman = (phi: number, delta: number) => {
      let a = rows[0].map((x) => x / n[0]), P = phi + 1 / n[0], ll = 0;
      for (let t = 1; t < rows.length; t++) {
        const y = rows[t].map((x) => x / n[t]);
        const prior = P + delta, F = prior + phi + 1 / n[t];
        const q = y.reduce((s, yj, j) => s + (yj - a[j]) ** 2 / m[j], 0);
        ll -= 0.5 * (2 * Math.log(F) + q / F);
        a = a.map((aj, j) => aj + (prior / F) * (y[j] - aj));
        P = (prior * (phi + 1 / n[t])) / F;
      }
      return { ll, a, P };
    };
    const fitted = kalman(v.noise, v.drift);
    fitted.a.forEach((x, j) => expect(v.filtered?.[j]).toBeCloseTo(x, 9));
    expect(v.level).toBeCloseTo(fitted.P, 9);
    for (let i = 0; i <= 60; i++) for (let k = 0; k <= 60; k++) expect(kalman((0.06 * i) / 60, (0.06 * k) / 60).ll).toBeLessThanOrEqual(fitted.ll + 1e-6);
    // this window alternates: the fit finds noise that does not persist
    expect(v.noise).toBeGreaterThan(0);
  });
});

describe('commonShare', () => {
  const row = (state: string, rates: number[], innovations: { t: number; v: number[]; h: number }[]): RowVariation => ({ state, rates, users: 1000, periods: innovations.length + 1, noise: 0.01, drift: 0, level: 0.001, estimated: true, innovations });
  const shocks = [0.03, -0.02, 0.04, -0.05, 0.01, 0.02, -0.03];
  it('rows whose innovations are the same shock give the cap; opposite shocks give 0; one row gives 0', () => {
    // by hand: identical Pearson-scaled innovations with no binomial part have correlation 1, capped at 0.9
    const a = row('a', [0.5, 0.5], shocks.map((x, t) => ({ t, v: [x, -x], h: 0 })));
    const b = row('b', [0.5, 0.5], shocks.map((x, t) => ({ t, v: [x, -x], h: 0 })));
    const c = row('c', [0.5, 0.5], shocks.map((x, t) => ({ t, v: [-x, x], h: 0 })));
    expect(commonShare([a, b])).toBe(MAX_COMMON);
    expect(commonShare([a, c])).toBe(0);
    expect(commonShare([a])).toBe(0);
  });

  it('half of each row\'s movement shared: ρ = 0.5 (an independent computation of the correlation)', () => {
    // row a = s + u, row b = s + w with s, u, w orthogonal and of equal size: correlation ½ (by hand)
    const s = [1, -1, 1, -1], u = [1, 1, -1, -1], w = [1, -1, -1, 1];
    const a = row('a', [0.5, 0.5], s.map((x, t) => ({ t, v: [0.01 * (x + u[t]), -0.01 * (x + u[t])], h: 0 })));
    const b = row('b', [0.5, 0.5], s.map((x, t) => ({ t, v: [0.01 * (x + w[t]), -0.01 * (x + w[t])], h: 0 })));
    expect(commonShare([a, b])).toBeCloseTo(0.5, 12);
  });
});
