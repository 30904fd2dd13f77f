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
 * The feature tuple is (active). A later split of an active state by events in the period adds
 * levels to {@link PERIOD_LEVELS} (say, active with few / with many events); nothing else changes.
 */
import { transition } from 'xstate';
import type { Rules } from '../rules/schema.js';
import { lifecycleMachine, type LifecycleEvent } from './machine.js';
import { STATES, UNSEEN } from './states.js';

/** The period's features, one level each: level 0 is an inactive period, level 1 an active one. */
export const PERIOD_LEVELS: readonly Omit<LifecycleEvent, 'type'>[] = [{ active: false }, { active: true }];
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
  /** Levels of the period feature (PERIOD_LEVELS.length). */
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

/** Tabulate the machine for these rules: 6 states × 2 idle classes × 2 levels entries, each asked twice. */
export function compilePlan(rules: Pick<Rules, 'lapseLimit'>): LifecyclePlan {
  const machine = lifecycleMachine(rules);
  const names = [UNSEEN, ...STATES];
  const L = rules.lapseLimit;
  const levels = PERIOD_LEVELS.length;
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
          const [after] = transition(machine, snapshot, { type: 'PERIOD', ...PERIOD_LEVELS[level] });
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
  return { states: STATES, lapseLimit: L, levels, nextState, idleEffect };
}
