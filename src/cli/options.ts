/**
 * Command-line values, checked where they enter: every parser here runs before any event is read and
 * throws a USAGE error (exit 2) located at the flag. Library errors carry keys (`range`, `scenario`,
 * `target`…); {@link asFlags} turns the ones a flag caused into usage errors naming that flag.
 */
import { DateTime } from 'luxon';
import { TidemarkError, showValue, suggestion } from '../errors.js';
import { parseSelection, type TransitionSelection } from '../flows/select.js';
import { parseNamedScenario, parseScenario } from '../markov/scenario.js';
import { checkEdits, type MoveRules } from '../markov/whatif.js';

function usage(flag: string, message: string, hint?: string): TidemarkError {
  return new TidemarkError('USAGE', message, { key: flag }, hint);
}

/** A whole number in [min, max], written in plain digits ("1e3", "0x10", "" and " " are refused). */
export function wholeNumber(text: string, flag: string, min: number, max = Number.MAX_SAFE_INTEGER): number {
  const t = String(text).trim();
  const v = /^\+?\d+$/.test(t) ? Number(t) : NaN;
  if (!(Number.isSafeInteger(v) && v >= min && v <= max)) {
    const range = max < Number.MAX_SAFE_INTEGER ? `from ${min} to ${max.toLocaleString('en-US')}` : `≥ ${min}`;
    throw usage(flag, `must be a whole number ${range}, not '${showValue(text)}'`);
  }
  return v;
}

/** A finite number ≥ 0 in plain decimal or exponent notation. */
export function countNumber(text: string, flag: string): number {
  const t = String(text).trim();
  const v = /^\+?(\d+(\.\d*)?|\.\d+)(e[+-]?\d+)?$/i.test(t) ? Number(t) : NaN;
  if (!Number.isFinite(v)) throw usage(flag, `must be a number ≥ 0, not '${showValue(text)}'`);
  return v;
}

/** A calendar date YYYY-MM-DD (2026-13-01 and 2026-02-30 are refused). */
export function dateOption(text: string | undefined, flag: string): string | undefined {
  if (text === undefined) return undefined;
  const t = String(text).trim();
  if (!/^\d{4}-\d{2}-\d{2}$/.test(t) || !DateTime.fromISO(t, { zone: 'utc' }).isValid) {
    throw usage(flag, `'${showValue(text)}' is not a date`, 'Write a date as YYYY-MM-DD, e.g. 2026-05-04');
  }
  return t;
}

/** The random seed: a whole number from 0 to 2³² − 1 (the range of the generator's seed). */
export function seedOption(text: string, flag = '--seed'): number {
  return wholeNumber(text, flag, 0, 4294967295);
}

/**
 * A run of transitions: `all`, `N` (N ≥ 1), or `FROM..TO` with dates; whether N or the labels fit the
 * data is checked after reading (see {@link asFlags}).
 */
export function selectionOption(text: string, flag: string): TransitionSelection {
  const sel = asFlags(() => parseSelection(String(text)), { range: flag });
  if ('last' in sel) {
    if (!(Number.isSafeInteger(sel.last) && sel.last >= 1)) throw usage(flag, `cannot take the last ${showValue(text)} transitions`, 'Use all, a whole number N ≥ 1, or FROM..TO');
  } else {
    if (sel.from !== undefined) dateOption(sel.from, flag);
    if (sel.to !== undefined) dateOption(sel.to, flag);
    if (sel.from !== undefined && sel.to !== undefined && sel.from > sel.to) throw usage(flag, `the range starts at ${sel.from}, after its end ${sel.to}`, 'Put the earlier date first');
  }
  return sel;
}

/** One of `states`, with a "did you mean". */
export function stateOption(text: string, flag: string, states: readonly string[]): string {
  if (!states.includes(text)) throw usage(flag, `'${showValue(text)}' is not a state`, suggestion(text, states) ?? `States are: ${states.join(', ')}`);
  return text;
}

/**
 * What-if texts: their syntax, their state names and, for lifecycle states, whether each move can
 * happen under the rules (`moves`). Returns the texts unchanged; the numbers are checked against the
 * fitted matrix after reading.
 */
export function whatIfOption(texts: readonly string[], flag: string, states: readonly string[], moves?: MoveRules): string[] {
  asFlags(() => checkEdits(parseScenario(texts), states, moves), { scenario: flag });
  return [...texts];
}

/**
 * Named scenarios `NAME=edits`: their names, syntax, state names, possible moves (`moves`) and
 * campaign periods within `horizon`. Returns the texts unchanged.
 */
export function scenarioOption(texts: readonly string[], flag: string, states: readonly string[], horizon: number, moves?: MoveRules): string[] {
  asFlags(() => {
    for (const [i, s] of parseNamedScenario(texts).entries()) {
      try {
        checkEdits(s.edits, states, moves);
      } catch (e) {
        throw e instanceof TidemarkError ? new TidemarkError(e.code, `${s.name}: ${e.message}`, { key: `scenarios[${i}]` }, e.hint) : e;
      }
      const late = s.edits.find((e) => e.target === 'campaign' && e.step > horizon);
      if (late) throw new TidemarkError('INPUT_INVALID', `${s.name}: "${showValue(late.text, 60)}" is beyond the horizon of ${horizon}`, { key: `scenarios[${i}]` }, `use a period from +1 to +${horizon}, or a longer --horizon`);
    }
  }, { scenarios: flag });
  return [...texts];
}

/** `LO,HI` percentiles with 0 ≤ LO < HI ≤ 100. */
export function parseBand(text: string, flag = '--band'): [number, number] {
  const m = /^(\d+(?:\.\d+)?)[,-](\d+(?:\.\d+)?)$/.exec(String(text).trim());
  const lo = m ? Number(m[1]) : NaN, hi = m ? Number(m[2]) : NaN;
  if (!(lo >= 0 && hi <= 100 && lo < hi)) throw usage(flag, `'${showValue(text)}' is not two percentiles LO,HI with 0 ≤ LO < HI ≤ 100`, 'For example --band 10,90');
  return [lo, hi];
}

/** The flag a library key belongs to: the key itself, or the key before a `.` or `[`. */
function flagOf(key: string | undefined, flags: Readonly<Record<string, string | undefined>>): string | undefined {
  if (key === undefined) return undefined;
  const head = /^[^.[]*/.exec(key)?.[0] ?? key;
  return flags[key] ?? flags[head];
}

/**
 * The same error as a usage error naming the flag, when its key belongs to one of `flags`
 * (library key → flag; an undefined flag leaves that key alone). `hint` may replace the hint.
 */
export function flagError(err: unknown, flags: Readonly<Record<string, string | undefined>>, hint?: (e: TidemarkError) => string | undefined): unknown {
  if (!(err instanceof TidemarkError)) return err;
  const flag = flagOf(err.where.key, flags);
  if (!flag || err.where.file) return err;
  return new TidemarkError('USAGE', err.message, { key: flag }, hint?.(err) ?? err.hint);
}

/** Run `fn`; an error about one of the flags' keys becomes a usage error naming the flag. */
export function asFlags<T>(fn: () => T, flags: Readonly<Record<string, string | undefined>>, hint?: (e: TidemarkError) => string | undefined): T {
  try {
    return fn();
  } catch (e) {
    throw flagError(e, flags, hint);
  }
}
