/**
 * Expected periods until first reaching a target set A (Grinstead & Snell, *Introduction to
 * Probability*, §11.2, absorbing chains). Make A absorbing; for the states S that reach A with
 * probability 1, with Q = P_SS:
 * - fundamental matrix N = (I − Q)⁻¹: N[i][j] is the expected number of periods spent in j before
 *   reaching A, starting from i;
 * - expected periods to reach A: t = N·1;
 * - first-entry probabilities B = N·R with R = P_SA: B[i][a] is the chance that a ∈ A is the first
 *   target state reached.
 *
 * A state that may never reach A (hitting probability h < 1: it can wander into a closed set outside
 * A) has an infinite expectation; it gets `null` and a reason instead of a number. Hitting
 * probabilities solve h_U = (I − P_UU)⁻¹·P_UA·1 over the states U that are transient once A is
 * absorbing (Norris, *Markov Chains*, Theorem 1.3.2).
 */
import { TidemarkError, suggestion } from '../errors.js';
import { assertStochastic } from './guards.js';
import { communicatingClasses } from './classes.js';
import { identityMinus, inverse, matVec, pick, solveMany } from '../numerics/linalg.js';
import { fmt, nameSet } from './names.js';
import type { Chain, Matrix, Vector } from './types.js';

export interface FirstPassage {
  /** Target state indices, ascending. */
  target: number[];
  /** expected[i]: expected periods to reach the target from i; 0 on the target; null when infinite. */
  expected: (number | null)[];
  /** reach[i]: probability of ever reaching the target from i (1 on the target). */
  reach: Vector;
  /** States (ascending) that reach the target surely and are not in it: the rows and columns of N. */
  transient: number[];
  /** N = (I − Q)⁻¹ over `transient`. */
  fundamental: Matrix;
  /** absorption[k][a]: for transient[k], probability that target[a] is the first target state reached. */
  absorption: Matrix;
  /** States whose expected time is infinite, with the reason. */
  infinite: { state: number; reach: number; reason: string }[];
}

/**
 * First passage to a target state or set of states, by name.
 *
 * @throws TidemarkError `MATRIX_INVALID` for a matrix that is not row-stochastic; `INPUT_INVALID` for
 *   an empty target or an unknown target name (with "did you mean").
 * @example firstPassage(drunkardsWalk, ['0', '4']).expected // [0, 3, 4, 3, 0]
 *   (Grinstead & Snell, Example 11.14: t = (3, 4, 3) from states 1, 2, 3)
 */
export function firstPassage(chain: Chain, target: string | readonly string[]): FirstPassage {
  const { states, matrix } = chain;
  assertStochastic(matrix, states);
  const a = resolveTargets(states, typeof target === 'string' ? [target] : target);
  const inA = states.map((_, i) => a.includes(i));
  const absorbed = matrix.map((row, i) => (inA[i] ? row.map((_, j) => (i === j ? 1 : 0)) : row));
  const traps = communicatingClasses(absorbed).filter((c) => c.closed && !inA[c.states[0]]).flatMap((c) => c.states);
  const canTrap = reachesAny(absorbed, traps);
  const u = states.map((_, i) => i).filter((i) => !inA[i] && !traps.includes(i));
  const hU = u.length ? solveMany(identityMinus(pick(matrix, u, u)), pick(matrix, u, a).map((r) => [r.reduce((x, y) => x + y, 0)])) : [];
  const reach: Vector = states.map((_, i) => (inA[i] ? 1 : 0));
  const canReach = reachesAny(absorbed, a);
  u.forEach((s, k) => (reach[s] = !canTrap[s] ? 1 : canReach[s] ? Math.min(1, Math.max(0, hU[k][0])) : 0));
  const sure = u.filter((i) => !canTrap[i]);
  const n = sure.length ? inverse(identityMinus(pick(matrix, sure, sure))) : [];
  const t = matVec(n, sure.map(() => 1));
  const expected: (number | null)[] = states.map((_, i) => (inA[i] ? 0 : null));
  sure.forEach((s, k) => (expected[s] = t[k]));
  const absorption = sure.length ? n.map((row) => a.map((j) => row.reduce((acc, v, k) => acc + v * matrix[sure[k]][j], 0))) : [];
  const goal = nameSet(states, a);
  const infinite = states
    .map((_, i) => i)
    .filter((i) => expected[i] === null)
    .map((i) => ({
      state: i,
      reach: reach[i],
      reason: reach[i] === 0 ? `'${states[i]}' can never reach ${goal}` : `'${states[i]}' reaches ${goal} with probability ${fmt(reach[i])} only, so the expected time is infinite`,
    }));
  return { target: a, expected, reach, transient: sure, fundamental: n, absorption, infinite };
}

function resolveTargets(states: readonly string[], names: readonly string[]): number[] {
  if (names.length === 0) throw new TidemarkError('INPUT_INVALID', 'first passage needs at least one target state', { key: 'target' });
  const idx = names.map((name) => {
    const i = states.indexOf(name);
    if (i < 0) throw new TidemarkError('INPUT_INVALID', `unknown target state '${name}'`, { key: 'target' }, suggestion(name, states) ?? `states are: ${states.join(', ')}`);
    return i;
  });
  return [...new Set(idx)].sort((x, y) => x - y);
}

/** reaches[i]: whether i can reach any state of `set` along edges P > 0 (i ∈ set counts). */
function reachesAny(matrix: Matrix, set: readonly number[]): boolean[] {
  const out = matrix.map((_, i) => set.includes(i));
  for (let changed = true; changed; ) {
    changed = false;
    matrix.forEach((row, i) => {
      if (!out[i] && row.some((p, j) => p > 0 && out[j])) changed = out[i] = true;
    });
  }
  return out;
}
