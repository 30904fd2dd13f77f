import { describe, expect, it } from 'vitest';
import { newcombeDifference } from '../../src/stats/newcombe.js';

describe('newcombeDifference (hybrid score, method 10)', () => {
  // Newcombe (1998b), Statistics in Medicine 17:873–890, Table II, method 10 (no continuity
  // correction), as listed in test/fixtures/published-values.md (confirmed by recomputation with numpy).
  it.each([
    [56, 70, 48, 80, 0.0524, 0.3339],
    [9, 10, 3, 10, 0.1705, 0.809],
    [6, 7, 2, 7, 0.0582, 0.8062],
    [5, 56, 0, 29, -0.0381, 0.1926],
    [0, 10, 0, 20, -0.1611, 0.2775],
    [0, 10, 0, 10, -0.2775, 0.2775],
    [10, 10, 0, 20, 0.6791, 1],
    [10, 10, 0, 10, 0.6075, 1],
  ])('Newcombe (1998b): %s/%s − %s/%s → (%s, %s)', (x1, n1, x2, n2, lo, hi) => {
    const d = newcombeDifference(x1, n1, x2, n2);
    expect(d.lower).toBeCloseTo(lo, 4);
    expect(d.upper).toBeCloseTo(hi, 4);
    expect(d.difference).toBeCloseTo(x1 / n1 - x2 / n2, 15);
  });

  it('swapping the samples mirrors the interval', () => {
    const a = newcombeDifference(56, 70, 48, 80);
    const b = newcombeDifference(48, 80, 56, 70);
    expect(b.lower).toBeCloseTo(-a.upper, 14);
    expect(b.upper).toBeCloseTo(-a.lower, 14);
  });

  it('throws NOT_ENOUGH_DATA when a sample is empty', () => {
    expect(() => newcombeDifference(0, 0, 1, 2)).toThrow(expect.objectContaining({ code: 'NOT_ENOUGH_DATA' }));
  });
});
