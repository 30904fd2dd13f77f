/**
 * Gamma(α, 1) sampling by Marsaglia & Tsang (2000), "A simple method for generating gamma variables",
 * ACM Transactions on Mathematical Software 26(3): for α ≥ 1, with d = α − 1/3 and c = 1/√(9d), draw
 * x ~ N(0, 1), v = (1 + c·x)³ and u ~ U(0, 1); accept d·v when v > 0 and u < 1 − 0.0331·x⁴ (the
 * squeeze) or ln u < x²/2 + d·(1 − v + ln v). For α < 1 the same paper's boost:
 * Gamma(α) = Gamma(α + 1)·u^(1/α).
 */
import { TidemarkError } from '../errors.js';
import { normal, type Rng } from './random.js';

/**
 * One Gamma(α, 1) draw (mean α, variance α).
 *
 * @throws TidemarkError `INPUT_INVALID` when α is not a finite number > 0.
 * @example gamma(mulberry32(3), 2.5) // a positive draw; over many draws the mean is about 2.5
 */
export function gamma(rng: Rng, alpha: number): number {
  if (!(alpha > 0) || !Number.isFinite(alpha)) {
    throw new TidemarkError('INPUT_INVALID', `gamma shape must be a finite number > 0 (got ${String(alpha)})`, { key: 'alpha' });
  }
  if (alpha < 1) return gamma(rng, alpha + 1) * Math.pow(rng(), 1 / alpha);
  const d = alpha - 1 / 3;
  const c = 1 / Math.sqrt(9 * d);
  for (;;) {
    const x = normal(rng);
    const base = 1 + c * x;
    if (base <= 0) continue;
    const v = base * base * base;
    const u = rng();
    if (u < 1 - 0.0331 * x ** 4) return d * v;
    if (Math.log(u) < 0.5 * x * x + d * (1 - v + Math.log(v))) return d * v;
  }
}
