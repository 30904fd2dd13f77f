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
 *   `inflow.STATE=N`); `inflow.STATE*k` needs that state's inflow > 0, `inflow.STATE=N` any N ≥ 0.
 */
import { TidemarkError, suggestion } from '../errors.js';
import { assertCounts, assertInteger, assertStochastic } from './guards.js';
import { fmt } from './names.js';
import { projectUnchecked } from './project.js';
import { reweightRow } from './reweight.js';
import { parseScenario, type Edit } from './scenario.js';
import type { Chain, Matrix, Projection, Vector } from './types.js';

export interface ScenarioModel extends Chain {
  inflow: Vector;
}

export interface AppliedScenario extends ScenarioModel {
  /** One line per edit: the text, the entry's value before and after. */
  changes: { text: string; before: number; after: number }[];
}

/**
 * Applies edits to a chain and its inflow; the input is not modified.
 *
 * @throws TidemarkError `INPUT_INVALID` for an unknown state (with "did you mean"), a probability
 *   outside [0, 1], a negative factor or count, scaling an entry or inflow that is 0, or a row that
 *   cannot sum to 1 (see {@link reweightRow}); every message names the edit and the state.
 * @example applyScenario(model, parseScenario(['lapsing->dormant=0.3'])).matrix[3]
 *   // row 'lapsing' with 0.3 to dormant, the other entries scaled to fill 0.7
 */
export function applyScenario(model: ScenarioModel, edits: readonly Edit[]): AppliedScenario {
  const { states } = model;
  assertStochastic(model.matrix, states);
  assertCounts(model.inflow, states.length, 'inflow', states);
  const pins = new Map<number, Map<number, number>>();
  let inflow = model.inflow.slice();
  const changes: AppliedScenario['changes'] = [];
  for (const e of edits) {
    if (e.target === 'transition') {
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
  return { states, matrix, inflow, changes };
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
  const scenario = applyScenario(model, parseScenario(scenarios));
  assertCounts(start, model.states.length, 'start', model.states);
  assertInteger(horizon, 'horizon', 0, 10000);
  const baseline = projectUnchecked(model.matrix, start, model.inflow, horizon);
  const projected = projectUnchecked(scenario.matrix, start, scenario.inflow, horizon);
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
  return new TidemarkError('INPUT_INVALID', `scenario "${text}": ${why}`, { key: 'scenario' }, hint);
}
