import { describe, expect, it } from 'vitest';
import { backtest } from '../../src/markov/backtest.js';
import { rateVariation } from '../../src/markov/variation.js';
import { simulatedChain } from './chains.js';

// Targets of the issue: at every horizon up to 8, the 80% band holds 70–90% of what happened and the
// 50% band 40–60%. Chains of 70 weekly periods, fitted on windows of 8 transitions (as the report).
const START = [600, 6000, 900, 2500, 12000];

describe('calibration on simulated chains whose true rates move by a known amount (seeded)', () => {
  // Each case pools the backtests of three chains (seeds 11–13) of 70 periods, each origin fitted on the
  // 8 transitions before it; a random walk w and noise e move the rates on the log scale (chains.ts).
  // Measured when written: 0.05/0.05 → 80% band 73–77%, 50% band 44–48%; drift 0.04 only → 70–74%,
  // 42–45%; 0.03/0.05 → 80–82%, 51–56%; still rates → 83–87%, 54–60%. Known deviation, not asserted:
  // strong noise without drift (0 / 0.08) holds 80–90% but its 50% band 52–64%, too wide past +4.
  it.each([
    ['rates drift (random walk 0.05 a period) and jitter (0.05)', 0.05, 0.05],
    ['rates drift only (0.04 a period)', 0.04, 0],
    ['rates drift a little (0.03) and jitter (0.05)', 0.03, 0.05],
    ['rates stand still (binomial noise only)', 0, 0],
  ])('%s: coverage within the targets at horizons 1–8', (_, walk, noise) => {
    const acc = Array.from({ length: 8 }, () => ({ n: 0, inner: 0, outer: 0 }));
    for (const seed of [11, 12, 13]) {
      const tables = simulatedChain({ periods: 70, walk, noise, arrivals: 600, arrivalSd: 60, start: START, seed });
      const bt = backtest(tables, { horizon: 8, window: 8, samples: 100, seed: 1 });
      expect(bt.rows).toHaveLength(8);
      bt.rows.forEach((r, h) => {
        acc[h].n += r.origins;
        acc[h].inner += r.innerCoverage * r.origins;
        acc[h].outer += r.coverage * r.origins;
      });
    }
    acc.forEach((a, h) => {
      expect(a.outer / a.n, `80% band at +${h + 1}`).toBeGreaterThanOrEqual(0.7);
      expect(a.outer / a.n, `80% band at +${h + 1}`).toBeLessThanOrEqual(0.9);
      expect(a.inner / a.n, `50% band at +${h + 1}`).toBeGreaterThanOrEqual(0.4);
      expect(a.inner / a.n, `50% band at +${h + 1}`).toBeLessThanOrEqual(0.6);
    });
  }, 120_000); // a bound on a hang, not a timing check

  it('the rates\' variation is what makes them hold: with rates that move, the estimated drift and noise are > 0; with still rates, near 0', () => {
    const moving = simulatedChain({ periods: 30, walk: 0.05, noise: 0.05, arrivals: 600, arrivalSd: 60, start: START, seed: 21 });
    const still = simulatedChain({ periods: 30, walk: 0, noise: 0, arrivals: 600, arrivalSd: 60, start: START, seed: 22 });
    const engaged = (t: typeof moving) => rateVariation(t.transitions.slice(-8), t.states)[1];
    const m = engaged(moving), s = engaged(still);
    expect(m.noise + m.drift).toBeGreaterThan(1e-3);
    // still rates: binomial noise only, which the estimator subtracts; what is left is small
    expect(s.noise + s.drift).toBeLessThan(2e-4);
  });
});
