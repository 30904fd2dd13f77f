import { Matrix, solve } from 'ml-matrix';
import { describe, expect, it } from 'vitest';
import type { DurationRow } from '../../src/flows/types.js';
import { chiSquareSf } from '../../src/stats/chisq.js';
import { logRank } from '../../src/survival/logRank.js';
import { mulberry32, randInt } from '../stats/prng.js';
import { FREIREICH } from './freireich.js';

const fromArrays = (group: string, dur: number[], obs: number[]): DurationRow[] =>
  dur.map((d, i) => ({ group, duration: d, observed: obs[i] as 0 | 1, users: 1 }));

// Seeded data, generated with numpy (scipy 1.17.1 for the tests):
//   rng = np.random.default_rng(20261201); for scale in (6.0, 9.0, 4.0): n = 40
//   life = ceil(rng.exponential(scale, n)); cens = rng.integers(1, 16, n); dur = minimum(life, cens); obs = life <= cens
const A = fromArrays('a',
  [6, 1, 7, 10, 10, 2, 1, 1, 1, 7, 3, 2, 3, 3, 6, 5, 7, 3, 5, 2, 5, 6, 4, 9, 1, 6, 8, 1, 7, 1, 6, 5, 8, 7, 1, 1, 2, 2, 3, 1],
  [1, 1, 1, 0, 1, 1, 0, 0, 1, 0, 1, 1, 1, 1, 1, 1, 1, 1, 0, 1, 1, 0, 1, 1, 1, 1, 1, 0, 1, 1, 1, 1, 0, 0, 1, 0, 1, 1, 1, 0]);
const B = fromArrays('b',
  [4, 7, 11, 4, 14, 13, 3, 7, 5, 3, 6, 2, 7, 6, 10, 12, 9, 2, 2, 2, 2, 7, 6, 2, 10, 3, 4, 2, 1, 4, 5, 7, 3, 5, 6, 1, 12, 2, 1, 10],
  [0, 0, 0, 1, 0, 0, 1, 0, 0, 0, 1, 1, 1, 1, 1, 0, 0, 1, 1, 0, 1, 0, 1, 1, 1, 1, 1, 1, 1, 0, 1, 0, 1, 1, 0, 0, 0, 1, 1, 0]);
const C = fromArrays('c',
  [1, 2, 13, 4, 2, 1, 4, 8, 2, 3, 1, 4, 1, 3, 3, 7, 6, 1, 4, 8, 4, 2, 1, 4, 1, 2, 1, 1, 1, 1, 2, 4, 6, 1, 4, 5, 1, 1, 3, 1],
  [1, 1, 0, 0, 1, 1, 1, 1, 1, 1, 1, 1, 1, 0, 1, 1, 1, 0, 0, 1, 1, 1, 0, 1, 0, 1, 1, 0, 1, 0, 1, 1, 0, 1, 1, 1, 1, 1, 1, 1]);

describe('logRank — published and scipy values', () => {
  it('Freireich et al. (1963): χ² 16.7929, p 4.1688e-05, O₁ = 9, E₁ = 19.2505 (published-values.md)', () => {
    const r = logRank(FREIREICH);
    expect(r.df).toBe(1);
    expect(r.chiSquare).toBeCloseTo(16.7929, 4);
    expect(r.p).toBeCloseTo(4.1688e-5, 8);
    expect(r.groups[0]).toMatchObject({ group: '6-MP', observed: 9, users: 21 });
    expect(r.groups[0].expected).toBeCloseTo(19.2505, 4);
    expect(r.groups[1].observed).toBe(21);
    expect(r.groups[0].expected + r.groups[1].expected).toBeCloseTo(30, 12);
  });

  it('two seeded groups: matches scipy.stats.logrank (statistic² = 4.148985332100247, p = 0.04165948048834248)', () => {
    const r = logRank([...A, ...B]);
    expect(r.chiSquare).toBeCloseTo(4.148985332100247, 11);
    expect(r.p).toBeCloseTo(0.04165948048834248, 12);
  });

  it('three seeded groups: matches a numpy computation with the full covariance matrix (χ² 12.68770281604373, df 2)', () => {
    // numpy: per event time, V += d(n − d)/(n − 1)·(diag(nⱼ/n) − outer(nⱼ/n, nⱼ/n)); χ² = u·solve(V[:2,:2], u)
    // with u = (O − E)[:2]; O = (29, 22, 30), E = (27.25010117, 34.36118004, 19.38871879).
    const r = logRank([...A, ...B, ...C]);
    expect(r.df).toBe(2);
    expect(r.chiSquare).toBeCloseTo(12.68770281604373, 10);
    expect(r.p).toBeCloseTo(0.0017575202575144586, 12);
    expect(r.groups.map((g) => g.observed)).toEqual([29, 22, 30]);
    expect(r.groups[1].expected).toBeCloseTo(34.36118004, 7);
  });
});

/** Independent per-individual log-rank with ml-matrix, for k groups. */
function naiveLogRank(individuals: { g: number; t: number; died: boolean }[], k: number): number {
  const times = [...new Set(individuals.filter((x) => x.died).map((x) => x.t))].sort((a, b) => a - b);
  const u = new Array<number>(k).fill(0);
  const V = Matrix.zeros(k, k);
  for (const t of times) {
    const risk = individuals.filter((x) => x.t >= t);
    const n = risk.length;
    const d = risk.filter((x) => x.t === t && x.died).length;
    for (let j = 0; j < k; j++) {
      const nj = risk.filter((x) => x.g === j).length;
      const dj = risk.filter((x) => x.g === j && x.t === t && x.died).length;
      u[j] += dj - (d * nj) / n;
      if (n < 2) continue;
      for (let l = 0; l < k; l++) {
        const nl = risk.filter((x) => x.g === l).length;
        V.set(j, l, V.get(j, l) + ((d * (n - d)) / (n - 1)) * (nj / n) * ((j === l ? 1 : 0) - nl / n));
      }
    }
  }
  const head = u.slice(0, k - 1);
  const sub = V.subMatrix(0, k - 2, 0, k - 2);
  const x = solve(sub, Matrix.columnVector(head)).to1DArray();
  return head.reduce((s, v, i) => s + v * x[i], 0);
}

describe('logRank — against an independent per-individual implementation (seeded)', () => {
  it('agrees on random aggregated data with 2 to 5 groups', () => {
    const rand = mulberry32(1966);
    let compared = 0;
    for (let trial = 0; trial < 25; trial++) {
      const k = randInt(rand, 2, 5);
      const rows: DurationRow[] = [];
      for (let g = 0; g < k; g++) {
        for (let i = 0; i < randInt(rand, 3, 12); i++) {
          rows.push({ group: `g${g}`, duration: randInt(rand, 1, 10), observed: rand() < 0.7 ? 1 : 0, users: randInt(rand, 1, 4) });
        }
      }
      const individuals = rows.flatMap((r) => Array.from({ length: r.users }, () => ({ g: Number(r.group.slice(1)), t: r.duration, died: r.observed === 1 })));
      const r = logRank(rows);
      if (r.excluded.length > 0) continue;
      const chi = naiveLogRank(individuals, k);
      expect(r.chiSquare).toBeCloseTo(chi, 9);
      expect(r.df).toBe(k - 1);
      expect(r.p).toBeCloseTo(chiSquareSf(chi, k - 1), 12);
      compared++;
    }
    expect(compared).toBeGreaterThanOrEqual(20);
  });
});

describe('logRank — edge cases', () => {
  it('one group: NOT_ENOUGH_DATA', () => {
    expect(() => logRank(A)).toThrow(expect.objectContaining({ code: 'NOT_ENOUGH_DATA' }));
    expect(() => logRank([])).toThrow(expect.objectContaining({ code: 'NOT_ENOUGH_DATA' }));
  });

  it('all censored: NOT_ENOUGH_DATA', () => {
    const rows: DurationRow[] = [
      { group: 'x', duration: 3, observed: 0, users: 5 },
      { group: 'y', duration: 4, observed: 0, users: 5 },
    ];
    expect(() => logRank(rows)).toThrow(expect.objectContaining({ code: 'NOT_ENOUGH_DATA' }));
  });

  it('identical groups give χ² = 0 and p = 1', () => {
    const r = logRank([...A, ...A.map((x) => ({ ...x, group: 'copy' }))]);
    expect(r.chiSquare).toBeCloseTo(0, 12);
    expect(r.p).toBeCloseTo(1, 10);
  });

  it('leaves out a group never at risk at an event time', () => {
    // Group "late" is censored at 1, before the first event at 2.
    const rows: DurationRow[] = [
      { group: 'x', duration: 2, observed: 1, users: 3 },
      { group: 'y', duration: 5, observed: 1, users: 2 },
      { group: 'y', duration: 2, observed: 0, users: 1 },
      { group: 'late', duration: 1, observed: 0, users: 4 },
    ];
    const r = logRank(rows);
    expect(r.excluded).toEqual(['late']);
    expect(r.df).toBe(1);
    expect(r.groups.map((g) => g.group)).toEqual(['x', 'y']);
  });
});
