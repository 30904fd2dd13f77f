import { describe, expect, it } from 'vitest';
import { quantileSorted } from '../../src/numerics/quantile.js';
import { expectClose, expectRefusal } from '../markov/helpers.js';

describe('quantileSorted (Hyndman & Fan definition 7)', () => {
  it('interpolates between order statistics (hand: h = 3·0.5 = 1.5 → 2.5; h = 3·0.1 = 0.3 → 1.3)', () => {
    expect(quantileSorted([1, 2, 3, 4], 0.5)).toBe(2.5);
    expectClose(quantileSorted([1, 2, 3, 4], 0.1), 1.3, 1e-12);
    expect(quantileSorted([7], 0.9)).toBe(7);
  });
  it('refuses an empty sample and a level outside [0, 1]', () => {
    expectRefusal(() => quantileSorted([], 0.5), 'INPUT_INVALID', /empty/);
    expectRefusal(() => quantileSorted([1], 1.5), 'INPUT_INVALID', /\[0, 1\]/);
  });
});
