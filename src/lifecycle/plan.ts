/**
 * A lookup table filled from the lifecycle machine: the machine stays the source of truth, the hot
 * loop reads two small typed arrays.
 *
 * The machine's answer depends on (state, idle, the period's features), and its guards read `idle`
 * only through `idle + 1 ≤ lapseLimit` (see machine.ts). So idle values fall into two classes —
 * below the lapse limit, and at or beyond it — and the table is kept per class, not per idle value:
 * its size, and the time to fill it, do not depend on the lapse limit. The table stores the next
 * state and what happens to the idle count (reset, add one, keep); the walker keeps the count
 * itself as an integer that saturates at the lapse limit (every value beyond it is in the same
 * class). Each entry is asked of the machine at both ends of its class, and a disagreement (a
 * machine whose guards read idle in some other way) throws rather than tabulating a wrong answer.
 *
 * The feature tuple is the period's level: 0 inactive, 1 active, and one more level per distinct
 * threshold of the rules' splits (an active period with at least that many key events), see
 * {@link periodLevels}. Without splits there are two levels.
 */
import { transition } from 'xstate';
import type { Rules } from '../rules/schema.js';
import { lifecycleMachine, type LifecycleEvent } from './machine.js';
import { splitThresholds, stateNames, UNSEEN, type StateRules } from './states.js';

/** The period's features without splits: level 0 is an inactive period, level 1 an active one. */
export const PERIOD_LEVELS: readonly Omit<LifecycleEvent, 'type'>[] = [{ active: false, events: 0 }, { active: true, events: 0 }];

/**
 * The period's features for these rules, one level each: inactive; active; and active with at least
 * each split threshold of key events (ascending). A period's level is found with {@link levelOf}.
 */
export function periodLevels(rules: Pick<StateRules, 'splits'>): Omit<LifecycleEvent, 'type'>[] {
  return [...PERIOD_LEVELS, ...splitThresholds({ lapseLimit: 0, activity: { minEvents: 1 }, splits: rules.splits }).map((t) => ({ active: true, events: t }))];
}

/** The level of a period: 0 when inactive, else 1 + the thresholds its key events reach. */
export function levelOf(plan: Pick<LifecyclePlan, 'thresholds'>, active: boolean, events: number): number {
  if (!active) return 0;
  let level = 1;
  for (let i = 0; i < plan.thresholds.length && events >= plan.thresholds[i]; i++) level++;
  return level;
}
/** Idle classes: 0 while idle < lapseLimit (one more quiet period is still within the lapse), 1 beyond. */
export const IDLE_CLASSES = 2;
/** What a transition does to the idle count. */
export const IDLE_RESET = 0;
export const IDLE_ADD = 1;
export const IDLE_KEEP = 2;

export interface LifecyclePlan {
  /** Output states, in matrix order. Code 0 is `unseen`; code c ≥ 1 is STATES[c − 1]. */
  states: readonly string[];
  lapseLimit: number;
  /** Split thresholds, ascending (levels 2, 3, … are at least these many key events). */
  thresholds: Int32Array;
  /** Levels of the period feature (periodLevels(rules).length). */
  levels: number;
  /** nextState[(code · IDLE_CLASSES + idleClass) · levels + level]: the next state's code. */
  nextState: Uint8Array;
  /** idleEffect[same index]: IDLE_RESET, IDLE_ADD or IDLE_KEEP. */
  idleEffect: Uint8Array;
}

/** The idle class of an idle count. */
export function idleClass(plan: Pick<LifecyclePlan, 'lapseLimit'>, idle: number): number {
  return idle < plan.lapseLimit ? 0 : 1;
}

/** One period through the plan: (code, idle) → (code, idle), idle saturating at the lapse limit. */
export function planStep(plan: LifecyclePlan, code: number, idle: number, level: number): [number, number] {
  const j = (code * IDLE_CLASSES + idleClass(plan, idle)) * plan.levels + level;
  return [plan.nextState[j], applyIdle(plan.idleEffect[j], idle, plan.lapseLimit)];
}

/** The idle count after an effect, saturating at `lapseLimit`. */
export function applyIdle(effect: number, idle: number, lapseLimit: number): number {
  return effect === IDLE_RESET ? 0 : effect === IDLE_ADD ? (idle < lapseLimit ? idle + 1 : lapseLimit) : idle;
}

/** Tabulate the machine for these rules: (states + 1) × 2 idle classes × levels entries, each asked twice. */
export function compilePlan(rules: Pick<Rules, 'lapseLimit'> & { splits?: StateRules['splits'] }): LifecyclePlan {
  const machine = lifecycleMachine(rules);
  const states = stateNames({ lapseLimit: rules.lapseLimit, activity: { minEvents: 1 }, splits: rules.splits });
  const names = [UNSEEN, ...states];
  const L = rules.lapseLimit;
  const LEVELS = periodLevels(rules);
  const levels = LEVELS.length;
  const size = names.length * IDLE_CLASSES * levels;
  const nextState = new Uint8Array(size);
  const idleEffect = new Uint8Array(size);
  // both ends of each class; class 0 is empty when lapseLimit is 0 (its entries are never read)
  const members: [number, number][] = [[0, Math.max(0, L - 1)], [L, L + 1]];
  for (let code = 0; code < names.length; code++) {
    for (let cls = 0; cls < IDLE_CLASSES; cls++) {
      for (let level = 0; level < levels; level++) {
        const answers = members[cls].map((idle) => {
          const snapshot = machine.resolveState({ value: names[code], context: { idle } });
          const [after] = transition(machine, snapshot, { type: 'PERIOD', ...LEVELS[level] });
          return { idle, code: names.indexOf(String(after.value)), after: after.context.idle };
        });
        const effect = [IDLE_RESET, IDLE_ADD, IDLE_KEEP].find((e) => answers.every((a) => a.after === (e === IDLE_RESET ? 0 : e === IDLE_ADD ? a.idle + 1 : a.idle)));
        if (effect === undefined || answers.some((a) => a.code !== answers[0].code || a.code < 0)) {
          throw new Error(`the lifecycle machine reads idle in a way the plan does not model (state ${names[code]}, idle class ${cls}, level ${level})`);
        }
        const j = (code * IDLE_CLASSES + cls) * levels + level;
        nextState[j] = answers[0].code;
        idleEffect[j] = effect;
      }
    }
  }
  return { states, lapseLimit: L, thresholds: Int32Array.from(LEVELS.slice(2).map((l) => l.events)), levels, nextState, idleEffect };
}
