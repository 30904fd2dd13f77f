/** Test helper: an exhaustive walk of the xstate machine, independent of moves.ts and plan.ts. */
import { initialTransition, transition } from 'xstate';
import { lifecycleMachine } from '../../src/lifecycle/machine.js';

/**
 * Every move the xstate machine itself makes (not its tabulation), over every activity sequence of
 * up to `length` periods: an exhaustive walk, independent of moves.ts and plan.ts.
 */
export function walkedMoves(lapseLimit: number, length: number): { moves: Set<string>; arrivals: Set<string> } {
  const m = lifecycleMachine({ lapseLimit });
  const moves = new Set<string>();
  const arrivals = new Set<string>();
  for (let bits = 0; bits < 2 ** length; bits++) {
    let [snap] = initialTransition(m);
    for (let p = 0; p < length; p++) {
      const before = String(snap.value);
      [snap] = transition(m, snap, { type: 'PERIOD', active: Boolean((bits >> p) & 1), events: (bits >> p) & 1 });
      const after = String(snap.value);
      if (before === 'unseen') {
        if (after !== 'unseen') arrivals.add(after);
      } else moves.add(`${before}->${after}`);
    }
  }
  return { moves, arrivals };
}
