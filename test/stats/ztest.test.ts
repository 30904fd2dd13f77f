import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { twoProportionZTest } from '../../src/stats/ztest.js';

describe('twoProportionZTest (pooled, two-sided)', () => {
  // z² is Pearson's X² for the 2×2 table without continuity correction. Reference values computed
  // with scipy 1.17.1:
  //   from scipy.stats import chi2_contingency; c = chi2_contingency(np.array(tab), correction=False)
  //   sqrt(c[0]), c[1]       # tab = [[x1, n1 − x1], [x2, n2 − x2]]
  it.each([
    [56, 70, 48, 80, 2.650171951258532, 0.008045081368196585],
    [30, 50, 18, 50, 2.4019223070763074, 0.01630917187775496],
    [120, 200, 95, 200, 2.507061052819501, 0.012173968206197643],
    [5, 50, 0, 50, 2.2941573387056176, 0.021781462791119595],
  ])('%s/%s vs %s/%s: z = %s, p = %s (scipy chi2_contingency)', (x1, n1, x2, n2, z, p) => {
    const r = twoProportionZTest(x1, n1, x2, n2);
    expect(r.z).toBeCloseTo(z, 12);
    expect(r.p).toBeCloseTo(p, 14);
    expect(r.difference).toBeCloseTo(x1 / n1 - x2 / n2, 15);
    expect(r.pooled).toBeCloseTo((x1 + x2) / (n1 + n2), 15);
  });

  it('is antisymmetric in the samples (seeded property)', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 300 }), fc.integer({ min: 1, max: 300 }), fc.double({ min: 0, max: 1, noNaN: true }), fc.double({ min: 0, max: 1, noNaN: true }), (n1, n2, f1, f2) => {
        const x1 = Math.round(f1 * n1);
        const x2 = Math.round(f2 * n2);
        const a = twoProportionZTest(x1, n1, x2, n2);
        const b = twoProportionZTest(x2, n2, x1, n1);
        expect(b.z).toBeCloseTo(-a.z, 12);
        expect(b.p).toBeCloseTo(a.p, 14);
        expect(a.p).toBeGreaterThanOrEqual(0);
        expect(a.p).toBeLessThanOrEqual(1);
      }),
      { seed: 7, numRuns: 300 },
    );
  });

  it('defines z = 0, p = 1 when both samples are all 0 or all 1 (pooled SE 0)', () => {
    expect(twoProportionZTest(0, 10, 0, 20)).toMatchObject({ z: 0, p: 1, se: 0 });
    expect(twoProportionZTest(10, 10, 20, 20)).toMatchObject({ z: 0, p: 1, se: 0 });
  });

  it('throws NOT_ENOUGH_DATA for an empty sample', () => {
    expect(() => twoProportionZTest(0, 0, 1, 5)).toThrow(expect.objectContaining({ code: 'NOT_ENOUGH_DATA' }));
  });
});
