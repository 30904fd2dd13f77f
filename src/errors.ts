/**
 * The one error model of tidemark.
 *
 * Library code throws a {@link TidemarkError} (never exits, never prints). The CLI maps every error
 * to a one-line message and an exit code in one place (`src/cli/errors.ts`).
 */

/** Stable machine-readable error codes. Add new ones here; never reuse or rename one. */
export type ErrorCode =
  | 'USAGE' // bad command-line usage (exit 2)
  | 'FILE_NOT_FOUND'
  | 'FILE_UNREADABLE'
  | 'FILE_UNWRITABLE' // an output file or folder cannot be written (full disk, permissions…)
  | 'RULES_SYNTAX' // YAML does not parse
  | 'RULES_INVALID' // a value breaks the schema
  | 'RULES_UNKNOWN_KEY'
  | 'EVENTS_FORMAT' // the file's format or header is wrong
  | 'EVENTS_BAD_ROW' // one row cannot be used
  | 'EVENTS_EMPTY' // nothing usable left
  | 'RANGE_INVALID' // --from/--to or a period range is wrong
  | 'MATRIX_INVALID' // a transition matrix breaks a precondition
  | 'INPUT_INVALID' // any other bad input value
  | 'NOT_ENOUGH_DATA' // the data are valid but too few for the analysis asked for
  | 'STORE_BUSY' // another process is updating the store (src/store)
  | 'STORE_INVALID'; // a folder that is no store, or a store this tidemark cannot read

/** Where an error was found: any of a file, a 1-based line, a column name, a key path. */
export interface ErrorLocation {
  file?: string;
  line?: number;
  column?: string;
  key?: string;
}

export class TidemarkError extends Error {
  override readonly name = 'TidemarkError';
  readonly code: ErrorCode;
  readonly where: ErrorLocation;
  /** What the user can do about it, one short sentence. */
  readonly hint?: string;

  constructor(code: ErrorCode, message: string, where: ErrorLocation = {}, hint?: string) {
    super(message);
    this.code = code;
    this.where = where;
    this.hint = hint;
  }

  /** Exit code the CLI uses: 2 for usage errors, 1 for bad input or data. */
  get exitCode(): 1 | 2 {
    return this.code === 'USAGE' ? 2 : 1;
  }

  /** One line: `file:line: column/key: message (hint)`; a command-line flag as key is shown as itself (`--fit: …`). */
  oneLine(): string {
    const w = this.where;
    const place = [w.file && (w.line ? `${w.file}:${w.line}` : w.file), w.column && `column ${w.column}`, w.key && (w.key.startsWith('--') ? w.key : `key ${w.key}`)]
      .filter(Boolean)
      .join(', ');
    const text = place ? `${place}: ${this.message}` : this.message;
    if (!this.hint) return escapeControls(text);
    return escapeControls(`${text}. ${this.hint.charAt(0).toUpperCase()}${this.hint.slice(1)}`);
  }
}

/**
 * A value from the data, made safe for a one-line message: control characters (C0, C1, DEL), line and
 * paragraph separators and bidirectional overrides are written as `\\n`, `\\u001b`…, and a value
 * longer than `max` characters is cut with an ellipsis. Nothing from the data reaches a terminal raw.
 * @example showValue('a\nb\u001b[31m') // 'a\\nb\\u001b[31m'
 */
export function showValue(value: unknown, max = 60): string {
  const s = String(value ?? '');
  const cut = s.length > max ? `${s.slice(0, Math.max(1, max - 1))}…` : s;
  return escapeControls(cut);
}

/** Escape control and invisible-direction characters as `\\n`, `\\t`, `\\r` or `\\uXXXX`. */
export function escapeControls(s: string): string {
  return s.replace(CONTROL, (c) => (c === '\n' ? '\\n' : c === '\r' ? '\\r' : c === '\t' ? '\\t' : `\\u${c.charCodeAt(0).toString(16).padStart(4, '0')}`));
}
// C0 and C1 controls, DEL, line/paragraph separators, bidi embeddings, overrides and isolates
const CONTROL = /[\u0000-\u001f\u007f-\u009f\u2028\u2029\u202a-\u202e\u2066-\u2069]/g;

/** Levenshtein distance, for "did you mean" suggestions. */
export function editDistance(a: string, b: string): number {
  const prev = Array.from({ length: b.length + 1 }, (_, j) => j);
  for (let i = 1; i <= a.length; i++) {
    let diag = prev[0];
    prev[0] = i;
    for (let j = 1; j <= b.length; j++) {
      const tmp = prev[j];
      prev[j] = Math.min(prev[j] + 1, prev[j - 1] + 1, diag + (a[i - 1] === b[j - 1] ? 0 : 1));
      diag = tmp;
    }
  }
  return prev[b.length];
}

/** The closest candidate within a small edit distance, or undefined. */
export function didYouMean(input: string, candidates: readonly string[]): string | undefined {
  let best: string | undefined;
  let bestD = Infinity;
  for (const c of candidates) {
    const d = editDistance(input.toLowerCase(), c.toLowerCase());
    if (d < bestD) {
      bestD = d;
      best = c;
    }
  }
  const limit = Math.max(2, Math.floor(input.length / 3));
  return bestD <= limit ? best : undefined;
}

/** " Did you mean 'x'?" or "" — for appending to hints. */
export function suggestion(input: string, candidates: readonly string[]): string | undefined {
  const m = didYouMean(input, candidates);
  return m ? `did you mean '${m}'?` : undefined;
}

/** The same error, located in `file` when it had no file yet (for errors raised on a file's parsed content). */
export function inFile(err: unknown, file: string): unknown {
  if (!(err instanceof TidemarkError) || err.where.file) return err;
  return new TidemarkError(err.code, err.message, { ...err.where, file }, err.hint);
}
