/**
 * Binomial and multinomial draws, for the binomial noise of a finite audience.
 *
 * Binomial(n, p), exact up to a large variance:
 * - p > 1/2 is drawn as n − Binomial(n, 1 − p);
 * - while the mean n·p is 30 or more, the Beta split halves n (Knuth, *The Art of Computer
 *   Programming* vol. 2, 3rd ed., §3.4.1, and Devroye 1986, *Non-Uniform Random Variate Generation*,
 *   §X.4): with a = 1 + ⌊n/2⌋, the a-th smallest of n uniforms is X ~ Beta(a, n + 1 − a); if X ≥ p
 *   the count is Binomial(a − 1, p/X), otherwise a + Binomial(n − a, (p − X)/(1 − X));
 * - a small mean is drawn by inversion (sequential search of the cumulative probabilities).
 * Above a variance n·p·(1 − p) of {@link NORMAL_ABOVE} the draw is the normal approximation, rounded
 * and clamped to [0, n]: its skewness |1 − 2p|/√(n·p·(1 − p)) is below 0.1 there, and it keeps large audiences fast.
 *
 * Multinomial(n, p₁ … p_k) by conditional binomials: k_j ~ Binomial(n − Σ_{i<j} k_i, p_j / Σ_{i≥j} p_i).
 */
import { gamma } from './gamma.js';
import { normal, type Rng } from './random.js';

/** Variance above which a binomial draw is the rounded normal approximation. */
export const NORMAL_ABOVE = 100;

/**
 * One Binomial(n, p) draw. Inputs are not checked (callers pass a whole n ≥ 0 and p in [0, 1]).
 *
 * @example binomial(mulberry32(1), 10, 0.3) // a whole number from 0 to 10; mean 3, variance 2.1
 */
export function binomial(rng: Rng, n: number, p: number): number {
  if (n <= 0 || p <= 0) return 0;
  if (p >= 1) return n;
  if (p > 0.5) return n - binomial(rng, n, 1 - p);
  let base = 0;
  while (n * p >= 30) {
    const v = n * p * (1 - p);
    if (v > NORMAL_ABOVE) return base + Math.min(n, Math.max(0, Math.round(n * p + Math.sqrt(v) * normal(rng))));
    const a = 1 + Math.floor(n / 2);
    const ga = gamma(rng, a);
    const x = ga / (ga + gamma(rng, n + 1 - a));
    if (x >= p) {
      n = a - 1;
      p /= x;
    } else {
      base += a;
      n -= a;
      p = (p - x) / (1 - x);
    }
    if (p > 0.5) return base + n - binomial(rng, n, 1 - p);
  }
  return base + invert(rng, n, p);
}

/** Inversion for a small mean (n·p < 30, p ≤ 1/2): P(0) = (1 − p)ⁿ ≥ e⁻⁶⁰ never underflows. */
function invert(rng: Rng, n: number, p: number): number {
  const u = rng();
  const ratio = p / (1 - p);
  let pk = Math.pow(1 - p, n);
  let cdf = pk;
  let k = 0;
  while (u > cdf && k < n) {
    pk *= ((n - k) / (k + 1)) * ratio;
    k++;
    cdf += pk;
  }
  return k;
}

/**
 * One Multinomial(n, probs) draw; `probs` need not be normalised (entries ≥ 0, not all 0).
 *
 * @example multinomial(mulberry32(1), 100, [0.5, 0.3, 0.2]) // three whole numbers summing to 100
 */
export function multinomial(rng: Rng, n: number, probs: readonly number[]): number[] {
  const out = new Array<number>(probs.length).fill(0);
  let rest = probs.reduce((a, b) => a + b, 0);
  let left = n;
  let last = -1;
  for (let j = probs.length - 1; j >= 0; j--) if (probs[j] > 0) { last = j; break; }
  for (let j = 0; j < probs.length && left > 0; j++) {
    if (!(probs[j] > 0)) continue;
    const k = j === last ? left : binomial(rng, left, Math.min(1, probs[j] / rest));
    out[j] = k;
    left -= k;
    rest -= probs[j];
  }
  return out;
}
