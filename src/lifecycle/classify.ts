/**
 * Classification: every user gets one state in every period from their first active period to the
 * end of the range, by walking the tabulated lifecycle machine ({@link ./plan.ts}).
 *
 * The output is columnar: one row per (user, period) from `outStart` on, where periods before
 * `outStart` still feed the states (history before --from is used, not shown).
 */
import type { ActivePeriods } from './activity.js';
import { applyIdle, IDLE_ADD, IDLE_CLASSES, IDLE_KEEP, IDLE_RESET, levelOf, type LifecyclePlan } from './plan.js';
import { baseState } from './states.js';

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
 * Walk each user's periods through the plan. Rows are emitted from `outStart` on; before it only the
 * state at `outStart` matters, so a quiet run there is crossed in a few steps rather than one a
 * period ({@link fastForward}): the cost of history before --from grows with the user's active
 * periods, not with the length of the range.
 * @param users number of user codes in the log
 * @param outStart first period offset to emit rows for
 */
export function classify(active: ActivePeriods, plan: LifecyclePlan, users: number, outStart = 0): Classified {
  const firstActive = firstActivePeriods(active, users);
  const size = classifiedSize(firstActive, active.span, outStart);
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
  walkUsers(active, plan, outStart, new RowWriter(out));
  return out;
}

/**
 * What a walk of the users ({@link walkUsers}) tells: each user's periods from max(first active,
 * outStart) to the end of the range in order, then the end of the user. Codes are plan codes (0 is
 * unseen, c ≥ 1 is plan.states[c − 1]).
 */
export interface WalkVisitor {
  /** User `u` is in state `code` at period offset `p` (≥ outStart), after `prevCode`; `first` is their first active offset. */
  row(u: number, p: number, code: number, prevCode: number, first: number): void;
  /**
   * User `u` stays in state `code` through the quiet periods [from, to) (all ≥ outStart): one row a
   * period, each after `code` itself (the plan's fixed point; the walk crosses it in one step).
   */
  quiet(u: number, from: number, to: number, code: number, first: number): void;
  /** User `u`'s periods are done: `dormantAt` is the offset of their first period in dormant, or -1. */
  endUser(u: number, first: number, dormantAt: number): void;
}

/** The visitor of {@link classify}: one row of the columns a period. */
class RowWriter implements WalkVisitor {
  private r = 0;
  constructor(private readonly out: Classified) {}
  row(u: number, p: number, code: number, prevCode: number, first: number): void {
    const o = this.out, r = this.r++;
    o.user[r] = u;
    o.period[r] = p;
    o.state[r] = code - 1;
    o.prev[r] = prevCode - 1;
    o.tenure[r] = p - first;
    o.cohort[r] = first;
  }
  quiet(u: number, from: number, to: number, code: number, first: number): void {
    for (let p = from; p < to; p++) this.row(u, p, code, code, first);
  }
  endUser(u: number, _first: number, dormantAt: number): void {
    this.out.firstDormant[u] = dormantAt;
  }
}

/**
 * Walk each user's periods through the plan (the loop of {@link classify}, which keeps every row;
 * the engine's counting pass keeps none). Before `outStart` only the state at `outStart` matters, so
 * a quiet run there is crossed in a few steps ({@link fastForward}).
 */
export function walkUsers(active: ActivePeriods, plan: LifecyclePlan, outStart: number, visit: WalkVisitor): void {
  const { span } = active;
  const { nextState, idleEffect, levels, lapseLimit: L } = plan;
  const dormantCode = plan.states.indexOf(baseState('exit')) + 1;
  const split = plan.thresholds.length > 0;
  const walker: Walker = { code: 0, idle: 0, dormantAt: -1 };
  const aUser = active.user, aOffset = active.offset, aEvents = active.events;
  let i = 0;
  const n = aUser.length;
  while (i < n) {
    const u = aUser[i];
    const first = aOffset[i];
    let code = 0; // unseen
    let idle = 0;
    let dormantAt = -1;
    let p = first;
    // the user's next active period (span when none is left)
    let nextActive = first;
    while (p < span) {
      const isActive = p === nextActive;
      if (!isActive && p < outStart) {
        const stop = Math.min(nextActive, outStart);
        walker.code = code;
        walker.idle = idle;
        walker.dormantAt = dormantAt;
        fastForward(plan, walker, p, stop - p, dormantCode);
        code = walker.code;
        idle = walker.idle;
        dormantAt = walker.dormantAt;
        p = stop;
        continue;
      }
      if (!isActive && p > first) {
        // a quiet period after another period: when the plan keeps the state and the idle count's class
        // (a fixed point), every quiet period up to the next active one gives the same row
        const j0 = (code * IDLE_CLASSES + (idle < L ? 0 : 1)) * levels;
        const e0 = idleEffect[j0];
        if (nextState[j0] === code && (e0 === IDLE_KEEP || (e0 === IDLE_ADD && idle >= L) || (e0 === IDLE_RESET && idle === 0))) {
          if (code === dormantCode && dormantAt < 0) dormantAt = p;
          visit.quiet(u, p, nextActive, code, first);
          p = nextActive;
          continue;
        }
      }
      let level = 0;
      if (isActive) {
        level = split ? levelOf(plan, true, aEvents[i]) : 1;
        i++;
        nextActive = i < n && aUser[i] === u ? aOffset[i] : span;
      }
      const prevCode = code;
      // one period through the plan (inlined planStep and applyIdle)
      const j = (prevCode * IDLE_CLASSES + (idle < L ? 0 : 1)) * levels + level;
      code = nextState[j];
      const effect = idleEffect[j];
      idle = effect === IDLE_RESET ? 0 : effect === IDLE_ADD ? (idle < L ? idle + 1 : L) : idle;
      if (code === dormantCode && dormantAt < 0) dormantAt = p;
      if (p >= outStart) visit.row(u, p, code, prevCode, first);
      p++;
    }
    visit.endUser(u, first, dormantAt);
  }
}

/** A user's position in the plan while walking. */
interface Walker {
  code: number;
  idle: number;
  /** Offset of the first period in dormant, or -1. */
  dormantAt: number;
}

/**
 * Move a walker through `quiet` inactive periods starting at offset `p`, in as many steps as the
 * (state, idle class) changes: while the state stays put, a run that only adds to the idle count is
 * crossed in one jump to the end of its class, and a fixed point ends the walk.
 */
export function fastForward(plan: LifecyclePlan, w: Walker, p: number, quiet: number, dormantCode: number): void {
  const L = plan.lapseLimit;
  let left = quiet;
  while (left > 0) {
    const cls = w.idle < L ? 0 : 1;
    const j = (w.code * IDLE_CLASSES + cls) * plan.levels;
    const code = plan.nextState[j];
    const effect = plan.idleEffect[j];
    if (code === w.code && (effect === IDLE_KEEP || (effect === IDLE_ADD && cls === 1) || (effect === IDLE_RESET && w.idle === 0))) return; // a fixed point
    if (code === w.code && effect === IDLE_ADD) {
      const k = Math.min(left, L - w.idle); // steps until the idle count reaches the next class
      w.idle += k;
      left -= k;
      continue;
    }
    w.code = code;
    w.idle = applyIdle(effect, w.idle, L);
    if (code === dormantCode && w.dormantAt < 0) w.dormantAt = p + (quiet - left);
    left--;
  }
}
