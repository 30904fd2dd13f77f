/**
 * The readers' bounds, documented in README ("Input"). Every record is read in bounded memory and
 * time, so no input can hang a run or take it out of memory at the reading stage.
 */

/** Longest CSV record or NDJSON line, in bytes (1 MiB). A longer line is refused; see the readers. */
export const MAX_RECORD_BYTES = 1 << 20;

/** Most physical lines one quoted CSV field may span before it counts as a likely unclosed quote. */
export const MAX_QUOTED_LINES = 64;

/** Most columns in a CSV header, or attribute keys in an NDJSON sample (each costs 4 bytes an event). */
export const MAX_COLUMNS = 1000;

/** Bytes read at a time (1 MiB; the buffer doubles while an unfinished record fills more than half of it). */
export const READ_CHUNK = 1 << 20;

/** Bounds as one value, so tests can lower them to exercise the limits on small inputs. */
export interface ScanLimits {
  maxRecordBytes: number;
  maxQuotedLines: number;
  /** Initial buffer size in bytes. */
  chunk: number;
}

export const DEFAULT_LIMITS: ScanLimits = { maxRecordBytes: MAX_RECORD_BYTES, maxQuotedLines: MAX_QUOTED_LINES, chunk: READ_CHUNK };

/** "1 MiB", "64 KiB", "300 bytes": a byte count for messages. */
export function bytesText(n: number): string {
  if (n >= 1 << 20 && n % (1 << 20) === 0) return `${n / (1 << 20)} MiB`;
  if (n >= 1024 && n % 1024 === 0) return `${n / 1024} KiB`;
  return `${n.toLocaleString('en-US')} bytes`;
}
