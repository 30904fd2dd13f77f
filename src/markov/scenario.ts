/**
 * Scenario text → edits. One edit is one of:
 * - `FROM->TO*k`   scale the transition probability P[FROM][TO] by k ≥ 0;
 * - `FROM->TO=p`   set P[FROM][TO] to p ∈ [0, 1];
 * - `inflow*k`, `inflow=N`              scale, or set the total of, the inflow per period;
 * - `inflow.STATE*k`, `inflow.STATE=N`  the same for one state's inflow.
 * Several edits may share one text, separated by `,` or `;`. Spaces are ignored around the parts.
 * Parsing checks the syntax only; state names are checked when the edits are applied.
 */
import { TidemarkError } from '../errors.js';

export type Edit =
  | { target: 'transition'; from: string; to: string; op: 'scale' | 'set'; value: number; text: string }
  | { target: 'inflow'; state: string | undefined; op: 'scale' | 'set'; value: number; text: string };

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
    throw new TidemarkError('INPUT_INVALID', `cannot read the scenario "${piece}": ${why}`, { key }, 'write FROM->TO*factor, FROM->TO=probability, inflow*factor, inflow=count or inflow.STATE=count');
  };
  const at = Math.max(piece.lastIndexOf('*'), piece.lastIndexOf('='));
  if (at < 0) return fail('no * or = found');
  const op = piece[at] === '*' ? 'scale' : 'set';
  const left = piece.slice(0, at).trim();
  const right = piece.slice(at + 1).trim();
  if (!NUMBER.test(right)) return fail(`"${right}" is not a number`);
  const value = Number(right);
  if (!Number.isFinite(value)) return fail(`"${right}" is too large`);
  if (left.includes('->')) {
    const parts = left.split('->').map((s) => s.trim());
    if (parts.length !== 2 || !parts[0] || !parts[1]) return fail('expected one FROM->TO pair');
    return { target: 'transition', from: parts[0], to: parts[1], op, value, text: piece };
  }
  if (left === 'inflow') return { target: 'inflow', state: undefined, op, value, text: piece };
  if (left.startsWith('inflow.') && left.length > 'inflow.'.length) {
    return { target: 'inflow', state: left.slice('inflow.'.length).trim(), op, value, text: piece };
  }
  return fail(`"${left}" is neither FROM->TO nor inflow`);
}
