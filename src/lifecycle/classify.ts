/**
 * Classification: every user gets one state in every period from their first active period to the
 * end of the range, by walking the tabulated lifecycle machine ({@link ./plan.ts}).
 *
 * The output is columnar: one row per (user, period) from `outStart` on, where periods before
 * `outStart` still feed the states (history before --from is used, not shown).
 */
import type { ActivePeriods } from './activity.js';
import type { LifecyclePlan } from './plan.js';

export interface Classified {
  /** Number of rows. */
  size: number;
  user: Int32Array;
  /** Period offset within the range. */
  period: Int32Array;
  /** State code: index into plan.states. */
  state: Uint8Array;
  /** State code in the period before, or -1 when the user was not yet seen. */
  prev: Int8Array;
  /** Periods since the user's first active period (0 in it). */
  tenure: Int32Array;
  /** Period offset of the user's first active period. */
  cohort: Int32Array;
  /** Per user (by user code): offset of the first period in dormant, -1 if never; -2 if never active. */
  firstDormant: Int32Array;
  /** Per user: offset of the first active period, -1 if never active. */
  firstActive: Int32Array;
}

/** Per user code: the offset of the first active period, or -1. */
export function firstActivePeriods(active: ActivePeriods, users: number): Int32Array {
  const firstActive = new Int32Array(users).fill(-1);
  for (let i = active.user.length - 1; i >= 0; i--) firstActive[active.user[i]] = active.offset[i];
  return firstActive;
}

/** Rows the classification emits: each user's periods from max(first active, outStart) to the end. */
export function classifiedSize(firstActive: Int32Array, span: number, outStart: number): number {
  let size = 0;
  for (let u = 0; u < firstActive.length; u++) if (firstActive[u] >= 0) size += span - Math.max(firstActive[u], outStart);
  return size;
}

/**
 * Walk each user's periods through the plan.
 * @param users number of user codes in the log
 * @param outStart first period offset to emit rows for
 */
export function classify(active: ActivePeriods, plan: LifecyclePlan, users: number, outStart = 0): Classified {
  const { span } = active;
  const L = plan.idleLevels;
  const firstActive = firstActivePeriods(active, users);
  const size = classifiedSize(firstActive, span, outStart);
  const out: Classified = {
    size,
    user: new Int32Array(size),
    period: new Int32Array(size),
    state: new Uint8Array(size),
    prev: new Int8Array(size),
    tenure: new Int32Array(size),
    cohort: new Int32Array(size),
    firstDormant: new Int32Array(users).fill(-2),
    firstActive,
  };
  const dormantCode = plan.states.indexOf('dormant') + 1;
  let row = 0;
  let i = 0;
  const n = active.user.length;
  while (i < n) {
    const u = active.user[i];
    const first = active.offset[i];
    let cur = 0; // unseen, idle 0
    let dormantAt = -1;
    for (let p = first; p < span; p++) {
      const isActive = i < n && active.user[i] === u && active.offset[i] === p;
      if (isActive) i++;
      const prevCode = Math.floor(cur / L);
      cur = plan.next[cur * 2 + (isActive ? 1 : 0)];
      const code = Math.floor(cur / L);
      if (code === dormantCode && dormantAt < 0) dormantAt = p;
      if (p >= outStart) {
        out.user[row] = u;
        out.period[row] = p;
        out.state[row] = code - 1;
        out.prev[row] = prevCode - 1;
        out.tenure[row] = p - first;
        out.cohort[row] = first;
        row++;
      }
    }
    out.firstDormant[u] = dormantAt;
  }
  return out;
}
