/**
 * Naming helpers for messages and explanations: every sentence names states, never bare indices.
 */

/** `'engaged'`, or `#3` when no name is known. */
export function stateName(states: readonly string[] | undefined, i: number): string {
  const s = states?.[i];
  return s === undefined ? `#${i}` : `'${s}'`;
}

/** `row 2 ('returned')`: the 0-based row index and the state it belongs to. */
export function rowName(states: readonly string[] | undefined, i: number): string {
  const s = states?.[i];
  return s === undefined ? `row ${i}` : `row ${i} ('${s}')`;
}

/** `{engaged, returned}`: a set of states by name, in the order given. */
export function nameSet(states: readonly string[], idx: readonly number[]): string {
  return `{${idx.map((i) => states[i] ?? `#${i}`).join(', ')}}`;
}

/** Round for a message: at most 6 significant digits, no trailing noise. */
export function fmt(x: number): string {
  return Number.isInteger(x) ? String(x) : String(Number(x.toPrecision(6)));
}
