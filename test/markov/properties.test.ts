/** Property tests (fast-check, seeded): invariants that must hold for every chain. */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { projectionBands } from '../../src/markov/bands.js';
import { communicatingClasses } from '../../src/markov/classes.js';
import { vecMat } from '../../src/numerics/linalg.js';
import { project } from '../../src/markov/project.js';
import { parseScenario } from '../../src/markov/scenario.js';
import { stationary } from '../../src/markov/stationary.js';
import { applyScenario } from '../../src/markov/whatif.js';
import { RUN, countsVector, names, positiveChain, sparseChain } from './arbitraries.js';
import { expectClose } from './helpers.js';

const withStart = (chain: fc.Arbitrary<number[][]>) =>
  chain.chain((p) => fc.tuple(fc.constant(p), countsVector(p.length), countsVector(p.length, 50), fc.integer({ min: 0, max: 10 })));

describe('properties', () => {
  it('shares sum to 1 at every step whenever the total is positive', () => {
    fc.assert(
      fc.property(withStart(sparseChain), ([p, x0, f, h]) => {
        const r = project(p, x0, f, h);
        r.shares.forEach((row, t) => {
          if (r.totals[t] > 0) expectClose(row.reduce((a, b) => a + b, 0), 1, 1e-9);
        });
      }),
      RUN,
    );
  });

  it('zero inflow conserves the total; inflow f adds Σf each step', () => {
    fc.assert(
      fc.property(withStart(sparseChain), ([p, x0, f, h]) => {
        const total0 = x0.reduce((a, b) => a + b, 0);
        const closed = project(p, x0, p.map(() => 0), h);
        closed.totals.forEach((v) => expectClose(v, total0, 1e-9 * Math.max(1, total0)));
        const open = project(p, x0, f, h);
        const fs = f.reduce((a, b) => a + b, 0);
        open.totals.forEach((v, t) => expectClose(v, total0 + t * fs, 1e-9 * Math.max(1, total0 + h * fs)));
      }),
      RUN,
    );
  });

  it('πP = π and Σπ = 1 whenever the stationary distribution is unique (or the cycle average when periodic)', () => {
    fc.assert(
      fc.property(fc.oneof(positiveChain, sparseChain), (p) => {
        const s = stationary({ states: names(p.length), matrix: p });
        const pi = s.kind === 'unique' ? s.distribution : s.kind === 'periodic' ? s.timeAverage : s.closed[0].distribution;
        expectClose(vecMat(pi, p), pi, 1e-9);
        expectClose(pi.reduce((a, b) => a + b, 0), 1, 1e-9);
        expect(pi.every((x) => x >= 0)).toBe(true);
      }),
      RUN,
    );
  });

  it('classes partition the states; a closed class has no edge leaving it', () => {
    fc.assert(
      fc.property(sparseChain, (p) => {
        const cls = communicatingClasses(p);
        expect(cls.flatMap((c) => c.states).sort((a, b) => a - b)).toEqual(p.map((_, i) => i));
        for (const c of cls.filter((k) => k.closed)) {
          for (const i of c.states) p[i].forEach((v, j) => v > 0 && expect(c.states).toContain(j));
        }
      }),
      RUN,
    );
  });

  it('the band median lies inside the bands, and a seeded run reproduces exactly', () => {
    const arb = fc.integer({ min: 2, max: 5 }).chain((n) =>
      fc.tuple(
        fc.array(fc.array(fc.integer({ min: 0, max: 40 }), { minLength: n, maxLength: n }), { minLength: n, maxLength: n }),
        countsVector(n, 200),
        countsVector(n, 20),
        fc.integer({ min: 0, max: 0xffffffff }),
      ),
    );
    fc.assert(
      fc.property(arb, ([counts, x0, f, seed]) => {
        const opts = { samples: 40, seed };
        const b = projectionBands(counts, x0, f, 4, opts);
        for (let t = 0; t <= 4; t++) {
          for (let s = 0; s < counts.length; s++) {
            expect(b.counts[0][t][s]).toBeLessThanOrEqual(b.counts[1][t][s]);
            expect(b.counts[1][t][s]).toBeLessThanOrEqual(b.counts[2][t][s]);
            expect(b.shares[0][t][s]).toBeLessThanOrEqual(b.shares[1][t][s]);
            expect(b.shares[1][t][s]).toBeLessThanOrEqual(b.shares[2][t][s]);
          }
        }
        expect(projectionBands(counts, x0, f, 4, opts)).toEqual(b);
      }),
      { ...RUN, numRuns: 30 },
    );
  });

  it('a what-if set keeps every row stochastic and the set entry as given', () => {
    const arb = positiveChain.chain((p) =>
      fc.tuple(fc.constant(p), fc.integer({ min: 0, max: p.length - 1 }), fc.integer({ min: 0, max: p.length - 1 }), fc.double({ min: 0, max: 1, noNaN: true })),
    );
    fc.assert(
      fc.property(arb, ([p, i, j, v]) => {
        const s = applyScenario({ states: names(p.length), matrix: p, inflow: p.map(() => 1) }, parseScenario([`s${i}->s${j}=${v}`]));
        s.matrix.forEach((row) => expectClose(row.reduce((a, b) => a + b, 0), 1, 1e-9));
        expect(s.matrix[i][j]).toBe(v);
      }),
      RUN,
    );
  });
});
