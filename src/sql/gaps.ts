/**
 * The lifecycle as SQL sees it: a user's active periods and the quiet runs between them.
 *
 * SQL does not walk the machine period by period. It reads each active period with the one before
 * (window functions), and each quiet run as a span of periods. That is exact when the machine has
 * this shape, which {@link gapModel} asks of the tabulated machine (src/lifecycle/plan.ts) for the
 * rules at hand, and refuses otherwise:
 * - a user's first active period is in the `arrival` state;
 * - an active period right after an active one is `continuing`; after a quiet run, `returning`;
 * - the j-th quiet period after an active one is `lapse` while j ≤ lapseLimit, then `exit`.
 * The names come from the machine, so the SQL holds no state name of its own.
 */
import { compilePlan, planStep } from '../lifecycle/plan.js';
import type { Rules } from '../rules/schema.js';

export interface GapModel {
  /** Output states in matrix order (the machine's). */
  states: readonly string[];
  /** Indices into `states`. */
  arrival: number;
  continuing: number;
  returning: number;
  /** The quiet state within the lapse limit (absent when lapseLimit is 0: no quiet period is within it). */
  lapse: number;
  exit: number;
  lapseLimit: number;
}

/**
 * The gap model of the rules' machine.
 * @throws Error when the machine's answers do not have the shape described above (a machine change
 *   that the SQL compiler must follow).
 * @example gapModel({ lapseLimit: 2 }) // { arrival: 0, continuing: 1, returning: 2, lapse: 3, exit: 4, … }
 */
export function gapModel(rules: Pick<Rules, 'lapseLimit'>): GapModel {
  // the base machine: split sub-states share their state's transitions (src/lifecycle/machine.ts),
  // so the compiler picks a sub-state by the period's key events after the gap model gave the state
  const plan = compilePlan({ lapseLimit: rules.lapseLimit });
  const L = plan.lapseLimit;
  const ACTIVE = 1, QUIET = 0;
  const step = (code: number, idle: number, level: number) => planStep(plan, code, idle, level);
  const [arrivalCode] = step(0, 0, ACTIVE);
  const [continuingCode] = step(arrivalCode, 0, ACTIVE);
  // the quiet run after each active state
  const quietRun = (from: number): number[] => {
    const out: number[] = [];
    let code = from, idle = 0;
    for (let j = 1; j <= L + 2; j++) {
      [code, idle] = step(code, idle, QUIET);
      out.push(code);
    }
    return out;
  };
  const run = quietRun(arrivalCode);
  const lapseCode = L >= 1 ? run[0] : -1;
  const exitCode = run[L];
  const returnFromExit = step(exitCode, L, ACTIVE)[0];
  const problems: string[] = [];
  if (run.some((c, j) => c !== (j + 1 <= L ? lapseCode : exitCode))) problems.push('a quiet run is not lapse… then exit');
  if (L >= 1 && step(lapseCode, 0, ACTIVE)[0] !== returnFromExit) problems.push('a return from lapse and from exit differ');
  for (const from of [arrivalCode, continuingCode, returnFromExit]) {
    if (step(from, 0, ACTIVE)[0] !== continuingCode) problems.push(`an active period after ${plan.states[from - 1]} is not ${plan.states[continuingCode - 1]}`);
    if (quietRun(from).join() !== run.join()) problems.push(`the quiet run after ${plan.states[from - 1]} differs`);
  }
  if (new Set([arrivalCode, continuingCode, returnFromExit, exitCode]).size !== 4 || lapseCode === 0 || exitCode === 0) problems.push('states are not distinct');
  if (problems.length) throw new Error(`the lifecycle machine has a shape the SQL compiler does not model: ${problems.join('; ')}`);
  return {
    states: plan.states,
    arrival: arrivalCode - 1,
    continuing: continuingCode - 1,
    returning: returnFromExit - 1,
    lapse: lapseCode - 1,
    exit: exitCode - 1,
    lapseLimit: L,
  };
}
