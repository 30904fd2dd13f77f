/**
 * Confidence interval for a difference of two independent proportions p₁ − p₂: the hybrid score
 * interval without continuity correction, method 10 of Newcombe (1998b), "Interval estimation for
 * the difference between independent proportions: comparison of eleven methods", Statistics in
 * Medicine 17:873–890.
 *
 * With Wilson limits (l₁, u₁) for p₁ and (l₂, u₂) for p₂ and d = p₁ − p₂:
 *   lower = d − √((p₁ − l₁)² + (u₂ − p₂)²),   upper = d + √((u₁ − p₁)² + (p₂ − l₂)²).
 */
import { wilsonInterval } from './wilson.js';

export interface DifferenceInterval {
  /** p₁ − p₂. */
  difference: number;
  lower: number;
  upper: number;
}

/**
 * Newcombe's hybrid score interval for (x1/n1) − (x2/n2).
 *
 * @throws {TidemarkError} INPUT_INVALID for invalid counts or level; NOT_ENOUGH_DATA when n1 or n2
 *   is 0 (see `counts.ts`).
 * @example newcombeDifference(56, 70, 48, 80) // { difference: 0.2, lower: 0.0524…, upper: 0.3339… } (Newcombe 1998b)
 */
export function newcombeDifference(x1: number, n1: number, x2: number, n2: number, confidence = 0.95): DifferenceInterval {
  const a = wilsonInterval(x1, n1, confidence);
  const b = wilsonInterval(x2, n2, confidence);
  const d = a.estimate - b.estimate;
  const down = Math.hypot(a.estimate - a.lower, b.upper - b.estimate);
  const up = Math.hypot(a.upper - a.estimate, b.estimate - b.lower);
  return { difference: d, lower: Math.max(-1, d - down), upper: Math.min(1, d + up) };
}
