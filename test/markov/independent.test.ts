/**
 * Independent checks: on seeded random matrices the module has never seen, its results agree with
 * ml-matrix (a separate linear-algebra library: eigen-decomposition, LU solve, inverse) to 1e-6.
 */
import fc from 'fast-check';
import { EigenvalueDecomposition, Matrix, inverse, solve } from 'ml-matrix';
import { describe, expect, it } from 'vitest';
import { meanFirstPassage } from '../../src/markov/ergodic.js';
import { firstPassage } from '../../src/markov/passage.js';
import { project } from '../../src/markov/project.js';
import { stationary } from '../../src/markov/stationary.js';
import { steadyCounts } from '../../src/markov/steady.js';
import { RUN, countsVector, names, positiveChain, rawMatrix, rowNormalise } from './arbitraries.js';
import { expectClose } from './helpers.js';

const TOL = 1e-6;

/** Stationary vector from the eigenvector of Pᵀ whose eigenvalue is closest to 1. */
function eigenStationary(p: number[][]): number[] {
  const evd = new EigenvalueDecomposition(new Matrix(p).transpose());
  const lambdas = evd.realEigenvalues;
  let k = 0;
  lambdas.forEach((l, i) => {
    if (Math.abs(l - 1) < Math.abs(lambdas[k] - 1)) k = i;
  });
  const v = evd.eigenvectorMatrix.getColumn(k);
  const s = v.reduce((a, b) => a + b, 0);
  return v.map((x) => x / s);
}

describe('independent check against ml-matrix (seeded random matrices)', () => {
  it('stationary distribution = normalised eigenvector of Pᵀ for eigenvalue 1', () => {
    fc.assert(
      fc.property(positiveChain, (p) => {
        const s = stationary({ states: names(p.length), matrix: p });
        expect(s.kind).toBe('unique');
        if (s.kind === 'unique') expectClose(s.distribution, eigenStationary(p), TOL);
      }),
      RUN,
    );
  });

  it('projection with inflow = x₀·Pᴴ + f·Σ_{k<H} Pᵏ computed with ml-matrix products', () => {
    const arb = positiveChain.chain((p) => fc.tuple(fc.constant(p), countsVector(p.length), countsVector(p.length, 50), fc.integer({ min: 1, max: 12 })));
    fc.assert(
      fc.property(arb, ([p, x0, f, h]) => {
        const P = new Matrix(p);
        let power = Matrix.eye(p.length);
        let sum = Matrix.zeros(p.length, p.length);
        for (let k = 0; k < h; k++) {
          sum = sum.add(power);
          power = power.mmul(P);
        }
        const expected = new Matrix([x0]).mmul(power).add(new Matrix([f]).mmul(sum)).getRow(0);
        const got = project(p, x0, f, h).counts[h];
        const scale = Math.max(1, ...expected);
        expectClose(got.map((v) => v / scale), expected.map((v) => v / scale), TOL);
      }),
      RUN,
    );
  });

  it('expected time to a target: t = (I − Q)⁻¹·1 and N = (I − Q)⁻¹ by ml-matrix solve and inverse', () => {
    const arb = positiveChain.chain((p) => fc.tuple(fc.constant(p), fc.integer({ min: 0, max: p.length - 1 })));
    fc.assert(
      fc.property(arb, ([p, target]) => {
        const rest = p.map((_, i) => i).filter((i) => i !== target);
        const iq = new Matrix(rest.map((i) => rest.map((j) => (i === j ? 1 : 0) - p[i][j])));
        const t = solve(iq, Matrix.columnVector(rest.map(() => 1))).getColumn(0);
        const r = firstPassage({ states: names(p.length), matrix: p }, `s${target}`);
        expectClose(rest.map((i) => r.expected[i]), t, TOL * Math.max(1, ...t));
        expectClose(r.fundamental, inverse(iq).to2DArray(), TOL * Math.max(1, ...t));
      }),
      RUN,
    );
  });

  it('mean first passage matrix: Z from ml-matrix inverse, and each column equals the single-target passage times', () => {
    fc.assert(
      fc.property(positiveChain, (p) => {
        const n = p.length;
        const chain = { states: names(n), matrix: p };
        const r = meanFirstPassage(chain);
        const w = eigenStationary(p);
        const z = inverse(new Matrix(p.map((row, i) => row.map((v, j) => (i === j ? 1 : 0) - v + w[j])))).to2DArray();
        const scale = Math.max(1, ...r.passage.flat());
        expectClose(r.fundamental, z, TOL);
        for (let j = 0; j < n; j++) {
          const t = firstPassage(chain, `s${j}`).expected as number[];
          expectClose(r.passage.map((row) => row[j] / scale), t.map((v) => v / scale), TOL);
        }
        expectClose(r.recurrence, w.map((x) => 1 / x), TOL * Math.max(...w.map((x) => 1 / x)));
      }),
      RUN,
    );
  });

  it('steady counts of transient states = f_T·(I − Q)⁻¹ by ml-matrix', () => {
    // m transient states leak into a positive closed block of k states.
    const arb = fc
      .tuple(fc.integer({ min: 1, max: 4 }), fc.integer({ min: 1, max: 4 }))
      .chain(([m, k]) => fc.tuple(fc.constant(m), rawMatrix(m + k, 0.01), countsVector(m + k, 100)));
    fc.assert(
      fc.property(arb, ([m, raw, f]) => {
        const p = rowNormalise(raw.map((row, i) => row.map((v, j) => (i >= m && j < m ? 0 : v))));
        const r = steadyCounts({ states: names(p.length), matrix: p }, f);
        const t = Array.from({ length: m }, (_, i) => i);
        const iq = new Matrix(t.map((i) => t.map((j) => (i === j ? 1 : 0) - p[i][j])));
        const expected = new Matrix([t.map((i) => f[i])]).mmul(inverse(iq)).getRow(0);
        const scale = Math.max(1, ...expected);
        expectClose(r.transient.slice(0, m).map((v) => (v as number) / scale), expected.map((v) => v / scale), TOL);
        expect(r.transient.slice(m).every((v) => v === null)).toBe(true);
        // Everyone who arrives ends up in the closed block: growth = total inflow.
        expectClose(r.closed[0].growthPerPeriod / Math.max(1, ...f), f.reduce((a, b) => a + b, 0) / Math.max(1, ...f), TOL);
      }),
      RUN,
    );
  });
});
