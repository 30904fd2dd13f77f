import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { TidemarkError } from '../../src/errors.js';
import { regularizedGammaP, regularizedGammaQ } from '../../src/stats/gammaInc.js';
import { lgamma, logBeta } from '../../src/stats/lgamma.js';
import { normalCdf, normalQuantile, normalSf, zForConfidence } from '../../src/stats/normal.js';

const rel = (a: number, b: number): number => Math.abs(a - b) / Math.max(Math.abs(b), 1e-300);

// Reference values computed with scipy 1.17.1 (scipy.special.ndtri / ndtr / gammaln / gammaincc):
//   from scipy.special import ndtri, ndtr, gammaln, gammaincc
//   [float(ndtri(p)) for p in ps]; [float(ndtr(x)) for x in xs]; ...
describe('normalQuantile(p)', () => {
  const cases: [number, number][] = [
    [1e-300, -37.0470962993612],
    [1e-20, -9.262340089798409],
    [1e-10, -6.361340902404056],
    [1e-5, -4.264890793922825],
    [0.001, -3.090232306167813],
    [0.02425, -1.972961051311885], // the switch point between Acklam's regions
    [0.025, -1.9599639845400545],
    [0.1, -1.2815515655446004],
    [0.3, -0.5244005127080409],
    [0.5, 0],
    [0.7, 0.5244005127080407],
    [0.975, 1.959963984540054],
    [0.999, 3.090232306167813],
    [1 - 1e-10, 6.361340889697422],
  ];
  it.each(cases)('Φ⁻¹(%s) matches scipy ndtri to 1e-13 relative', (p, expected) => {
    const got = normalQuantile(p);
    if (expected === 0) expect(Math.abs(got)).toBeLessThan(1e-15);
    else expect(rel(got, expected)).toBeLessThan(1e-13);
  });

  it('is ±Infinity at 0 and 1 and throws outside [0, 1]', () => {
    expect(normalQuantile(0)).toBe(-Infinity);
    expect(normalQuantile(1)).toBe(Infinity);
    expect(() => normalQuantile(1.5)).toThrow(TidemarkError);
    expect(() => normalQuantile(Number.NaN)).toThrow(TidemarkError);
  });

  it('inverts normalCdf (seeded property)', () => {
    fc.assert(
      fc.property(fc.double({ min: 1e-12, max: 1 - 1e-12, noNaN: true }), (p) => {
        expect(Math.abs(normalCdf(normalQuantile(p)) - p)).toBeLessThan(1e-14 + 1e-12 * p);
      }),
      { seed: 20261201, numRuns: 500 },
    );
  });

  it('zForConfidence(0.95) is 1.959963984540054 (textbook value, scipy ndtri(0.975))', () => {
    expect(rel(zForConfidence(0.95), 1.959963984540054)).toBeLessThan(1e-14);
    expect(() => zForConfidence(1)).toThrow(TidemarkError);
  });
});

describe('normalCdf / normalSf', () => {
  const xs = [-10, -5, -1, 0, 0.5, 1, 2, 5, 10, 30];
  const cdf = [7.61985302416047e-24, 2.866515718791933e-7, 0.15865525393145707, 0.5, 0.6914624612740131, 0.8413447460685429, 0.9772498680518208, 0.9999997133484281, 1, 1];
  const sf = [1, 0.9999997133484281, 0.8413447460685429, 0.5, 0.3085375387259869, 0.15865525393145707, 0.022750131948179195, 2.866515718791933e-7, 7.61985302416047e-24, 4.906713927147908e-198];
  it.each(xs.map((x, i) => [x, cdf[i], sf[i]]))('at %s match scipy ndtr to 1e-13 relative', (x, c, s) => {
    expect(rel(normalCdf(x), c)).toBeLessThan(1e-13);
    expect(rel(normalSf(x), s)).toBeLessThan(1e-13);
  });
});

describe('lgamma (Lanczos)', () => {
  // scipy 1.17.1 gammaln; ln Γ(1/2) = ln √π and Γ(n) = (n − 1)! are exact identities.
  const cases: [number, number][] = [
    [1e-10, 23.025850929882733],
    [0.1, 2.252712651734206],
    [0.5, 0.5723649429247001],
    [1.5, -0.12078223763524526],
    [3, Math.log(2)],
    [10, Math.log(362880)],
    [100, 359.1342053695754],
    [171.5, 709.1431630309283],
    [1000, 5905.220423209181],
    [1e6, 12815504.569147611],
  ];
  it.each(cases)('lgamma(%s) matches to 1e-13 relative', (x, expected) => {
    expect(rel(lgamma(x), expected)).toBeLessThan(1e-13);
  });
  it('is 0 at 1 and 2 to 1e-14 absolute', () => {
    expect(Math.abs(lgamma(1))).toBeLessThan(1e-14);
    expect(Math.abs(lgamma(2))).toBeLessThan(1e-14);
  });
  it('logBeta(2, 3) = ln(1/12) (B(2,3) = 1!2!/4!)', () => {
    expect(logBeta(2, 3)).toBeCloseTo(Math.log(1 / 12), 13);
  });
  it('throws for x ≤ 0', () => {
    expect(() => lgamma(0)).toThrow(TidemarkError);
    expect(() => lgamma(-1)).toThrow(TidemarkError);
  });
});

describe('regularised incomplete gamma', () => {
  // scipy 1.17.1 gammaincc(a, x)
  const cases: [number, number, number][] = [
    [0.5, 8.39645, 4.1688991586082305e-5],
    [1, 1, 0.36787944117144245],
    [3, 20, 4.5551495055892125e-7],
    [10, 5, 0.9681719426937951],
    [50, 40, 0.9296649333406051],
    [0.5, 50, 1.5239706048320995e-23],
    [100, 150, 5.924540335483916e-6],
  ];
  it.each(cases)('Q(%s, %s) matches scipy gammaincc to 1e-12 relative', (a, x, q) => {
    expect(rel(regularizedGammaQ(a, x), q)).toBeLessThan(1e-12);
  });
  it('P(1, x) = 1 − e^−x (exact identity) and P + Q = 1', () => {
    for (const x of [0.01, 0.5, 1, 3, 12]) {
      expect(regularizedGammaP(1, x)).toBeCloseTo(-Math.expm1(-x), 14);
      expect(regularizedGammaP(2.5, x) + regularizedGammaQ(2.5, x)).toBeCloseTo(1, 14);
    }
  });
  it('handles the ends and rejects bad arguments', () => {
    expect(regularizedGammaP(2, 0)).toBe(0);
    expect(regularizedGammaQ(2, Infinity)).toBe(0);
    expect(() => regularizedGammaQ(0, 1)).toThrow(TidemarkError);
    expect(() => regularizedGammaP(1, -1)).toThrow(TidemarkError);
  });
});
