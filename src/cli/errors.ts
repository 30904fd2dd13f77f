/**
 * The one place where errors become messages and exit codes: 0 ok, 1 bad input or data, 2 usage.
 * No stack trace unless --debug.
 */
import { TidemarkError, escapeControls, showValue } from '../errors.js';
import type { Io } from './io.js';

export function reportError(err: unknown, io: Io, debug: boolean): 1 | 2 {
  if (err instanceof TidemarkError) {
    io.stderr(`tidemark: ${err.oneLine()}\n`);
    if (debug && err.stack) io.stderr(`${err.stack}\n`);
    return err.exitCode;
  }
  const e = err as { code?: string; message?: string; stack?: string };
  if (e?.code === 'ENOENT' || e?.code === 'EACCES') {
    io.stderr(`tidemark: ${showValue(e.message ?? 'file error', 300)}\n`);
    return 1;
  }
  io.stderr(`tidemark: internal error: ${escapeControls(String(e?.message ?? err).split('\n')[0])}. Rerun with --debug and report it\n`);
  if (debug && e?.stack) io.stderr(`${e.stack}\n`);
  return 1;
}
