import { describe, expect, it } from 'vitest';
import { binomial, multinomial, NORMAL_ABOVE } from '../../src/numerics/binomial.js';
import { mulberry32 } from '../../src/numerics/random.js';
import { chiSquareSf } from '../../src/stats/chisq.js';

const draws = (n: number, f: () => number) => Array.from({ length: n }, f);
function moments(xs: number[]): { mean: number; variance: number } {
  const mean = xs.reduce((a, b) => a + b, 0) / xs.length;
  return { mean, variance: xs.reduce((s, x) => s + (x - mean) ** 2, 0) / (xs.length - 1) };
}

/** Exact Binomial(n, p) probabilities by the recurrence P(k+1) = P(k)·(n−k)/(k+1)·p/(1−p), written here independently. */
function pmf(n: number, p: number): number[] {
  const out = [Math.pow(1 - p, n)];
  for (let k = 0; k < n; k++) out.push((out[k] * (n - k) * p) / ((k + 1) * (1 - p)));
  return out;
}

/**
 * Pearson's goodness-of-fit statistic of draws against exact probabilities, cells merged until each
 * expects at least 5 (the usual rule, e.g. Cochran 1954); returns its p-value.
 */
function goodnessOfFit(xs: number[], probs: number[]): number {
  const counts = new Array<number>(probs.length).fill(0);
  for (const x of xs) counts[x]++;
  const cells: { o: number; e: number }[] = [];
  let o = 0, e = 0;
  probs.forEach((p, k) => {
    o += counts[k];
    e += p * xs.length;
    if (e >= 5) {
      cells.push({ o, e });
      o = 0;
      e = 0;
    }
  });
  if (cells.length && e > 0) { cells[cells.length - 1].o += o; cells[cells.length - 1].e += e; }
  const stat = cells.reduce((s, c) => s + (c.o - c.e) ** 2 / c.e, 0);
  return chiSquareSf(stat, cells.length - 1);
}

describe('binomial', () => {
  // mean n·p and variance n·p·(1 − p) (definition); tolerances are 5 standard errors of the mean
  it.each([
    [10, 0.3, 'inversion'],
    [40, 0.8, 'p > 1/2 drawn as n − Binomial(n, 1 − p)'],
    [200, 0.4, 'Beta split (mean 80)'],
    [3000, 0.02, 'Beta split then inversion (mean 60)'],
    [5000, 0.5, 'normal approximation (variance 1250)'],
  ])('n = %i, p = %f (%s): mean and variance match, draws are whole numbers in [0, n] (seeded, 20000 draws)', (n, p) => {
    const rng = mulberry32(1000 + n);
    const xs = draws(20000, () => binomial(rng, n, p));
    expect(xs.every((x) => Number.isInteger(x) && x >= 0 && x <= n)).toBe(true);
    const m = moments(xs);
    const v = n * p * (1 - p);
    expect(Math.abs(m.mean - n * p)).toBeLessThan(5 * Math.sqrt(v / 20000));
    expect(Math.abs(m.variance / v - 1)).toBeLessThan(0.06);
  });

  it.each([
    [12, 0.35],
    [40, 0.8],
    [150, 0.45],
    [400, 0.3],
  ])('Binomial(%i, %f) draws fit the exact distribution (Pearson chi-square, p > 0.001; seeded)', (n, p) => {
    expect(n * p * (1 - p)).toBeLessThan(NORMAL_ABOVE); // the exact paths, not the normal approximation
    const rng = mulberry32(7919 * n);
    expect(goodnessOfFit(draws(20000, () => binomial(rng, n, p)), pmf(n, p))).toBeGreaterThan(0.001);
  });

  it('edge cases: n = 0, p = 0 and p = 1 are exact', () => {
    const rng = mulberry32(3);
    expect(binomial(rng, 0, 0.5)).toBe(0);
    expect(binomial(rng, 50, 0)).toBe(0);
    expect(binomial(rng, 50, 1)).toBe(50);
  });
});

describe('multinomial', () => {
  it('draws sum to n and each count has mean n·p_j; zero-probability cells stay 0 (seeded)', () => {
    const rng = mulberry32(5);
    const probs = [0.5, 0, 0.3, 0.2];
    const sums = [0, 0, 0, 0];
    for (let k = 0; k < 5000; k++) {
      const x = multinomial(rng, 1000, probs);
      expect(x.reduce((a, b) => a + b, 0)).toBe(1000);
      expect(x[1]).toBe(0);
      x.forEach((v, j) => (sums[j] += v));
    }
    // standard error of a mean count: sqrt(n·p·(1 − p) / 5000)
    probs.forEach((p, j) => expect(Math.abs(sums[j] / 5000 - 1000 * p)).toBeLessThanOrEqual(5 * Math.sqrt((1000 * p * (1 - p)) / 5000) + 1e-9));
  });

  it('accepts unnormalised weights and gives everything to the only positive cell', () => {
    const rng = mulberry32(6);
    expect(multinomial(rng, 17, [0, 3, 0])).toEqual([0, 17, 0]);
    const x = multinomial(rng, 100, [2, 2]);
    expect(x[0] + x[1]).toBe(100);
  });
});
