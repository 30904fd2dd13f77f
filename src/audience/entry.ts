/**
 * What "entered state S at period P" means, checked against the rules before any event is read.
 *
 * A user *entered* S at P when their state at P is S and their state in the period before was not S:
 * either another state, or none at all (P is their first active period: a new user entering the
 * arrival state). A split state's sub-states are states of their own: a user who goes from `steady` to
 * `keen` entered `keen`. The name of the split state itself stands for both sub-states together: a
 * user entered it when their state at P is either sub-state and the one before was neither (so
 * `steady` → `keen` did not enter `engaged`). `--from-state X` keeps the users whose state in the
 * period before was X (or, for a split state's name, either sub-state).
 *
 * The possible entries are asked of the lifecycle machine (`lifecycle/moves.ts`): an entry that the
 * rules rule out (`--entered engaged --from-state lapsing`: a lapsing user who is active becomes
 * returned) is refused with the reason, and the suggestions are entries that can happen.
 */
import { TidemarkError, showValue, suggestion } from '../errors.js';
import { lifecycleMoves, type LifecycleMoves } from '../lifecycle/moves.js';
import { stateNames, statesOf } from '../lifecycle/states.js';
import type { Rules } from '../rules/schema.js';

/** The parts of the rules that decide the states and their moves. */
export type EntryRules = Pick<Rules, 'lapseLimit' | 'activity' | 'splits'>;

export interface EntrySpec {
  /** The name asked for (a state, or a split state's name). */
  entered: string;
  /** The states a user may be in at P: the state, or a split state's two sub-states. */
  into: string[];
  /** `--from-state`: its name and the states it stands for (those in `into` left out); absent: any. */
  from?: { name: string; states: string[] };
  /** Whether new users (P is their first active period) can be in the list. */
  newUsers: boolean;
  /** One sentence saying who is listed. */
  definition: string;
}

/** Names a rules set accepts for --entered and --from-state: its states, and the names of its split states. */
export function entryNames(rules: EntryRules): string[] {
  return [...stateNames(rules), ...(rules.splits ?? []).map((s) => s.state)];
}

/** The states `name` stands for: itself, or a split state's two sub-states. */
function statesNamed(rules: EntryRules, name: string, key: 'entered' | 'fromState'): string[] {
  const names = entryNames(rules);
  if (!names.includes(name)) {
    throw new TidemarkError('INPUT_INVALID', `'${showValue(name, 40)}' is not a state of these rules`, { key }, suggestion(name, names) ?? `States are: ${names.join(', ')}`);
  }
  return statesOf(rules, name);
}

const article = (s: string) => (/^[aeiou]/i.test(s) ? 'an' : 'a');
const list = (xs: readonly string[]) => (xs.length <= 1 ? xs.join('') : `${xs.slice(0, -1).join(', ')} or ${xs[xs.length - 1]}`);

/** The names (states and split states) users can enter, under these moves. */
function enterable(rules: EntryRules, moves: LifecycleMoves): string[] {
  return entryNames(rules).filter((n) => {
    const into = statesOf(rules, n);
    return into.some((s) => moves.arrivals.includes(s)) || moves.moves.some((m) => into.includes(m.to) && !into.includes(m.from));
  });
}

/**
 * Check `--entered` and `--from-state` against the rules and say who is listed.
 * @throws TidemarkError INPUT_INVALID (key `entered` or `fromState`) for an unknown name (with "did you
 *   mean"), a state nobody enters under these rules, a `--from-state` inside the entered state, or an
 *   entry from that state that cannot happen; the hint names entries that can.
 * @example entrySpec({ lapseLimit: 2, activity: { minEvents: 1 } }, 'dormant', 'lapsing').definition
 *   // 'users who are dormant in the period and were lapsing the period before'
 */
export function entrySpec(rules: EntryRules, entered: string, fromState?: string): EntrySpec {
  const into = statesNamed(rules, entered, 'entered');
  const moves = lifecycleMoves(rules);
  const newUsers = into.some((s) => moves.arrivals.includes(s));
  const fromOutside = moves.moves.filter((m) => into.includes(m.to) && !into.includes(m.from));
  const can = enterable(rules, moves);
  if (!newUsers && fromOutside.length === 0) {
    const never = into.every((s) => !moves.reachable.includes(s));
    throw new TidemarkError('INPUT_INVALID', never ? `no user is ever ${entered} under these rules` : `nobody enters ${entered} under these rules`, { key: 'entered' }, `States users can enter: ${can.join(', ')}`);
  }
  const what = into.length > 1 ? `${list(into)} (${entered})` : entered;
  if (fromState === undefined) {
    const definition = !fromOutside.length
      ? `new users, who are ${what} in their first active period`
      : `users who are ${what} in the period and were not the period before${newUsers ? ', new users (in their first active period) included' : ''}`;
    return { entered, into, newUsers, definition };
  }
  const named = statesNamed(rules, fromState, 'fromState');
  const from = named.filter((s) => !into.includes(s));
  if (from.length === 0) {
    throw new TidemarkError('INPUT_INVALID', `a user who was ${fromState} the period before and is ${entered} now has not entered ${entered}: they stayed`, { key: 'fromState' },
      `Users enter ${entered} from: ${[...new Set(fromOutside.map((m) => m.from))].join(', ') || 'nowhere (only new users)'}`);
  }
  const possible = fromOutside.filter((m) => from.includes(m.from));
  if (possible.length === 0) {
    // the reason, for the most telling pair: a state of `from` some user is in, into the entered one
    const x = from.find((s) => moves.reachable.includes(s)) ?? from[0];
    // sub-states of a split state share their moves, so the first one gives the reason for all
    const reason = moves.why(x, into[0]) || `${article(x)} ${x} user never becomes ${list(into)} the next period`;
    const sources = [...new Set(fromOutside.map((m) => m.from))];
    const targets = can.filter((n) => {
      const ns = statesOf(rules, n);
      return moves.moves.some((m) => from.includes(m.from) && ns.includes(m.to) && !ns.includes(m.from));
    });
    const hints = [
      sources.length ? `users enter ${entered} from ${list(sources)}` : `only new users enter ${entered}: drop --from-state`,
      targets.length ? `users who were ${fromState} enter ${list(targets)}` : '',
    ].filter(Boolean);
    throw new TidemarkError('INPUT_INVALID', `nobody enters ${entered} from ${fromState}: ${reason}`, { key: 'fromState' }, hints.join('; '));
  }
  const fromWhat = named.length > 1 ? `${list(from)} (${fromState})` : fromState;
  return { entered, into, from: { name: fromState, states: from }, newUsers: false, definition: `users who are ${what} in the period and were ${fromWhat} the period before` };
}
