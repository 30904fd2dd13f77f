/**
 * Parse, then execute: a planner's matrix document (parsed JSON, `unknown`) is checked once here and
 * comes out as a typed {@link MarkovModel}; nothing downstream sees the raw document.
 *
 * Document shape:
 * ```json
 * { "states": ["engaged", "lapsing", "dormant"],
 *   "matrix": [[0.7, 0.2, 0.1], [0.3, 0.4, 0.3], [0.05, 0, 0.95]],
 *   "start": { "engaged": 120, "lapsing": 40 },
 *   "inflow": { "engaged": 15 } }
 * ```
 * With `"audience": N` the start is read as shares of N users (they must sum to 1 within 1e-6):
 * `"start": { "engaged": 0.6, "lapsing": 0.4 }, "audience": 2000` starts from 1,200 and 800.
 * `matrix` is row-stochastic (rows sum to 1). A column-stochastic matrix (columns sum to 1, as in
 * many linear-algebra texts) must be converted with {@link columnToRow} first.
 */
import { TidemarkError, suggestion } from '../errors.js';
import { assertStochastic } from './guards.js';
import type { Matrix, MarkovModel, Vector } from './types.js';

const KEYS = ['states', 'matrix', 'start', 'inflow', 'audience'] as const;

/**
 * Validates a matrix document and returns the typed model. States missing from `start`/`inflow` get
 * 0; `start` stays undefined when absent, `inflow` becomes all zeros. Entries are kept as given (a row
 * summing to 1 − 1e-7 is not rescaled).
 *
 * @throws TidemarkError `INPUT_INVALID` for a document that is not an object, an unknown top-level key
 *   (with "did you mean"), or a `start`/`inflow` entry naming an unknown state or holding a count that
 *   is not a finite number ≥ 0; `MATRIX_INVALID` for empty, non-string or duplicate state names, a
 *   ragged or wrongly sized matrix, a non-finite or negative entry, or a row not summing to 1 (1e-6);
 *   `INPUT_INVALID` for an audience that is not a finite number > 0, or given without a start, or with
 *   start shares that do not sum to 1.
 * @example validateModel({ states: ['a', 'b'], matrix: [[0.9, 0.1], [0, 1]], inflow: { a: 5 } })
 *   // { states: ['a','b'], matrix: [[0.9,0.1],[0,1]], start: undefined, inflow: [5, 0] }
 */
export function validateModel(doc: unknown): MarkovModel {
  if (typeof doc !== 'object' || doc === null || Array.isArray(doc)) {
    throw new TidemarkError('INPUT_INVALID', 'the model document must be an object with "states" and "matrix"', {}, 'see the document shape in the docs of validateModel');
  }
  const obj = doc as Record<string, unknown>;
  for (const key of Object.keys(obj)) {
    if (!(KEYS as readonly string[]).includes(key)) {
      throw new TidemarkError('INPUT_INVALID', `unknown key "${key}" in the model document`, { key }, suggestion(key, KEYS) ?? `allowed keys: ${KEYS.join(', ')}`);
    }
  }
  const states = readStates(obj.states);
  const matrix = readMatrix(obj.matrix, states);
  assertStochastic(matrix, states);
  let start = obj.start === undefined ? undefined : readCounts(obj.start, states, 'start');
  const inflow = obj.inflow === undefined ? states.map(() => 0) : readCounts(obj.inflow, states, 'inflow');
  if (obj.audience === undefined) return { states, matrix, start, inflow };
  const audience = obj.audience;
  if (typeof audience !== 'number' || !Number.isFinite(audience) || !(audience > 0)) {
    throw new TidemarkError('INPUT_INVALID', `"audience" must be a number of users > 0 (got ${JSON.stringify(audience)})`, { key: 'audience' });
  }
  if (!start) throw new TidemarkError('INPUT_INVALID', '"audience" sizes the start shares, but the document has no "start"', { key: 'audience' }, 'add "start": {"state": share, ...} with shares summing to 1');
  const sum = start.reduce((a, b) => a + b, 0);
  if (Math.abs(sum - 1) > 1e-6) {
    throw new TidemarkError('INPUT_INVALID', `with "audience", "start" gives shares, which must sum to 1 (they sum to ${Number(sum.toPrecision(6))})`, { key: 'start' }, 'give shares of the audience, or leave "audience" out to give counts');
  }
  start = start.map((v) => v * audience);
  return { states, matrix, start, inflow, audience };
}

function readStates(v: unknown): string[] {
  if (!Array.isArray(v) || v.length === 0) {
    throw new TidemarkError('MATRIX_INVALID', '"states" must be a non-empty list of state names', { key: 'states' });
  }
  const seen = new Set<string>();
  return v.map((s, i) => {
    if (typeof s !== 'string' || s.trim() === '') {
      throw new TidemarkError('MATRIX_INVALID', `state ${i} must be a non-empty name (got ${JSON.stringify(s)})`, { key: `states[${i}]` });
    }
    if (seen.has(s)) {
      throw new TidemarkError('MATRIX_INVALID', `state '${s}' is listed twice (again at position ${i})`, { key: `states[${i}]` }, 'give every state once');
    }
    seen.add(s);
    return s;
  });
}

/** Shape and type checks of an unknown matrix; value checks are left to assertStochastic. */
function readMatrix(v: unknown, states: string[]): Matrix {
  if (!Array.isArray(v)) {
    throw new TidemarkError('MATRIX_INVALID', '"matrix" must be a list of rows', { key: 'matrix' });
  }
  return v.map((row, i) => {
    if (!Array.isArray(row)) {
      throw new TidemarkError('MATRIX_INVALID', `row ${i}${states[i] ? ` ('${states[i]}')` : ''} of the matrix is not a list of numbers`, { key: `matrix[${i}]` });
    }
    return row as number[];
  });
}

function readCounts(v: unknown, states: string[], what: 'start' | 'inflow'): Vector {
  if (typeof v !== 'object' || v === null || Array.isArray(v)) {
    throw new TidemarkError('INPUT_INVALID', `"${what}" must map state names to counts`, { key: what }, `e.g. { "${states[0]}": 100 }`);
  }
  const out = states.map(() => 0);
  for (const [name, count] of Object.entries(v as Record<string, unknown>)) {
    const i = states.indexOf(name);
    if (i < 0) {
      throw new TidemarkError('INPUT_INVALID', `"${what}" names unknown state '${name}'`, { key: `${what}.${name}` }, suggestion(name, states) ?? `states are: ${states.join(', ')}`);
    }
    if (typeof count !== 'number' || !Number.isFinite(count) || count < 0) {
      throw new TidemarkError('INPUT_INVALID', `"${what}" count for '${name}' must be a finite number ≥ 0 (got ${JSON.stringify(count)})`, { key: `${what}.${name}` });
    }
    out[i] = count;
  }
  return out;
}

/**
 * Converts a column-stochastic matrix (A[i][j] = P(to i | from j), columns sum to 1) to the
 * row-stochastic convention of this module: the transpose, P[i][j] = A[j][i].
 *
 * @throws TidemarkError `MATRIX_INVALID` when the input is not a non-empty square matrix.
 * @example columnToRow([[0.8, 0.3], [0.2, 0.7]]) // [[0.8, 0.2], [0.3, 0.7]]
 */
export function columnToRow(a: Matrix): Matrix {
  const n = Array.isArray(a) ? a.length : 0;
  if (n === 0 || a.some((row) => !Array.isArray(row) || row.length !== n)) {
    throw new TidemarkError('MATRIX_INVALID', 'a column-stochastic matrix must be square to be converted', { key: 'matrix' }, 'give n rows of n entries');
  }
  return Array.from({ length: n }, (_, i) => Array.from({ length: n }, (_, j) => a[j][i]));
}
