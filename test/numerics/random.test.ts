import { describe, expect, it } from 'vitest';
import { sampleDirichlet } from '../../src/numerics/dirichlet.js';
import { gamma } from '../../src/numerics/gamma.js';
import { mulberry32, normal } from '../../src/numerics/random.js';
import { expectClose, expectRefusal } from '../markov/helpers.js';

function moments(xs: number[]): { mean: number; variance: number } {
  const mean = xs.reduce((a, b) => a + b, 0) / xs.length;
  return { mean, variance: xs.reduce((s, x) => s + (x - mean) ** 2, 0) / (xs.length - 1) };
}
const draw = (n: number, f: () => number): number[] => Array.from({ length: n }, f);

describe('mulberry32', () => {
  it('the same seed gives the same stream; another seed another stream', () => {
    const a = draw(100, mulberry32(2026));
    expect(draw(100, mulberry32(2026))).toEqual(a);
    expect(draw(100, mulberry32(2027))).not.toEqual(a);
  });

  it('draws lie in the open interval (0, 1) with uniform mean 1/2 and variance 1/12 (seeded, 5 standard errors)', () => {
    const xs = draw(50000, mulberry32(11));
    expect(xs.every((x) => x > 0 && x < 1)).toBe(true);
    const m = moments(xs);
    expect(Math.abs(m.mean - 0.5)).toBeLessThan(5 * Math.sqrt(1 / 12 / 50000));
    expect(Math.abs(m.variance - 1 / 12)).toBeLessThan(0.002);
  });

  it('refuses a seed that is not a 32-bit whole number', () => {
    expectRefusal(() => mulberry32(1.5), 'INPUT_INVALID', /seed/);
    expectRefusal(() => mulberry32(-1), 'INPUT_INVALID', /seed/);
    expectRefusal(() => mulberry32(2 ** 32), 'INPUT_INVALID', /seed/);
  });
});

describe('normal (Box–Muller)', () => {
  it('has mean 0 and variance 1 (seeded, 40000 draws)', () => {
    const rng = mulberry32(5);
    const m = moments(draw(40000, () => normal(rng)));
    expect(Math.abs(m.mean)).toBeLessThan(5 / Math.sqrt(40000));
    expect(Math.abs(m.variance - 1)).toBeLessThan(0.03);
  });
});

describe('gamma (Marsaglia & Tsang 2000, with the α < 1 boost)', () => {
  // Gamma(α, 1) has mean α and variance α (definition); tolerances are 5 standard errors of the mean.
  for (const alpha of [0.3, 0.5, 1, 2.5, 10, 150]) {
    it(`α = ${alpha}: mean ≈ α, variance ≈ α, all draws > 0 (seeded, 40000 draws)`, () => {
      const rng = mulberry32(100 + Math.round(alpha * 10));
      const xs = draw(40000, () => gamma(rng, alpha));
      expect(xs.every((x) => x > 0)).toBe(true);
      const m = moments(xs);
      expect(Math.abs(m.mean - alpha)).toBeLessThan(5 * Math.sqrt(alpha / 40000));
      expect(Math.abs(m.variance / alpha - 1)).toBeLessThan(0.06);
    });
  }

  it('refuses a shape that is not > 0', () => {
    expectRefusal(() => gamma(mulberry32(1), 0), 'INPUT_INVALID', /gamma shape/);
    expectRefusal(() => gamma(mulberry32(1), Number.NaN), 'INPUT_INVALID', /gamma shape/);
  });
});

describe('sampleDirichlet', () => {
  it('Dirichlet(2, 0, 3): component means 0.4, 0, 0.6 and a zero component stays 0 (seeded, 20000 draws)', () => {
    const rng = mulberry32(9);
    const xs = draw(20000, () => sampleDirichlet(rng, [2, 0, 3])[0]);
    // Var of a Beta(2, 3) component = αβ/((α+β)²(α+β+1)) = 6/150 = 0.04.
    expect(Math.abs(moments(xs).mean - 0.4)).toBeLessThan(5 * Math.sqrt(0.04 / 20000));
    expectClose(moments(xs).variance, 0.04, 0.003);
    expect(sampleDirichlet(rng, [2, 0, 3])[1]).toBe(0);
  });

  it('refuses all-zero parameters', () => {
    expectRefusal(() => sampleDirichlet(mulberry32(1), [0, 0]), 'INPUT_INVALID', /not all 0/);
  });
});
