import { describe, expect, it } from 'vitest';
import { TidemarkError } from '../../src/errors.js';
import { nelderMead } from '../../src/curve/optimize.js';

describe('nelderMead', () => {
  it('finds the minimum of the Rosenbrock (1960) function at (1, 1) from (−1.2, 1), the classic start', () => {
    const r = nelderMead(([x, y]) => (1 - x) ** 2 + 100 * (y - x * x) ** 2, [-1.2, 1], { maxIterations: 5000 });
    expect(r.x[0]).toBeCloseTo(1, 6);
    expect(r.x[1]).toBeCloseTo(1, 6);
    expect(r.value).toBeLessThan(1e-12);
    expect(r.converged).toBe(true);
  });

  it('minimises a shifted quadratic in 4 dimensions', () => {
    const c = [3, -2, 0.5, 10];
    const r = nelderMead((x) => x.reduce((s, v, i) => s + (i + 1) * (v - c[i]) ** 2, 0), [0, 0, 0, 0], { maxIterations: 4000 });
    r.x.forEach((v, i) => expect(v).toBeCloseTo(c[i], 5));
  });

  it('treats Infinity and NaN as walls', () => {
    // Minimum of (x − 2)² on x ≤ 1 is at the wall, x = 1.
    const r = nelderMead(([x]) => (x > 1 ? Infinity : (x - 2) ** 2), [0]);
    expect(r.x[0]).toBeCloseTo(1, 6);
    const s = nelderMead(([x]) => (x < 0 ? Number.NaN : (x - 0.5) ** 2), [3]);
    expect(s.x[0]).toBeCloseTo(0.5, 6);
  });

  it('rejects an empty or non-finite start', () => {
    expect(() => nelderMead(() => 0, [])).toThrow(TidemarkError);
    expect(() => nelderMead(() => 0, [Number.NaN])).toThrow(TidemarkError);
    expect(() => nelderMead(() => Infinity, [0])).toThrow(TidemarkError);
  });
});
