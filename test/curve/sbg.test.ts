import { describe, expect, it } from 'vitest';
import { fitSbg, sbgChurnProbability, sbgLogLikelihood, sbgRemainingLifetime, sbgSurvival } from '../../src/curve/sbg.js';
import { mulberry32 } from '../stats/prng.js';

// Fader & Hardie (2007), "How to project customer retention", J. Interactive Marketing 21(1):
// survival % for years 0–7 with 1000 customers at year 0 (survivors = round(pct × 10)); MLE and
// projections as listed in test/fixtures/published-values.md (recomputed with scipy).
const REGULAR = [1000, 631, 468, 382, 326, 289, 262, 241];
const HIGH_END = [1000, 869, 743, 653, 593, 551, 517, 491];

describe('fitSbg — Fader & Hardie (2007)', () => {
  it('regular: α = 0.704, β = 1.182, LL = −1680.265; years 8–12: 22.0, 20.4, 19.1, 18.0, 17.0', () => {
    const f = fitSbg(REGULAR, { horizon: 12 });
    expect(f.alpha).toBeCloseTo(0.704, 3);
    expect(f.beta).toBeCloseTo(1.182, 3);
    expect(f.logLikelihood).toBeCloseTo(-1680.265, 3);
    expect(f.projection.slice(8).map((p) => (p.survival * 100).toFixed(1))).toEqual(['22.0', '20.4', '19.1', '18.0', '17.0']);
    expect(f.converged).toBe(true);
    expect(f.boundary).toBe(false);
  });

  it('high end: α = 0.668, β = 3.806, LL = −1611.158; years 8–12: 46.0, 43.6, 41.4, 39.5, 37.8', () => {
    const f = fitSbg(HIGH_END, { horizon: 12 });
    expect(f.alpha).toBeCloseTo(0.668, 3);
    expect(f.beta).toBeCloseTo(3.806, 3);
    expect(f.logLikelihood).toBeCloseTo(-1611.158, 3);
    expect(f.projection.slice(8).map((p) => (p.survival * 100).toFixed(1))).toEqual(['46.0', '43.6', '41.4', '39.5', '37.8']);
  });

  it('matches a 40-digit reference MLE on both data sets, and the capped remaining lifetime', () => {
    // Reference: mpmath 1.3.0 at 40 digits, the root of the score in (ln α, ln β) found by
    // mp.findroot; scipy 1.17.1 (Nelder–Mead then L-BFGS-B on the same likelihood) agrees to 5e-7.
    //   ll(a, b) = Σ_t (s[t−1] − s[t])·(ln B(a+1, b+t−1) − ln B(a, b)) + s[T]·(ln B(a, b+T) − ln B(a, b))
    //   remaining = Σ_{t=T+1}^{T+100} S(t)/S(T)   (scipy: 31.023533995991357 and 37.29454641377536)
    // The likelihood is flat along a ridge, so double precision locates the maximum to about 1e-6.
    const regular = fitSbg(REGULAR);
    expect(regular.alpha).toBeCloseTo(0.70407729847351621, 5);
    expect(regular.beta).toBeCloseTo(1.1820430262094757, 5);
    expect(regular.logLikelihood).toBeCloseTo(-1680.265188463287, 8);
    expect(regular.expectedRemainingLifetime).toBeCloseTo(31.023533995991357, 4);
    expect(regular.expectedRemainingLifetimeUncapped).toBeNull(); // α ≤ 1: infinite
    const high = fitSbg(HIGH_END);
    expect(high.alpha).toBeCloseTo(0.66808835110644622, 5);
    expect(high.beta).toBeCloseTo(3.8060949640582669, 5);
    expect(high.logLikelihood).toBeCloseTo(-1611.1581473911564, 8);
    expect(high.expectedRemainingLifetime).toBeCloseTo(37.29454641377536, 4);
  });

  it('matches the reference on a simulated cohort never seen before (α > 1, so the uncapped lifetime is finite)', () => {
    // numpy 2.4: rng = np.random.default_rng(7); theta = rng.beta(1.3, 2.5, 800); life = rng.geometric(theta)
    // survivors = [sum(life > t) for t in range(10)]. MLE by mpmath as above; projection (%) and
    // remaining lifetime by scipy 1.17.1 at its fit.
    const f = fitSbg([800, 515, 376, 291, 249, 207, 178, 162, 142, 125], { horizon: 14 });
    expect(f.alpha).toBeCloseTo(1.08270161282264, 5);
    expect(f.beta).toBeCloseTo(1.9558599445412261, 5);
    expect(f.logLikelihood).toBeCloseTo(-1508.6352251572129, 8);
    expect(f.projection.slice(10).map((p) => p.survival * 100)).toEqual(
      [14.3265, 13.1369, 12.1237, 11.2509, 10.4914].map((v) => expect.closeTo(v, 3)),
    );
    expect(f.expectedRemainingLifetime).toBeCloseTo(22.689239141322638, 4);
    expect(f.expectedRemainingLifetimeUncapped).toBeCloseTo(132.47444086378974, 2);
  });
});

/** Log-likelihood by the recursions of Fader & Hardie (2007, eqs. 5–6), independent of log-beta. */
function recursiveLL(a: number, b: number, s: readonly number[]): number {
  let p = a / (a + b);
  let surv = 1 - p;
  let ll = (s[0] - s[1]) * Math.log(p);
  for (let t = 2; t < s.length; t++) {
    p = (p * (b + t - 2)) / (a + b + t - 1);
    surv -= p;
    ll += (s[t - 1] - s[t]) * Math.log(p);
  }
  return ll + s[s.length - 1] * Math.log(surv);
}

/** Independent MLE: grid search then cyclic golden-section refinement over (ln α, ln β). */
function gridGoldenMle(s: readonly number[]): [number, number] {
  const f = (x: number, y: number): number => -recursiveLL(Math.exp(x), Math.exp(y), s);
  let best: [number, number] = [0, 0];
  for (let x = -4; x <= 4; x += 0.05) for (let y = -4; y <= 5; y += 0.05) if (f(x, y) < f(...best)) best = [x, y];
  const golden = (g: (v: number) => number, lo: number, hi: number): number => {
    const r = (Math.sqrt(5) - 1) / 2;
    let c = hi - r * (hi - lo);
    let d = lo + r * (hi - lo);
    while (hi - lo > 1e-12) {
      if (g(c) < g(d)) hi = d;
      else lo = c;
      c = hi - r * (hi - lo);
      d = lo + r * (hi - lo);
    }
    return (lo + hi) / 2;
  };
  let [x, y] = best;
  for (let sweep = 0; sweep < 400; sweep++) {
    x = golden((v) => f(v, y), x - 0.1, x + 0.1);
    y = golden((v) => f(x, v), y - 0.1, y + 0.1);
  }
  return [Math.exp(x), Math.exp(y)];
}

describe('fitSbg — against an independent grid + golden-section MLE (seeded)', () => {
  it('agrees on cohorts drawn around random sBG curves', () => {
    const rand = mulberry32(2007);
    for (let trial = 0; trial < 6; trial++) {
      const a = 0.3 + rand() * 2;
      const b = 0.5 + rand() * 4;
      const n0 = 300 + Math.floor(rand() * 2000);
      const T = 5 + Math.floor(rand() * 6);
      const s = [n0];
      for (let t = 1; t <= T; t++) {
        const target = Math.round(n0 * sbgSurvival(t, a, b) * (1 + (rand() - 0.5) * 0.06));
        s.push(Math.min(s[t - 1], Math.max(1, target)));
      }
      const fit = fitSbg(s);
      const [ra, rb] = gridGoldenMle(s);
      expect(fit.alpha / ra).toBeCloseTo(1, 4);
      expect(fit.beta / rb).toBeCloseTo(1, 4);
      expect(fit.logLikelihood).toBeCloseTo(recursiveLL(ra, rb, s), 6);
    }
  });
});

describe('sBG functions', () => {
  it('α = β = 1 gives S(t) = 1/(t + 1) and P(T = t) = 1/(t(t + 1)) (uniform θ, closed form)', () => {
    for (let t = 1; t <= 20; t++) {
      expect(sbgSurvival(t, 1, 1)).toBeCloseTo(1 / (t + 1), 13);
      expect(sbgChurnProbability(t, 1, 1)).toBeCloseTo(1 / (t * (t + 1)), 13);
    }
    expect(sbgSurvival(0, 2, 3)).toBe(1);
  });

  it('P(T = t) = S(t − 1) − S(t), and the log-likelihood equals the recursive form', () => {
    for (const [a, b] of [[0.704, 1.182], [0.668, 3.806], [5, 0.2]]) {
      for (let t = 1; t <= 15; t++) expect(sbgChurnProbability(t, a, b)).toBeCloseTo(sbgSurvival(t - 1, a, b) - sbgSurvival(t, a, b), 13);
      expect(sbgLogLikelihood(a, b, REGULAR)).toBeCloseTo(recursiveLL(a, b, REGULAR), 9);
    }
  });

  it('remaining lifetime: α = β = 1 gives (T + 1)(H_{T+cap+1} − H_{T+1}) exactly (S(t) = 1/(t + 1))', () => {
    const T = 4;
    const cap = 50;
    let harmonic = 0;
    for (let j = T + 2; j <= T + cap + 1; j++) harmonic += 1 / j;
    expect(sbgRemainingLifetime(1, 1, T, cap)).toBeCloseTo((T + 1) * harmonic, 12);
  });

  it('remaining lifetime tends to (β + T)/(α − 1) when α > 1 (posterior mean of 1/θ minus 1)', () => {
    // α = 3: the tail after the cap is O(cap⁻²).
    expect(sbgRemainingLifetime(3, 2, 5, 100_000)).toBeCloseTo((2 + 5) / (3 - 1), 6);
    expect(sbgRemainingLifetime(3, 2, 5, 10)).toBeLessThan(3.5);
    const f = fitSbg([800, 515, 376, 291, 249, 207, 178, 162, 142, 125], { lifetimeCap: 40 });
    expect(f.expectedRemainingLifetime).toBeCloseTo(sbgRemainingLifetime(f.alpha, f.beta, 9, 40), 12);
    expect(f.lifetimeCap).toBe(40);
  });
});

describe('fitSbg — errors and edge cases', () => {
  it('rejects increasing, negative or non-finite vectors', () => {
    expect(() => fitSbg([100, 80, 90])).toThrow(expect.objectContaining({ code: 'INPUT_INVALID', where: { key: 'survivors[2]' } }));
    expect(() => fitSbg([100, -1])).toThrow(expect.objectContaining({ code: 'INPUT_INVALID' }));
    expect(() => fitSbg([100, Number.NaN])).toThrow(expect.objectContaining({ code: 'INPUT_INVALID' }));
  });

  it('n0 = 0, a single age, nobody lost or everyone lost at once: NOT_ENOUGH_DATA', () => {
    for (const s of [[0, 0, 0], [100], [], [100, 100, 100], [100, 0, 0]]) {
      expect(() => fitSbg(s)).toThrow(expect.objectContaining({ code: 'NOT_ENOUGH_DATA' }));
    }
  });

  it('two ages are not identified: the likelihood depends on α/(α + β) alone, so the fit is refused', () => {
    // independent computation: with n0, n1 only, LL = (n0 − n1)·ln P(T = 1) + n1·ln S(1), and
    // P(T = 1) = α/(α + β), S(1) = β/(α + β) (module definitions), so (1, 2) and (10, 20) tie
    const ll = (a: number, b: number) => sbgLogLikelihood(a, b, [100, 60]);
    const byHand = 40 * Math.log(1 / 3) + 60 * Math.log(2 / 3);
    expect(ll(1, 2)).toBeCloseTo(byHand, 10);
    expect(ll(10, 20)).toBeCloseTo(byHand, 10);
    expect(() => fitSbg([100, 60])).toThrow(expect.objectContaining({ code: 'NOT_ENOUGH_DATA', message: expect.stringMatching(/cannot identify/) }));
    expect(fitSbg([100, 60, 45]).converged).toBe(true);
  });

  it('flags a fit pushed to the edge of the parameter space', () => {
    // Half leave at once and the rest never leave: the MLE is the limit α, β → 0.
    const f = fitSbg([100, 50, 50, 50, 50]);
    expect(f.boundary).toBe(true);
    expect(f.projection[3].survival).toBeCloseTo(0.5, 2);
  });

  it('rejects a bad horizon or cap', () => {
    expect(() => fitSbg(REGULAR, { horizon: -1 })).toThrow(expect.objectContaining({ code: 'INPUT_INVALID' }));
    expect(() => fitSbg(REGULAR, { lifetimeCap: 0 })).toThrow(expect.objectContaining({ code: 'INPUT_INVALID' }));
  });

  it('projects to 2T by default', () => {
    expect(fitSbg(REGULAR).projection.map((p) => p.t)).toEqual(Array.from({ length: 15 }, (_, t) => t));
  });
});
