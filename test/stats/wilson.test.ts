import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { TidemarkError } from '../../src/errors.js';
import { zForConfidence } from '../../src/stats/normal.js';
import { wilsonInterval } from '../../src/stats/wilson.js';

describe('wilsonInterval', () => {
  // Newcombe (1998a), Statistics in Medicine 17:857–872, method 3 (Wilson score, no continuity
  // correction), as listed in test/fixtures/published-values.md (confirmed by recomputation with numpy).
  it.each([
    [81, 263, 0.2553, 0.3662],
    [15, 148, 0.0624, 0.1605],
    [0, 20, 0.0, 0.1611],
    [1, 29, 0.0061, 0.1718],
  ])('Newcombe (1998a): %s/%s → %s–%s', (x, n, lo, hi) => {
    const w = wilsonInterval(x, n);
    expect(w.lower).toBeCloseTo(lo, 4);
    expect(w.upper).toBeCloseTo(hi, 4);
    expect(w.estimate).toBe(x / n);
  });

  it('its limits are where the score statistic |x − np|/√(np(1 − p)) equals z (the defining inversion)', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 500 }), fc.double({ min: 0, max: 1, noNaN: true }), fc.constantFrom(0.8, 0.9, 0.95, 0.99), (n, f, level) => {
        const x = Math.round(f * n);
        const z = zForConfidence(level);
        const w = wilsonInterval(x, n, level);
        const score = (p: number): number => Math.abs(x - n * p) / Math.sqrt(n * p * (1 - p));
        if (x > 0) expect(score(w.lower)).toBeCloseTo(z, 8);
        if (x < n) expect(score(w.upper)).toBeCloseTo(z, 8);
        expect(w.lower).toBeLessThanOrEqual(w.estimate);
        expect(w.upper).toBeGreaterThanOrEqual(w.estimate);
      }),
      { seed: 1998, numRuns: 300 },
    );
  });

  it('is exactly 0 at x = 0 and exactly 1 at x = n', () => {
    expect(wilsonInterval(0, 7).lower).toBe(0);
    expect(wilsonInterval(7, 7).upper).toBe(1);
  });

  it('widens with the confidence level', () => {
    const a = wilsonInterval(81, 263, 0.9);
    const b = wilsonInterval(81, 263, 0.99);
    expect(b.lower).toBeLessThan(a.lower);
    expect(b.upper).toBeGreaterThan(a.upper);
  });

  it('throws NOT_ENOUGH_DATA for n = 0 and INPUT_INVALID for impossible counts', () => {
    expect(() => wilsonInterval(0, 0)).toThrow(expect.objectContaining({ code: 'NOT_ENOUGH_DATA' }));
    expect(() => wilsonInterval(5, 4)).toThrow(expect.objectContaining({ code: 'INPUT_INVALID' }));
    expect(() => wilsonInterval(-1, 4)).toThrow(TidemarkError);
    expect(() => wilsonInterval(1, 4, 1.2)).toThrow(expect.objectContaining({ code: 'INPUT_INVALID' }));
  });
});
