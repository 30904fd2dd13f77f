/**
 * Long-run counts under a constant inflow f per period: x(t+1) = x(t)·P + f.
 *
 * A fixed point x* = x*·P + f would need (I − P) invertible, which it never is for a row-stochastic P
 * (P·1 = 1). What does hold (Kemeny & Snell, *Finite Markov Chains*, ch. 3, transient states):
 * - on the transient states T, with Q = P_TT, (I − Q) is invertible and the counts tend to the
 *   finite limit x*_T = f_T·(I − Q)⁻¹, whatever the start;
 * - every closed class C keeps gaining g_C = f_C·1 + x*_T·P_TC·1 users a period, so its counts grow
 *   without bound (its shares tend to its stationary mix when it is aperiodic).
 *
 * The result says which case applies instead of returning a misleading number.
 */
import { assertCounts, assertStochastic } from './guards.js';
import { communicatingClasses } from './classes.js';
import { identityMinus, pick, solve, transpose, vecMat } from '../numerics/linalg.js';
import { fmt, nameSet } from './names.js';
import type { Chain, Vector } from './types.js';

export interface SteadyCounts {
  /** `growing`: some closed class gains users every period; `no-inflow`: f = 0, the total stays as started. */
  kind: 'growing' | 'no-inflow';
  /** Limit count of each transient state (x*_T); null for states of closed classes, which have no finite limit to report. */
  transient: (number | null)[];
  /** Users each closed class gains per period in the long run (0 when no inflow ends there). */
  closed: { states: number[]; growthPerPeriod: number }[];
  sentence: string;
}

/**
 * Long-run counts with constant inflow: finite limits for transient states, growth rates for closed
 * classes.
 *
 * @throws TidemarkError `MATRIX_INVALID` for a matrix that is not row-stochastic; `INPUT_INVALID` for
 *   an inflow that is not one finite count ≥ 0 per state.
 * @example steadyCounts({ states: ['fresh', 'engaged', 'dormant'],
 *   matrix: [[0, 0.8, 0.2], [0, 0.5, 0.5], [0, 0, 1]] }, [100, 0, 0])
 *   // transient: [100, 160, null]; closed: [{ states: [2], growthPerPeriod: 100 }]
 */
export function steadyCounts(chain: Chain, inflow: Vector): SteadyCounts {
  const { states, matrix } = chain;
  assertStochastic(matrix, states);
  assertCounts(inflow, states.length, 'inflow', states);
  const classes = communicatingClasses(matrix);
  const t = classes.filter((c) => !c.closed).flatMap((c) => c.states).sort((a, b) => a - b);
  const limitT = t.length ? solve(transpose(identityMinus(pick(matrix, t, t))), t.map((i) => inflow[i])) : [];
  const transient: (number | null)[] = states.map(() => null);
  t.forEach((s, k) => (transient[s] = limitT[k]));
  const flowOut = vecMat(limitT, pick(matrix, t, states.map((_, i) => i)));
  const closed = classes
    .filter((c) => c.closed)
    .map((c) => ({ states: c.states, growthPerPeriod: c.states.reduce((s, i) => s + inflow[i] + flowOut[i], 0) }));
  const total = inflow.reduce((a, b) => a + b, 0);
  if (total === 0) {
    return { kind: 'no-inflow', transient, closed, sentence: 'Without inflow the total stays as started: transient states empty out and the closed classes keep what reaches them; use the stationary shares for the mix.' };
  }
  const growing = closed.filter((c) => c.growthPerPeriod > 0).map((c) => `${nameSet(states, c.states)} by ${fmt(c.growthPerPeriod)}`);
  return {
    kind: 'growing',
    transient,
    closed,
    sentence: `With ${fmt(total)} new users a period the counts never settle: ${growing.join(', ')} a period without limit${t.length ? `, while ${nameSet(states, t)} tend to fixed counts` : ''}.`,
  };
}
