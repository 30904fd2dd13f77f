/**
 * Scenario text → edits. One edit is one of:
 * - `FROM->TO*k`   scale the transition probability P[FROM][TO] by k ≥ 0;
 * - `FROM->TO=p`   set P[FROM][TO] to p ∈ [0, 1];
 * - `inflow*k`, `inflow=N`              scale, or set the total of, the inflow per period;
 * - `inflow.STATE*k`, `inflow.STATE=N`  the same for one state's inflow;
 * - `+N STATE at +k`  a campaign: N extra users arrive in STATE in the k-th period ahead (k ≥ 1).
 * Several edits may share one text, separated by `,` or `;`. Spaces are ignored around the parts.
 * Parsing checks the syntax only; state names are checked when the edits are applied.
 *
 * A named scenario is `NAME=edits` ({@link parseNamedScenario}); names are letters, digits, `_` and
 * `-`, start with a letter, at most 40 characters, and are not `inflow`.
 */
import { TidemarkError, showValue } from '../errors.js';

export type Edit =
  | { target: 'transition'; from: string; to: string; op: 'scale' | 'set'; value: number; text: string }
  | { target: 'inflow'; state: string | undefined; op: 'scale' | 'set'; value: number; text: string }
  | { target: 'campaign'; state: string; count: number; step: number; text: string };

/** A campaign: `+3000 fresh at +4`. */
const CAMPAIGN = /^\+\s*(\d+(?:\.\d*)?|\.\d+)(?:e\+?\d+)?\s+(\S+)\s+at\s+\+?\s*(\d+)$/i;
const NAME = /^[A-Za-z][A-Za-z0-9_-]{0,39}$/;
/** Most scenarios one run compares. */
export const MAX_SCENARIOS = 8;

export interface NamedScenario {
  name: string;
  /** The text after `NAME=`, as given. */
  text: string;
  edits: Edit[];
}

/**
 * Parses `NAME=edits` texts; names must differ.
 *
 * @throws TidemarkError `INPUT_INVALID` (key `scenarios[i]`) for a missing or bad name, a repeated name,
 *   more than {@link MAX_SCENARIOS} scenarios, no edits, or an edit {@link parseScenario} cannot read.
 * @example parseNamedScenario(['keep="lapsing->dormant*0.8; +3000 fresh at +4"'])
 *   // [{ name: 'keep', edits: [{ target: 'transition', … }, { target: 'campaign', state: 'fresh', count: 3000, step: 4, … }] }]
 */
export function parseNamedScenario(texts: readonly string[]): NamedScenario[] {
  if (texts.length > MAX_SCENARIOS) {
    throw new TidemarkError('INPUT_INVALID', `at most ${MAX_SCENARIOS} scenarios can be compared at once (got ${texts.length})`, { key: 'scenarios' });
  }
  const seen = new Set<string>();
  return texts.map((raw, i) => {
    const key = `scenarios[${i}]`;
    const at = raw.indexOf('=');
    const name = at < 0 ? '' : raw.slice(0, at).trim();
    const hint = 'write NAME="edits", e.g. keep-lapsers="lapsing->dormant*0.8"';
    if (!NAME.test(name) || name === 'inflow') {
      throw new TidemarkError('INPUT_INVALID', at < 0 || !NAME.test(name) ? `the scenario "${showValue(raw, 60)}" has no name` : `'inflow' cannot name a scenario`, { key }, hint);
    }
    if (seen.has(name)) throw new TidemarkError('INPUT_INVALID', `two scenarios are named '${name}'`, { key }, 'give each scenario its own name');
    seen.add(name);
    const text = raw.slice(at + 1).trim().replace(/^"(.*)"$/s, '$1');
    let edits: Edit[];
    try {
      edits = parseScenario([text]);
    } catch (e) {
      throw e instanceof TidemarkError ? new TidemarkError(e.code, `${name}: ${e.message}`, { key }, e.hint) : e;
    }
    if (edits.length === 0) throw new TidemarkError('INPUT_INVALID', `the scenario '${name}' has no edits`, { key }, hint);
    return { name, text, edits };
  });
}

const NUMBER = /^[+-]?(\d+(\.\d*)?|\.\d+)(e[+-]?\d+)?$/i;

/**
 * Parses scenario texts into edits, in order.
 *
 * @throws TidemarkError `INPUT_INVALID` (key `scenario[i]`) quoting the piece that cannot be read.
 * @example parseScenario(['lapsing->dormant*0.8, inflow=500'])
 *   // [{ target: 'transition', from: 'lapsing', to: 'dormant', op: 'scale', value: 0.8, ... },
 *   //  { target: 'inflow', state: undefined, op: 'set', value: 500, ... }]
 */
export function parseScenario(texts: readonly string[]): Edit[] {
  return texts.flatMap((text, i) =>
    text
      .split(/[,;]/)
      .map((piece) => piece.trim())
      .filter((piece) => piece !== '')
      .map((piece) => parseEdit(piece, `scenario[${i}]`)),
  );
}

function parseEdit(piece: string, key: string): Edit {
  const fail = (why: string): never => {
    throw new TidemarkError('INPUT_INVALID', `cannot read the scenario "${showValue(piece, 60)}": ${why}`, { key }, 'write FROM->TO*factor, FROM->TO=probability, inflow*factor, inflow=count, inflow.STATE=count or +N STATE at +k');
  };
  if (piece.startsWith('+')) {
    const m = CAMPAIGN.exec(piece);
    if (!m) return fail('a campaign is written +N STATE at +k, e.g. +3000 fresh at +4');
    const count = Number(piece.slice(1).trim().split(/\s+/)[0]);
    const step = Number(m[3]);
    if (!Number.isFinite(count)) return fail(`the count is too large`);
    if (!Number.isSafeInteger(step) || step < 1) return fail('the period ahead must be a whole number from 1');
    return { target: 'campaign', state: m[2], count, step, text: piece };
  }
  const at = Math.max(piece.lastIndexOf('*'), piece.lastIndexOf('='));
  if (at < 0) return fail('no * or = found');
  const op = piece[at] === '*' ? 'scale' : 'set';
  const left = piece.slice(0, at).trim();
  const right = piece.slice(at + 1).trim();
  if (!NUMBER.test(right)) return fail(`"${showValue(right, 30)}" is not a number`);
  const value = Number(right);
  if (!Number.isFinite(value)) return fail(`"${showValue(right, 30)}" is too large`);
  if (left.includes('->')) {
    const parts = left.split('->').map((s) => s.trim());
    if (parts.length !== 2 || !parts[0] || !parts[1]) return fail('expected one FROM->TO pair');
    return { target: 'transition', from: parts[0], to: parts[1], op, value, text: piece };
  }
  if (left === 'inflow') return { target: 'inflow', state: undefined, op, value, text: piece };
  if (left.startsWith('inflow.') && left.length > 'inflow.'.length) {
    return { target: 'inflow', state: left.slice('inflow.'.length).trim(), op, value, text: piece };
  }
  return fail(`"${showValue(left, 30)}" is neither FROM->TO nor inflow`);
}
