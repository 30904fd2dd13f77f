import { describe, expect, it } from 'vitest';
import { TidemarkError } from '../../src/errors.js';
import { chiSquareSf } from '../../src/stats/chisq.js';

const rel = (a: number, b: number): number => Math.abs(a - b) / Math.abs(b);

describe('chiSquareSf', () => {
  it('Freireich et al. (1963) log-rank: χ² = 16.7929 on 1 df → p = 4.1688e-05 (published-values.md)', () => {
    expect(chiSquareSf(16.7929, 1)).toBeCloseTo(4.1688e-5, 8);
  });

  it('the 5% critical value of χ²(1), 3.841458820694124, has tail 0.05 (standard table, scipy chi2.ppf)', () => {
    expect(chiSquareSf(3.841458820694124, 1)).toBeCloseTo(0.05, 14);
  });

  // scipy 1.17.1: from scipy.stats import chi2; chi2.sf(x, df)
  it.each([
    [16.792940989216536, 1, 4.1688091093345355e-5],
    [12.68770281604373, 2, 0.0017575202575144586],
    [0.5, 1, 0.47950012218695337],
    [3.0, 4, 0.5578254003710748],
    [30, 10, 0.000856641210775301],
    [100, 3, 1.5541594313896026e-21],
    [1e-3, 2, 0.9995001249791693],
    [250, 200, 0.009379131668826098],
  ])('χ²(%s; df %s) tail matches scipy to 1e-12 relative', (x, df, p) => {
    expect(rel(chiSquareSf(x, df), p)).toBeLessThan(1e-12);
  });

  it('df = 2 is the exponential tail e^(−x/2) (exact identity)', () => {
    for (const x of [0.1, 1, 7, 40]) expect(rel(chiSquareSf(x, 2), Math.exp(-x / 2))).toBeLessThan(1e-13);
  });

  it('is 1 at and below 0, and rejects a bad df', () => {
    expect(chiSquareSf(0, 3)).toBe(1);
    expect(chiSquareSf(-1e-17, 1)).toBe(1);
    expect(() => chiSquareSf(1, 0)).toThrow(TidemarkError);
    expect(() => chiSquareSf(Number.NaN, 1)).toThrow(TidemarkError);
  });
});
