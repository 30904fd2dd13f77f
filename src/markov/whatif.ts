/**
 * What-if: edit a model's transition probabilities or inflow and project baseline and scenario side
 * by side.
 *
 * Decisions, in full:
 * - scaling `A->B*k` needs P[A][B] > 0 (scaling a 0 changes nothing, so it is refused and the message
 *   suggests setting it); the scaled value must stay ≤ 1;
 * - setting `A->B=p` is allowed even where P[A][B] = 0 (a deliberate new route); p must be in [0, 1];
 * - the rest of each edited row is rescaled by {@link reweightRow}: edited entries are kept, the
 *   others keep their proportions and fill the row up to 1 (remainder to the diagonal if they are
 *   all 0). Several edits of one row are pinned together, so their order does not matter unless they
 *   touch the same entry (then they apply in order: `A->B=0.2, A->B*2` gives 0.4);
 * - `inflow*k` scales every state's inflow; `inflow=N` sets the total and keeps the split across
 *   states (refused when the inflow is 0 everywhere: there is no split to keep, name the state with
 *   `inflow.STATE=N`); `inflow.STATE*k` needs that state's inflow > 0, `inflow.STATE=N` any N ≥ 0;
 * - `+N STATE at +k` adds N users to STATE in the k-th period ahead (k within the horizon);
 * - with {@link MoveRules} (a chain of lifecycle states: `lifecycle/moves.ts`), an edit of a move the
 *   rules make impossible is refused with the reason, inflow and campaigns go only into the arrival
 *   states, no rescaled row may put weight on an impossible move, and every suggestion is a possible move.
 */
import { TidemarkError, showValue, suggestion } from '../errors.js';
import { assertCounts, assertInteger, assertStochastic } from './guards.js';
import { fmt } from './names.js';
import { projectUnchecked, projectVarying } from './project.js';
import { reweightRow } from './reweight.js';
import { parseScenario, type Edit } from './scenario.js';
import type { Chain, Matrix, Projection, Vector } from './types.js';

export interface ScenarioModel extends Chain {
  inflow: Vector;
  /** The moves the states allow; without it every move is allowed (a planner's own chain). */
  moves?: MoveRules;
}

/** Which moves between the model's states can happen (see `lifecycle/moves.ts`). */
export interface MoveRules {
  /** Every possible move as `from->to`. */
  list: readonly string[];
  /** The states new users arrive in. */
  arrivals: readonly string[];
  allows(from: string, to: string): boolean;
  /** Why `from->to` cannot happen, one clause. */
  why(from: string, to: string): string;
  /** The target of the possible move out of `from` that replaces `to`, if any. */
  instead(from: string, to: string): string | undefined;
}

/**
 * Checks the state names and moves of parsed edits, before any number is looked at: every state is
 * one of `states`, and with `moves` every edited move can happen and every inflow state is an arrival
 * state. Suggestions name only possible moves.
 *
 * @throws TidemarkError `INPUT_INVALID` (key `scenario`) naming the edit, the reason and, when there
 *   is one, a possible move to use instead.
 * @example checkEdits(parseScenario(['lapsing->engaged*1.2']), STATES, lifecycleMoves({ lapseLimit: 2 }))
 *   // throws: lapsing->engaged cannot happen: a lapsing user who is active the next period becomes returned
 */
export function checkEdits(edits: readonly Edit[], states: readonly string[], moves?: MoveRules): void {
  for (const e of edits) {
    if (e.target === 'transition') {
      const unknown = [e.from, e.to].find((s) => !states.includes(s));
      const suffix = e.text.slice(Math.max(e.text.lastIndexOf('*'), e.text.lastIndexOf('=')));
      if (unknown !== undefined) {
        const near = moves ? suggestion(`${e.from}->${e.to}`, moves.list) : suggestion(unknown, states);
        const hint = moves ? (near ? near.replace(/'\?$/, `${suffix}'?`) : `possible moves: ${moves.list.join(', ')}`) : (near ?? `states are: ${states.join(', ')}`);
        throw refuse(e.text, `'${showValue(unknown)}' is not a state of the model`, hint);
      }
      if (moves && !moves.allows(e.from, e.to)) {
        const alt = moves.instead(e.from, e.to);
        throw refuse(e.text, `${e.from}->${e.to} cannot happen: ${moves.why(e.from, e.to)}`, alt ? `did you mean '${e.from}->${alt}${suffix}'?` : undefined);
      }
    } else if (e.state !== undefined) {
      if (!states.includes(e.state)) throw refuse(e.text, `'${showValue(e.state)}' is not a state of the model`, suggestion(e.state, moves ? moves.arrivals : states) ?? `states are: ${states.join(', ')}`);
      if (moves && !moves.arrivals.includes(e.state)) {
        const instead = e.target === 'campaign' ? e.text.replace(/\s\S+(\s+at\s)/i, ` ${moves.arrivals[0]}$1`) : `inflow.${moves.arrivals[0]}${e.text.slice(Math.max(e.text.lastIndexOf('*'), e.text.lastIndexOf('=')))}`;
        throw refuse(e.text, `new users arrive only in ${moves.arrivals.join(' or ')}, not in ${e.state}`, `did you mean '${instead}'?`);
      }
    }
  }
}

export interface AppliedScenario extends ScenarioModel {
  /** One line per edit: the text, the entry's value before and after (a campaign: 0 and its users). */
  changes: { text: string; before: number; after: number }[];
  /** Extra users arriving in `state` (an index) at `step`. */
  campaigns: { state: number; count: number; step: number }[];
}

/**
 * Applies edits to a chain and its inflow; the input is not modified.
 *
 * @throws TidemarkError `INPUT_INVALID` for an unknown state (with "did you mean"), a probability
 *   outside [0, 1], a negative factor or count, scaling an entry or inflow that is 0, or a row that
 *   cannot sum to 1 (see {@link reweightRow}), a campaign beyond `horizon`; every message names the edit
 *   and the state.
 * @example applyScenario(model, parseScenario(['lapsing->dormant=0.3'])).matrix[3]
 *   // row 'lapsing' with 0.3 to dormant, the other entries scaled to fill 0.7
 */
export function applyScenario(model: ScenarioModel, edits: readonly Edit[], horizon?: number): AppliedScenario {
  const { states } = model;
  assertStochastic(model.matrix, states);
  assertCounts(model.inflow, states.length, 'inflow', states);
  checkEdits(edits, states, model.moves);
  const pins = new Map<number, Map<number, number>>();
  let inflow = model.inflow.slice();
  const changes: AppliedScenario['changes'] = [];
  const campaigns: AppliedScenario['campaigns'] = [];
  for (const e of edits) {
    if (e.target === 'campaign') {
      if (horizon !== undefined && e.step > horizon) throw refuse(e.text, `period +${e.step} is beyond the horizon of ${horizon}`, `use a period from +1 to +${horizon}, or a longer horizon`);
      campaigns.push({ state: stateIndex(states, e.state, e.text), count: e.count, step: e.step });
      changes.push({ text: e.text, before: 0, after: e.count });
    } else if (e.target === 'transition') {
      const i = stateIndex(states, e.from, e.text);
      const j = stateIndex(states, e.to, e.text);
      const row = pins.get(i) ?? new Map<number, number>();
      const before = row.get(j) ?? model.matrix[i][j];
      const after = transitionValue(e, before);
      pins.set(i, row.set(j, after));
      changes.push({ text: e.text, before, after });
    } else {
      const next = inflowValues(e, inflow, states);
      changes.push({ text: e.text, before: total(inflow, e.state, states), after: total(next, e.state, states) });
      inflow = next;
    }
  }
  const matrix = model.matrix.map((row, i) => (pins.has(i) ? reweightRow(row, pins.get(i) as Map<number, number>, i, states[i]) : row.slice()));
  if (model.moves) {
    // a rescaled row may send its remainder to the diagonal (see reweight.ts): refuse it where that move cannot happen
    const moves = model.moves;
    matrix.forEach((row, i) => row.forEach((v, j) => {
      if (v > 0 && model.matrix[i][j] === 0 && !moves.allows(states[i], states[j])) {
        throw refuse(changes.map((c) => c.text).join(', '), `the rest of row '${states[i]}' would go to ${states[i]}->${states[j]}, which cannot happen: ${moves.why(states[i], states[j])}`,
          `also set where the rest goes: ${moves.list.filter((m) => m.startsWith(`${states[i]}->`)).join(', ')}`);
      }
    }));
  }
  return { states, matrix, inflow, changes, campaigns };
}

export interface WhatIf {
  scenario: AppliedScenario;
  baseline: Projection;
  projected: Projection;
  /** projected − baseline, entry by entry. */
  difference: Projection;
}

/**
 * Parses scenario texts, applies them and projects baseline and scenario `horizon` steps from `start`.
 *
 * @throws TidemarkError as {@link parseScenario} and {@link applyScenario}; `INPUT_INVALID` for a bad
 *   start or horizon (0 to 10000).
 * @example whatIf(model, ['inflow*1.2'], start, 3).difference.totals // [0, 0.2·Σf, 0.4·Σf, 0.6·Σf]
 */
export function whatIf(model: ScenarioModel, scenarios: readonly string[], start: Vector, horizon: number): WhatIf {
  assertInteger(horizon, 'horizon', 0, 10000);
  const scenario = applyScenario(model, parseScenario(scenarios), horizon);
  assertCounts(start, model.states.length, 'start', model.states);
  const baseline = projectUnchecked(model.matrix, start, model.inflow, horizon);
  const projected = projectVarying(scenario.matrix, start, () => scenario.inflow, horizon, (t) => campaignAt(scenario.campaigns, t, start.length));
  const minus = (a: Matrix, b: Matrix): Matrix => a.map((row, t) => row.map((v, s) => v - b[t][s]));
  return {
    scenario,
    baseline,
    projected,
    difference: {
      counts: minus(projected.counts, baseline.counts),
      shares: minus(projected.shares, baseline.shares),
      totals: projected.totals.map((v, t) => v - baseline.totals[t]),
    },
  };
}

/** The campaign users arriving at step t, per state (undefined when none). */
export function campaignAt(campaigns: AppliedScenario['campaigns'], t: number, n: number): Vector | undefined {
  const due = campaigns.filter((c) => c.step === t);
  if (due.length === 0) return undefined;
  const v = new Array<number>(n).fill(0);
  for (const c of due) v[c.state] += c.count;
  return v;
}

function stateIndex(states: readonly string[], name: string, text: string): number {
  const i = states.indexOf(name);
  if (i < 0) throw refuse(text, `'${name}' is not a state of the model`, suggestion(name, states) ?? `states are: ${states.join(', ')}`);
  return i;
}

function transitionValue(e: Extract<Edit, { target: 'transition' }>, before: number): number {
  const entry = `${e.from}->${e.to}`;
  if (e.op === 'set') {
    if (!(e.value >= 0 && e.value <= 1)) throw refuse(e.text, `probability ${fmt(e.value)} for ${entry} is outside [0, 1]`);
    return e.value;
  }
  if (e.value < 0) throw refuse(e.text, `factor ${fmt(e.value)} for ${entry} is negative`);
  if (before === 0) throw refuse(e.text, `${entry} is 0 in the model, so scaling it changes nothing`, `set it instead, e.g. ${entry}=0.1`);
  const after = before * e.value;
  if (after > 1 + 1e-12) throw refuse(e.text, `${entry} would become ${fmt(after)}, above 1`, `use a factor of at most ${fmt(1 / before)}`);
  return Math.min(1, after);
}

function inflowValues(e: Extract<Edit, { target: 'inflow' }>, inflow: Vector, states: readonly string[]): Vector {
  if (e.value < 0) throw refuse(e.text, `${e.op === 'scale' ? 'factor' : 'inflow'} ${fmt(e.value)} is negative`);
  if (e.state !== undefined) {
    const i = stateIndex(states, e.state, e.text);
    if (e.op === 'scale' && inflow[i] === 0) throw refuse(e.text, `the inflow into '${e.state}' is 0, so scaling it changes nothing`, `set it instead, e.g. inflow.${e.state}=100`);
    return inflow.map((v, j) => (j !== i ? v : e.op === 'scale' ? v * e.value : e.value));
  }
  const sum = inflow.reduce((a, b) => a + b, 0);
  if (sum === 0) throw refuse(e.text, 'the inflow is 0 in every state, so there is no split to keep', `name the state, e.g. inflow.${states[0]}=${e.op === 'set' ? fmt(e.value) : 100}`);
  const k = e.op === 'scale' ? e.value : e.value / sum;
  return inflow.map((v) => v * k);
}

function total(v: Vector, state: string | undefined, states: readonly string[]): number {
  return state === undefined ? v.reduce((a, b) => a + b, 0) : v[states.indexOf(state)];
}

function refuse(text: string, why: string, hint?: string): TidemarkError {
  return new TidemarkError('INPUT_INVALID', `scenario "${showValue(text, 80)}": ${why}`, { key: 'scenario' }, hint);
}
