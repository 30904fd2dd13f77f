/**
 * The one place where errors become messages and exit codes: 0 ok, 1 bad input or data, 2 usage.
 * No stack trace unless --debug.
 */
import { TidemarkError, escapeControls, showValue } from '../errors.js';
import type { Io } from './io.js';

/**
 * Commander's own error message (an unknown option, a bad choice, a missing argument) as one line:
 * "error: " dropped, its "Did you mean" line joined on, quoted values from the command line longer
 * than 60 characters cut, every control code escaped. Commander echoes argv, which may hold anything.
 * @example commanderMessage("error: unknown option '--evnts'\n(Did you mean --events?)")
 *   // "unknown option '--evnts' (did you mean --events?)"
 */
export function commanderMessage(message: string): string {
  const m = message
    .replace(/^error: /, '')
    .replace(/\n\((Did you mean [^\n]*\?)\)\s*$/, (_, s: string) => ` (d${s.slice(1)})`)
    .replace(/\s+$/, '')
    .replace(/'([^']{61,})'/g, (_, v: string) => `'${v.slice(0, 59)}…'`);
  return showValue(m, 400);
}

/** A stack trace (--debug) with its message's control codes escaped, line by line. */
function stackText(stack: string): string {
  return stack.split('\n').map((l) => escapeControls(l)).join('\n');
}

export function reportError(err: unknown, io: Io, debug: boolean): 1 | 2 {
  if (err instanceof TidemarkError) {
    io.stderr(`tidemark: ${err.oneLine()}\n`);
    if (debug && err.stack) io.stderr(`${stackText(err.stack)}\n`);
    return err.exitCode;
  }
  const e = err as { code?: string; message?: string; stack?: string };
  if (e?.code === 'ENOENT' || e?.code === 'EACCES') {
    io.stderr(`tidemark: ${showValue(e.message ?? 'file error', 300)}\n`);
    return 1;
  }
  io.stderr(`tidemark: internal error: ${escapeControls(String(e?.message ?? err).split('\n')[0])}. Rerun with --debug and report it\n`);
  if (debug && e?.stack) io.stderr(`${stackText(e.stack)}\n`);
  return 1;
}
