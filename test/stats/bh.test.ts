import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { TidemarkError } from '../../src/errors.js';
import { bhAdjust, bhRejected } from '../../src/stats/bh.js';

// Benjamini & Hochberg (1995), JRSS B 57:289–300, §4: fifteen p-values from a clinical study; at
// q = 0.05 the procedure rejects the four smallest. The p-values are quoted from memory; the adjusted
// values and the count of four were confirmed with scipy 1.17.1:
//   from scipy.stats import false_discovery_control; false_discovery_control(p, method='bh')
const BH1995 = [0.0001, 0.0004, 0.0019, 0.0095, 0.0201, 0.0278, 0.0298, 0.0344, 0.0459, 0.324, 0.4262, 0.5719, 0.6528, 0.759, 1.0];
const BH1995_ADJ = [0.0015, 0.003, 0.0095, 0.035625, 0.0603, 0.06385714285714286, 0.06385714285714286, 0.0645, 0.0765, 0.486, 0.5811818181818181, 0.7148749999999999, 0.7532307692307693, 0.8132142857142857, 1.0];

describe('bhAdjust', () => {
  it('matches scipy false_discovery_control on the Benjamini & Hochberg (1995) example', () => {
    bhAdjust(BH1995).forEach((v, i) => expect(v).toBeCloseTo(BH1995_ADJ[i], 14));
  });

  it('keeps the input order, with ties (scipy 1.17.1 reference on unsorted values)', () => {
    // rng = np.random.default_rng(11); q = rng.uniform(0, 0.2, 12).round(5); q[3] = q[7]
    const p = [0.02571, 0.09986, 0.1203, 0.02595, 0.02959, 0.18564, 0.01408, 0.02595, 0.18967, 0.12438, 0.0738, 0.10228];
    const expected = [0.071016, 0.149256, 0.149256, 0.071016, 0.071016, 0.18967, 0.071016, 0.071016, 0.18967, 0.149256, 0.1476, 0.149256];
    bhAdjust(p).forEach((v, i) => expect(v).toBeCloseTo(expected[i], 14));
  });

  it('is monotone in p and never below the raw p (seeded property)', () => {
    fc.assert(
      fc.property(fc.array(fc.double({ min: 0, max: 1, noNaN: true }), { minLength: 1, maxLength: 40 }), (p) => {
        const adj = bhAdjust(p);
        p.forEach((pi, i) => {
          expect(adj[i]).toBeGreaterThanOrEqual(pi);
          expect(adj[i]).toBeLessThanOrEqual(1);
          p.forEach((pj, j) => {
            if (pi <= pj) expect(adj[i]).toBeLessThanOrEqual(adj[j]);
          });
        });
      }),
      { seed: 1995, numRuns: 300 },
    );
  });

  it('gives [] for an empty family and throws for a p outside [0, 1]', () => {
    expect(bhAdjust([])).toEqual([]);
    expect(() => bhAdjust([0.2, 1.5])).toThrow(TidemarkError);
    expect(() => bhAdjust([Number.NaN])).toThrow(TidemarkError);
  });
});

describe('bhRejected', () => {
  it('rejects the four smallest of the Benjamini & Hochberg (1995) example at q = 0.05', () => {
    const r = bhRejected(BH1995, 0.05);
    expect(r.filter(Boolean)).toHaveLength(4);
    expect(r.slice(0, 4)).toEqual([true, true, true, true]);
  });

  it('rejects exactly where the adjusted p is ≤ q (seeded property)', () => {
    fc.assert(
      fc.property(fc.array(fc.double({ min: 0, max: 0.3, noNaN: true }), { maxLength: 30 }), fc.double({ min: 0.001, max: 0.3, noNaN: true }), (p, q) => {
        const adj = bhAdjust(p);
        expect(bhRejected(p, q)).toEqual(adj.map((a) => a <= q));
      }),
      { seed: 57, numRuns: 300 },
    );
  });

  it('throws for q outside (0, 1]', () => {
    expect(() => bhRejected([0.1], 0)).toThrow(TidemarkError);
  });
});
