import { describe, expect, it } from 'vitest';
import { fitLinearVariogram } from '../../src/numerics/variogram.js';
import { mulberry32, normal } from '../../src/numerics/random.js';

describe('fitLinearVariogram', () => {
  it('recovers an exact line d = 2·noise + lag·drift (hand: 2 + 2·lag → noise 1, drift 2)', () => {
    expect(fitLinearVariogram([{ lag: 1, d: 4 }, { lag: 2, d: 6 }, { lag: 3, d: 8 }])).toEqual({ noise: 1, drift: 2, pairs: 3 });
  });

  it('keeps both parameters ≥ 0: a falling line gives drift 0 and the mean; a line below 0 at lag 0 gives noise 0', () => {
    const falling = fitLinearVariogram([{ lag: 1, d: 6 }, { lag: 2, d: 4 }, { lag: 3, d: 2 }]);
    expect(falling.drift).toBe(0);
    expect(falling.noise).toBeCloseTo(2, 12); // mean 4 = 2·noise
    const steep = fitLinearVariogram([{ lag: 1, d: 1 }, { lag: 2, d: 4 }, { lag: 3, d: 7 }]);
    expect(steep.noise).toBe(0);
    expect(steep.drift).toBeCloseTo((1 + 8 + 21) / 14, 12); // through the origin: Σ lag·d / Σ lag²
    expect(fitLinearVariogram([])).toEqual({ noise: 0, drift: 0, pairs: 0 });
    expect(fitLinearVariogram([{ lag: 1, d: -3 }, { lag: 2, d: -1 }])).toEqual({ noise: 0, drift: 0, pairs: 2 });
  });

  it('a simulated random walk plus noise (σ²_η = 4, σ²_ε = 9, 400 periods, seeded) is recovered within 35%', () => {
    const rng = mulberry32(2024);
    let level = 0;
    const y = Array.from({ length: 400 }, () => {
      level += 2 * normal(rng);
      return level + 3 * normal(rng);
    });
    const pairs: { lag: number; d: number }[] = [];
    for (let t = 0; t < y.length; t++) for (let u = t + 1; u < Math.min(y.length, t + 11); u++) pairs.push({ lag: u - t, d: (y[u] - y[t]) ** 2 });
    const fit = fitLinearVariogram(pairs);
    expect(fit.drift / 4).toBeGreaterThan(0.65);
    expect(fit.drift / 4).toBeLessThan(1.35);
    expect(fit.noise / 9).toBeGreaterThan(0.65);
    expect(fit.noise / 9).toBeLessThan(1.35);
  });
});
