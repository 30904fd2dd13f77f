import { describe, expect, it } from 'vitest';
import { computeProjection } from '../../src/markov/run.js';
import { pathPercentiles, type Simulation } from '../../src/markov/simulate.js';
import { simulatedChain } from './chains.js';
import { expectClose } from './helpers.js';

// The projection's bands at "now" are the model's percentiles with each side moved from the median by the
// backtest's factors for that horizon (the last horizon's beyond it). Checked against the same run without
// the backtest (same seed, same paths, so the model's bands): the recalibrated band's width is the factor
// times the model's, for every state's count and share, active users and each scenario's level bands; the
// point projection and the scenarios' difference bands are left as they were.
describe('the projection\'s recalibrated bands', () => {
  const tables = simulatedChain({ periods: 40, walk: 0.05, noise: 0.05, arrivals: 600, arrivalSd: 60, start: [600, 6000, 900, 2500, 12000], seed: 51 });
  const o = { horizon: 10, samples: 80, seed: 2, band: [10, 90] as [number, number], fit: '8', backtestHorizon: 8, backtestSamples: 40, scenarios: ['keep=lapsing->dormant*0.8'] };
  const withBt = computeProjection({ tables }, o);
  const without = computeProjection({ tables }, { ...o, backtest: false });

  it('says how the bands were made, with the factors per horizon, or that they were not recalibrated', () => {
    const r = withBt.uncertainty!.recalibration;
    expect(r.applied).toBe(true);
    expect(r.horizons.map((x) => x.horizon)).toEqual([1, 2, 3, 4, 5, 6, 7, 8]);
    for (const x of r.horizons) for (const v of x.outer!) expect(v).toBeGreaterThan(0);
    expect(withBt.uncertainty!.method).toMatch(/recalibrated per horizon from the backtest/);
    expect(withBt.uncertainty!.sources).toMatch(/conformal/);
    expect(without.uncertainty!.recalibration).toMatchObject({ applied: false, horizons: [] });
    expect(without.uncertainty!.recalibration.note).toMatch(/--no-backtest/);
  });

  it('the point projection and the scenarios\' difference bands do not move; the bands do, within the model\'s reach', () => {
    const f = withBt.uncertainty!.recalibration.horizons;
    let moved = 0;
    for (let t = 1; t <= o.horizon; t++) {
      const a = withBt.projection[t], b = without.projection[t];
      expect(a.counts).toEqual(b.counts);
      for (const st of withBt.states) if (a.bands!.shares[st].some((v, k) => Math.abs(v - b.bands!.shares[st][k]) > 1e-12)) moved++;
      const sa = withBt.scenarios![0].steps[t], sb = without.scenarios![0].steps[t];
      expect(sa.difference.total.outer).toEqual(sb.difference.total.outer);
    }
    expect(moved).toBeGreaterThan(10);
    for (const x of f) {
      expect(x.inner).toHaveLength(2);
      expect(x.outer).toHaveLength(2);
      expect(Object.keys(x.shift!)).toEqual(withBt.states);
    }
  });
});

// pathPercentiles applies the factors and the centre correction as the backtest does. Hand-made paths
// (five paths, one step): state 0's counts 2, 4, 6, 8, 10 have median 6, 10th/90th percentiles 2.8 and
// 9.2 and 25th/75th 4 and 8 (Hyndman & Fan definition 7). A correction of +0.5 outer half-widths moves
// the band by 0.5 · 3.2 = 1.6; lower factor 0.5 and upper 2 make the outer band [6 + 1.6 − 0.5·3.2,
// 6 + 1.6 + 2·3.2] = [6, 14] and the inner (factors 1, 1) [4 + 1.6, 8 + 1.6] kept inside it, [6, 9.6]. A total (no state) is scaled, not moved: [4.4, 12.4], the inner band [4.4, 8].
describe('the projection\'s bands moved and scaled side by side (hand-made paths)', () => {
  const counts = new Float64Array(5 * 2 * 2);
  for (let k = 0; k < 5; k++) {
    counts[(k * 2 + 1) * 2] = 2 * (k + 1);
    counts[(k * 2 + 1) * 2 + 1] = 20;
  }
  const sim: Simulation = { samples: 5, horizon: 1, states: 2, counts: [counts], recalibration: { inner: [25, 75], outer: [10, 90], factors: [{ inner: [1, 1], outer: [1, 1] }, { inner: [1, 1], outer: [0.5, 2], shift: [0.5, 0] }], sideRatio: 0.5 } };
  it('a state\'s band is moved by its correction and each side scaled by its factor; an aggregate only scaled', () => {
    const q = pathPercentiles(sim, [10, 90, 25, 75], (x, b) => x[b], 0, undefined, Infinity, 0);
    expectClose(q.map((r) => r[1]), [6, 14, 6, 9.6], 1e-9);
    const t = pathPercentiles(sim, [10, 90, 25, 75], (x, b) => x[b], 0);
    expectClose(t.map((r) => r[1]), [4.4, 12.4, 4.4, 8], 1e-9);
  });
});

// A widened band can reach past what the quantity can be (a small state's count below 0, a share above
// 1); the projection keeps it within [0, upper]. Hand-made paths (five paths, one step): state 0's counts
// 1…5 have median 3 and 10th/90th percentiles 1.4 and 4.6 (Hyndman & Fan definition 7), so a factor of 10
// moves the outer band to 3 ∓ 16, clamped to [0, 19]; its shares (count / 10) are clamped to [0, 1].
describe('recalibrated bands stay within what the quantity can be', () => {
  const counts = new Float64Array(5 * 2 * 2);
  for (let k = 0; k < 5; k++) {
    counts[(k * 2 + 1) * 2] = k + 1;
    counts[(k * 2 + 1) * 2 + 1] = 10 - (k + 1);
  }
  const sim: Simulation = { samples: 5, horizon: 1, states: 2, counts: [counts], recalibration: { inner: [25, 75], outer: [10, 90], factors: [{ inner: [1, 1], outer: [1, 1] }, { inner: [10, 10], outer: [10, 10] }], sideRatio: 0.5 } };
  it('a count band is never below 0, a share band never above 1', () => {
    const c = pathPercentiles(sim, [10, 90], (x, b) => x[b]);
    expect(c[0][1]).toBe(0);
    expectClose(c[1][1], 3 + 10 * 1.6, 1e-9);
    const s = pathPercentiles(sim, [10, 90], (x, b) => x[b] / (x[b] + x[b + 1]), 0, undefined, 1);
    expect(s[0][1]).toBe(0);
    expect(s[1][1]).toBe(1);
  });
});
