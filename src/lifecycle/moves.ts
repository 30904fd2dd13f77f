/**
 * The moves between lifecycle states that the rules make possible, asked of the lifecycle machine.
 *
 * A move is a pair (state in one period, state in the next) for a user present in both, and the
 * activity that leads there. The machine is asked through its tabulation (`plan.ts`, filled by one
 * xstate `transition()` per (state, quiet count, activity)), walked from `unseen` over the reachable
 * tuples only: with lapseLimit 1 a lapsing user has been quiet exactly one period, so lapsing→lapsing
 * cannot happen; with lapseLimit 0 nobody is ever lapsing. Nothing here lists states or moves by hand.
 *
 * What-if scenarios use it to refuse a move the rules rule out (lapsing→engaged: a lapsing user who
 * is active becomes returned) and to suggest only moves that can happen.
 */
import { didYouMean } from '../errors.js';
import type { Rules } from '../rules/schema.js';
import { compilePlan, IDLE_ADD, IDLE_CLASSES, IDLE_RESET, periodLevels } from './plan.js';
import { UNSEEN } from './states.js';

export interface Move {
  from: string;
  to: string;
  /** Whether the user is active in the later period. */
  active: boolean;
}

export interface LifecycleMoves {
  /** Every possible move, in the order of the states. */
  moves: Move[];
  /** Every possible move as `from->to`. */
  list: string[];
  /** The states new users arrive in (their first active period). */
  arrivals: string[];
  /** States some user can be in. */
  reachable: string[];
  allows(from: string, to: string): boolean;
  /** Why `from->to` cannot happen, as one clause; '' when it can. */
  why(from: string, to: string): string;
  /** The possible move out of `from` that replaces `to` (same activity), if there is one. */
  instead(from: string, to: string): string | undefined;
}

/**
 * The possible moves under these rules.
 *
 * @example lifecycleMoves({ lapseLimit: 2 }).why('lapsing', 'engaged')
 *   // 'a lapsing user who is active the next period becomes returned'
 */
export function lifecycleMoves(rules: Pick<Rules, 'lapseLimit'> & { splits?: Rules['splits'] }): LifecycleMoves {
  const plan = compilePlan(rules);
  const names = [UNSEEN, ...plan.states];
  const L = plan.lapseLimit;
  // a node is (state code, idle class); one idle value stands for each class, and an added quiet
  // period from class 0 can stay in it or reach class 1 (the count may or may not reach the limit)
  const classes = (effect: number, cls: number): number[] => {
    if (effect === IDLE_RESET) return [L > 0 ? 0 : 1];
    if (effect === IDLE_ADD) return cls === 1 ? [1] : L >= 2 ? [0, 1] : [1];
    return [cls];
  };
  const seen = new Uint8Array(names.length * IDLE_CLASSES);
  const found = new Map<string, Move>();
  const arrivals = new Set<string>();
  const start = L > 0 ? 0 : 1; // (unseen, quiet 0)
  const queue = [start];
  seen[start] = 1;
  while (queue.length > 0) {
    const node = queue.pop() as number;
    const code = Math.floor(node / IDLE_CLASSES);
    const cls = node % IDLE_CLASSES;
    const from = names[code];
    periodLevels(rules).forEach((features, level) => {
      const j = node * plan.levels + level;
      const nextCode = plan.nextState[j];
      const to = names[nextCode];
      if (from === UNSEEN) {
        if (to !== UNSEEN) arrivals.add(to);
      } else found.set(`${from}->${to}`, { from, to, active: features.active });
      for (const c of classes(plan.idleEffect[j], cls)) {
        const next = nextCode * IDLE_CLASSES + c;
        if (!seen[next]) {
          seen[next] = 1;
          queue.push(next);
        }
      }
    });
  }
  const order = (s: string) => names.indexOf(s);
  const moves = [...found.values()].sort((a, b) => order(a.from) - order(b.from) || order(a.to) - order(b.to));
  const list = moves.map((m) => `${m.from}->${m.to}`);
  const reachable = plan.states.filter((s) => arrivals.has(s) || moves.some((m) => m.to === s));
  const targets = (from: string, active: boolean) => moves.filter((m) => m.from === from && m.active === active).map((m) => m.to);
  /** Whether moves into `to` come with activity (true), without (false), or never happen between states. */
  const entered = (to: string): boolean | undefined => moves.find((m) => m.to === to)?.active;
  const allows = (from: string, to: string) => found.has(`${from}->${to}`);
  return {
    moves,
    list,
    arrivals: [...arrivals],
    reachable,
    allows,
    why(from, to) {
      if (allows(from, to)) return '';
      if (!reachable.includes(from)) return `no user is ever ${from} under these rules`;
      const how = entered(to);
      if (how === undefined) {
        return arrivals.has(to) ? `only new users enter ${to} (their first active period); nobody moves into it from another state` : `no user is ever ${to} under these rules`;
      }
      return `${/^[aeiou]/i.test(from) ? 'an' : 'a'} ${from} user who is ${how ? 'active' : 'inactive'} the next period becomes ${targets(from, how).join(' or ')}`;
    },
    instead(from, to) {
      const how = entered(to);
      if (allows(from, to) || how === undefined || !reachable.includes(from)) return undefined;
      const options = targets(from, how);
      return options.length === 1 ? options[0] : didYouMean(to, options) ?? options[0];
    },
  };
}
