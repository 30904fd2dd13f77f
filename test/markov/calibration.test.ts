import { describe, expect, it } from 'vitest';
import { backtest } from '../../src/markov/backtest.js';
import { commonShare, rateVariation } from '../../src/markov/variation.js';
import { simulatedChain } from './chains.js';

// Targets of the issue: at every horizon up to 8, the 80% band holds 70–90% of what happened and the
// 50% band 40–60%. Chains of 70 weekly periods, fitted on windows of 8 transitions (as the report).
const START = [600, 6000, 900, 2500, 12000];

describe('calibration on simulated chains whose true rates move by a known amount (seeded)', () => {
  // Each case pools the backtests of three chains (seeds 11–13) of 70 periods, each origin fitted on the
  // 8 transitions before it; a random walk w and noise e move the rates on the log scale (chains.ts).
  // The bands scored are the recalibrated ones (from the latest 15 earlier origins with known outcomes:
  // each state's band moved by the median of its errors once 6 origins exist, each side scaled by its
  // own conformal quantile once 30 scores exist).
  // Measured, 80% band / 50% band, model's bands → recalibrated (fourth pass; the third pass's in
  // DEVELOPERS.md): 0.05/0.05 72–76 / 45–49 → 77–82 / 43–51; drift 0.04 only 71–77 / 44–48 → 74–81 /
  // 44–51; 0.03/0.05 78–82 / 48–55 → 78–81 / 46–51; still rates 83–86 / 55–59 → 80–82 / 49–52; strong
  // noise without drift (0 / 0.08) 76–86 / 47–57 → 80–82 / 50–53; a shock shared by every row (0.08 a
  // period on the log rate into each state, over a drift of 0.02 and jitter of 0.03) 71–75 / 43–49 →
  // 76–81 / 46–50.
  it.each([
    ['rates drift (random walk 0.05 a period) and jitter (0.05)', 0.05, 0.05, 0],
    ['rates drift only (0.04 a period)', 0.04, 0, 0],
    ['rates drift a little (0.03) and jitter (0.05)', 0.03, 0.05, 0],
    ['rates stand still (binomial noise only)', 0, 0, 0],
    ['rates jitter strongly without drift (0.08)', 0, 0.08, 0],
    ['a shock shared by every row (0.08 a period) over a drift of 0.02 and jitter of 0.03', 0.02, 0.03, 0.08],
  ])('%s: coverage within the targets at horizons 1–8', (_, walk, noise, common) => {
    const acc = Array.from({ length: 8 }, () => ({ n: 0, inner: 0, outer: 0 }));
    for (const seed of [11, 12, 13]) {
      const tables = simulatedChain({ periods: 70, walk, noise, common, arrivals: 600, arrivalSd: 60, start: START, seed });
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

  const pooled = (spec: Partial<Parameters<typeof simulatedChain>[0]>) => {
    const acc = Array.from({ length: 8 }, () => ({ n: 0, inner: 0, outer: 0, modelOuter: 0 }));
    for (const seed of [11, 12, 13]) {
      const tables = simulatedChain({ periods: 70, walk: 0.02, noise: 0.03, arrivals: 600, arrivalSd: 60, start: START, seed, ...spec });
      backtest(tables, { horizon: 8, window: 8, samples: 100, seed: 1 }).rows.forEach((r, h) => {
        acc[h].n += r.origins;
        acc[h].inner += r.innerCoverage * r.origins;
        acc[h].outer += r.coverage * r.origins;
        acc[h].modelOuter += r.modelCoverage * r.origins;
      });
    }
    return acc;
  };
  const inRange = (acc: ReturnType<typeof pooled>) => acc.forEach((a, h) => {
    expect(a.outer / a.n, `80% band at +${h + 1}`).toBeGreaterThanOrEqual(0.7);
    expect(a.outer / a.n, `80% band at +${h + 1}`).toBeLessThanOrEqual(0.9);
    expect(a.inner / a.n, `50% band at +${h + 1}`).toBeGreaterThanOrEqual(0.4);
    expect(a.inner / a.n, `50% band at +${h + 1}`).toBeLessThanOrEqual(0.6);
  });

  it('a steady trend (the log rate into engaged and returned −0.015 a period, lapsing and dormant +0.01): the model\'s bands fall behind, the recalibrated ones hold at every horizon', () => {
    // The model has no trend, so its bands fall behind a steady one (measured when written: 80% band 73,
    // 73, 69, 66, 62, 59, 58, 54%; 50% band 42 … 27%); the recalibrated bands: 79–82% and 46–51% (third pass 74–79% and 47–51%).
    const acc = pooled({ trend: [0, -0.015, -0.015, 0.01, 0.01] });
    expect(acc[7].modelOuter / acc[7].n, 'the model\'s 80% band at +8').toBeLessThan(0.7);
    inRange(acc);
  }, 120_000); // a bound on a hang, not a timing check

  it('a 13-period cycle shared by every row (log rate into engaged and returned ±0.2, lapsing and dormant ∓0.15): the recalibrated bands hold at every horizon', () => {
    // Measured when written: the model's 80% band 59–77% (below 70% from +2 to +8), 50% band 34–41%;
    // recalibrated 76–83% and 43–51% (third pass 76–79% and 45–49%).
    const acc = pooled({ cycle: { period: 13, amp: [0, 0.2, 0.2, -0.15, -0.15] } });
    expect(acc[3].modelOuter / acc[3].n, 'the model\'s 80% band at +4').toBeLessThan(0.7);
    inRange(acc);
  }, 120_000); // a bound on a hang, not a timing check

  it('a shock shared by every row is found: ρ > 0.2 on a chain with one, < 0.15 on one without (8-period windows)', () => {
    const share = (common: number, seed: number) => {
      const t = simulatedChain({ periods: 40, walk: 0.02, noise: 0.03, common, arrivals: 600, arrivalSd: 60, start: START, seed });
      let s = 0;
      for (let lo = 0; lo + 8 <= 40; lo += 8) s += commonShare(rateVariation(t.transitions.slice(lo, lo + 8), t.states)) / 5;
      return s;
    };
    expect(share(0.08, 31)).toBeGreaterThan(0.2);
    expect(share(0, 32)).toBeLessThan(0.15);
  });

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
