/**
 * A lookup table filled from the lifecycle machine: the machine stays the source of truth, the hot
 * loop reads an Int32Array.
 *
 * The machine's answer depends only on (state, active, idle), and `idle` matters only up to
 * lapseLimit + 1 (the guard compares idle + 1 with lapseLimit), so idle is clamped there. The table
 * has (states + 1) × (lapseLimit + 2) × 2 entries; each is found by one pure xstate `transition()`.
 */
import { transition } from 'xstate';
import type { Rules } from '../rules/schema.js';
import { lifecycleMachine } from './machine.js';
import { STATES, UNSEEN } from './states.js';

export interface LifecyclePlan {
  /** Output states, in matrix order. Code 0 is `unseen`; code c ≥ 1 is STATES[c − 1]. */
  states: readonly string[];
  /** Idle values kept apart: 0 … lapseLimit + 1. */
  idleLevels: number;
  /** next[(code · idleLevels + idle) · 2 + active] = nextCode · idleLevels + nextIdle. */
  next: Int32Array;
}

/** Tabulate the machine for these rules. */
export function compilePlan(rules: Pick<Rules, 'lapseLimit'>): LifecyclePlan {
  const machine = lifecycleMachine(rules);
  const names = [UNSEEN, ...STATES];
  const idleLevels = rules.lapseLimit + 2;
  const next = new Int32Array(names.length * idleLevels * 2);
  for (let code = 0; code < names.length; code++) {
    for (let idle = 0; idle < idleLevels; idle++) {
      const snapshot = machine.resolveState({ value: names[code], context: { idle } });
      for (const active of [0, 1]) {
        const [after] = transition(machine, snapshot, { type: 'PERIOD', active: active === 1 });
        const nextCode = names.indexOf(String(after.value));
        const nextIdle = Math.min(after.context.idle, idleLevels - 1);
        next[(code * idleLevels + idle) * 2 + active] = nextCode * idleLevels + nextIdle;
      }
    }
  }
  return { states: STATES, idleLevels, next };
}
