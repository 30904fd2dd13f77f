/**
 * Status-split retention over one transition: for each active state s, the share of users in s at
 * t−1 who are active at t. r_s = Σ_{j active} counts[s][j] / Σ_j counts[s][j]; null when n = 0.
 * Example: fresh row [0, 30, 0, 70, 0] (to fresh, engaged, returned, lapsing, dormant) → 30/100 = 0.3.
 */
import type { TransitionCounts } from './types.js';

export interface StateRetention {
  n: number;
  retained: number;
  rate: number | null;
}

export function statusRetention(t: TransitionCounts, states: readonly string[], activeStates: readonly string[]): Record<string, StateRetention> {
  const active = states.map((s) => activeStates.includes(s));
  const out: Record<string, StateRetention> = {};
  for (const s of activeStates) {
    const i = states.indexOf(s);
    const row = t.counts[i];
    const n = row.reduce((a, b) => a + b, 0);
    const retained = row.reduce((a, v, j) => a + (active[j] ? v : 0), 0);
    out[s] = { n, retained, rate: n === 0 ? null : retained / n };
  }
  return out;
}
