/**
 * Benjamini–Hochberg step-up procedure controlling the false discovery rate (Benjamini & Hochberg
 * 1995, "Controlling the false discovery rate", JRSS B 57:289–300).
 *
 * For m p-values sorted p₍₁₎ ≤ … ≤ p₍ₘ₎ the adjusted value of rank i is
 *   min over j ≥ i of min(1, m·p₍ⱼ₎/j),
 * and the procedure rejects H₍₁₎ … H₍ₖ₎ for the largest k with p₍ₖ₎ ≤ k·q/m. A hypothesis is
 * rejected at level q exactly when its adjusted p-value is ≤ q.
 */
import { TidemarkError } from '../errors.js';

function check(p: readonly number[], fn: string): void {
  p.forEach((v, i) => {
    if (!(v >= 0 && v <= 1)) throw new TidemarkError('INPUT_INVALID', `${fn}: p[${i}] must be in [0, 1], got ${v}`);
  });
}

/** Indices of p in ascending order of value (stable). */
function ascending(p: readonly number[]): number[] {
  return p.map((_, i) => i).sort((a, b) => p[a] - p[b] || a - b);
}

/**
 * BH-adjusted p-values, in the input order. An empty family gives [].
 *
 * @throws {TidemarkError} INPUT_INVALID when a p-value is outside [0, 1] or NaN.
 * @example bhAdjust([0.01, 0.04, 0.03]) // [0.03, 0.04, 0.04]
 */
export function bhAdjust(p: readonly number[]): number[] {
  check(p, 'bhAdjust');
  const m = p.length;
  const order = ascending(p);
  const out = new Array<number>(m);
  let running = 1;
  for (let rank = m; rank >= 1; rank--) {
    const i = order[rank - 1];
    running = Math.min(running, (m * p[i]) / rank);
    // The exact value is ≥ p[i]; the max only undoes rounding of m·p/m (and keeps the order).
    out[i] = Math.max(p[i], running);
  }
  return out;
}

/**
 * Which hypotheses the BH step-up procedure rejects at false discovery rate q, in the input order.
 *
 * @throws {TidemarkError} INPUT_INVALID when a p-value is outside [0, 1] or q is not in (0, 1].
 * @example bhRejected([0.01, 0.04, 0.03], 0.05) // [true, true, true]
 */
export function bhRejected(p: readonly number[], q: number): boolean[] {
  check(p, 'bhRejected');
  if (!(q > 0 && q <= 1)) throw new TidemarkError('INPUT_INVALID', `bhRejected: q must be in (0, 1], got ${q}`);
  const m = p.length;
  const order = ascending(p);
  let k = 0;
  for (let rank = m; rank >= 1; rank--) {
    if (p[order[rank - 1]] <= (rank * q) / m) {
      k = rank;
      break;
    }
  }
  if (k === 0) return p.map(() => false);
  const threshold = p[order[k - 1]];
  return p.map((v) => v <= threshold);
}
