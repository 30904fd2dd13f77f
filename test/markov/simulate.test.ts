import { describe, expect, it } from 'vitest';
import { mulberry32 } from '../../src/numerics/random.js';
import { reweightRow } from '../../src/markov/reweight.js';
import { editRow, sharedStep, simulatePaths, MAX_CELLS, type PathModel } from '../../src/markov/simulate.js';
import type { RowVariation } from '../../src/markov/variation.js';
import { expectClose, expectRefusal } from './helpers.js';

/** A row with rates m, known exactly (a huge N: no level uncertainty) and no variation. */
const fixed = (state: string, rates: number[] | null, noise = 0, drift = 0): RowVariation => ({ state, rates, users: 1e12, periods: 8, noise, drift, level: 1e-12, estimated: true });
const P = [[0.5, 0.3, 0.2], [0.1, 0.8, 0.1], [0, 0.25, 0.75]];
const still = (inflow = 0): PathModel => ({
  rows: P.map((r, i) => fixed(`s${i}`, r)),
  inflow: { center: inflow, slope: 0, noiseSd: Math.sqrt(inflow), drift: 0, centerSd: 0, slopeSd: 0, periods: 8 },
  split: [1, 0, 0],
});
const at = (c: Float64Array, H: number, S: number, k: number, t: number) => Array.from(c.subarray((k * (H + 1) + t) * S, (k * (H + 1) + t + 1) * S));

describe('simulatePaths', () => {
  it('the same seed gives the same paths; another seed others', () => {
    const a = simulatePaths(still(50), [100, 400, 500], 4, { samples: 20, seed: 3 });
    expect(simulatePaths(still(50), [100, 400, 500], 4, { samples: 20, seed: 3 })).toEqual(a);
    expect(simulatePaths(still(50), [100, 400, 500], 4, { samples: 20, seed: 4 }).counts[0]).not.toEqual(a.counts[0]);
  });

  it('users are conserved: without inflow every path keeps its total; a state nobody left keeps its users', () => {
    const model: PathModel = { ...still(0), rows: [fixed('a', P[0]), fixed('b', P[1]), fixed('c', null)] };
    const sim = simulatePaths(model, [100, 400, 500], 5, { samples: 30, seed: 1 });
    for (let k = 0; k < 30; k++) for (let t = 0; t <= 5; t++) {
      const x = at(sim.counts[0], 5, 3, k, t);
      expect(x.reduce((a, b) => a + b, 0)).toBe(1000);
      expect(x.every((v) => Number.isInteger(v) && v >= 0)).toBe(true);
      if (t > 0) expect(x[2]).toBeGreaterThanOrEqual(at(sim.counts[0], 5, 3, k, t - 1)[2]);
    }
  });

  it('with fixed rates the mean path is the expected projection x·Pᵗ + f (plain loop; 2000 paths, 5 standard errors)', () => {
    const sim = simulatePaths(still(60), [200, 500, 300], 3, { samples: 2000, seed: 9 });
    let x = [200, 500, 300];
    for (let t = 1; t <= 3; t++) {
      x = [0, 1, 2].map((j) => x.reduce((a, xi, i) => a + xi * P[i][j], 0) + (j === 0 ? 60 : 0));
      const mean = [0, 1, 2].map((s) => Array.from({ length: 2000 }, (_, k) => at(sim.counts[0], 3, 3, k, t)[s]).reduce((a, b) => a + b, 0) / 2000);
      // the spread of one path's count is at most that of ~1000 binomial draws plus the arrivals: sd < 40
      mean.forEach((m, s) => expect(Math.abs(m - x[s])).toBeLessThan(5 * (40 / Math.sqrt(2000))));
    }
  });

  it('a campaign adds its users at its step in every path, on the same random numbers as the baseline', () => {
    const sim = simulatePaths(still(0), [100, 400, 500], 4, { samples: 25, seed: 2, edits: [{ rows: new Map(), inflow: [], campaigns: [{ state: 0, count: 300, step: 2 }] }] });
    for (let k = 0; k < 25; k++) for (let t = 0; t <= 4; t++) {
      const total = (c: Float64Array) => at(c, 4, 3, k, t).reduce((a, b) => a + b, 0);
      expect(total(sim.counts[1]) - total(sim.counts[0])).toBe(t >= 2 ? 300 : 0);
    }
  });

  it('a scenario that changes nothing (a factor of 1) gives the baseline\'s paths exactly', () => {
    const edits = [{ rows: new Map([[1, [{ j: 2, op: 'scale' as const, value: 1 }]]]), inflow: [{ op: 'scale' as const, value: 1 }], campaigns: [] }];
    const sim = simulatePaths({ ...still(40), rows: P.map((r, i) => fixed(`s${i}`, r, 0.01, 0.005)) }, [100, 400, 500], 6, { samples: 40, seed: 5, edits });
    expect(sim.counts[1]).toEqual(sim.counts[0]);
  });

  it('refuses a simulation that would hold more than MAX_CELLS numbers', () => {
    expectRefusal(() => simulatePaths(still(0), [1, 1, 1], 10000, { samples: Math.ceil(MAX_CELLS / 30000) + 1, seed: 1 }), 'INPUT_INVALID', /more than/);
  });
});

describe('editRow (a sampled row with a scenario\'s edits)', () => {
  it('agrees with reweightRow, the what-if rule, wherever that rule accepts the edits (seeded random rows)', () => {
    const rng = mulberry32(8);
    for (let trial = 0; trial < 200; trial++) {
      const raw = [rng(), rng(), rng(), rng()];
      const sum = raw.reduce((a, b) => a + b, 0);
      const p = raw.map((v) => v / sum);
      const j = Math.floor(rng() * 4);
      const edit = rng() < 0.5 ? { j, op: 'set' as const, value: rng() } : { j, op: 'scale' as const, value: Math.min(0.99 / p[j], 0.5 + rng()) };
      const pinned = edit.op === 'set' ? edit.value : p[j] * edit.value;
      expectClose(editRow(p, [edit], 0), reweightRow(p, new Map([[j, pinned]]), 0, 'a'), 1e-12);
    }
  });

  it('caps a scaled entry at 1 and scales edits that add up to more than 1 down together', () => {
    expectClose(editRow([0.6, 0.4], [{ j: 0, op: 'scale', value: 3 }], 0), [1, 0], 1e-12);
    expectClose(editRow([0.2, 0.3, 0.5], [{ j: 0, op: 'set', value: 0.9 }, { j: 1, op: 'set', value: 0.6 }], 2), [0.6, 0.4, 0], 1e-12);
  });
});

describe('sharedStep (the shock every row shares)', () => {
  it('moves a row with covariance v·(diag(m) − m·mᵀ), the multinomial covariance (sample of 20,000 seeded draws)', () => {
    // reference: the covariance of one multinomial trial's shares is diag(m) − m·mᵀ (common knowledge; e.g.
    // Johnson, Kotz & Balakrishnan, *Discrete Multivariate Distributions*, ch. 35)
    const m = [0.5, 0.3, 0.2, 0];
    const v = 1e-4;
    const rand = mulberry32(41);
    const gauss = () => Math.sqrt(-2 * Math.log(1 - rand())) * Math.cos(2 * Math.PI * rand());
    const K = 20000;
    const draws = Array.from({ length: K }, () => sharedStep(m.slice(), m, v, m.map(() => gauss())));
    for (let i = 0; i < 4; i++) {
      for (let j = 0; j < 4; j++) {
        const cov = draws.reduce((a, d) => a + (d[i] - m[i]) * (d[j] - m[j]), 0) / K;
        const want = v * ((i === j ? m[i] : 0) - m[i] * m[j]);
        expect(Math.abs(cov - want)).toBeLessThan(0.05 * v); // sampling error of a covariance of 20,000 draws: about 0.01·v
      }
    }
    expect(draws.every((d) => d[3] === 0 && Math.abs(d.reduce((a, b) => a + b, 0) - 1) < 1e-12)).toBe(true);
  });

  it('leaves the row alone with no shock or no variance', () => {
    expect(sharedStep([0.6, 0.4], [0.6, 0.4], 0.01, null)).toEqual([0.6, 0.4]);
    expect(sharedStep([0.6, 0.4], [0.6, 0.4], 0, [1, -1])).toEqual([0.6, 0.4]);
  });
});
