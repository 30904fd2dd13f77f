/**
 * Read event files into an {@link EventLog}. The format follows the extension (.csv, .ndjson/.jsonl,
 * .parquet; a .gz after .csv or .ndjson is gzip, which the readers also recognise by its first bytes)
 * unless given. CSV and NDJSON files are read once, front to back (FIFOs and /dev/stdin work); Parquet
 * needs a file it can seek in.
 */
import { stat } from 'node:fs/promises';
import { extname } from 'node:path';
import { TidemarkError } from '../errors.js';
import type { Rules } from '../rules/schema.js';
import { readCsv } from './csv.js';
import { EventLogBuilder, type EventLog } from './eventLog.js';
import { DEFAULT_LIMITS, type ScanLimits } from './limits.js';
import { readNdjson } from './ndjson.js';
import { twoThreadSplit } from './parallel.js';

export type EventFormat = 'csv' | 'ndjson' | 'parquet';

export interface ReadEventsOptions {
  rules: Rules;
  format?: EventFormat;
  skipBadRows?: boolean;
  /** Drop events in periods after this period key (they cannot change earlier states). */
  toKey?: number;
  /** CSV field delimiter (default ','). */
  delimiter?: string;
  /** The readers' bounds (default: limits.ts); lowered by tests to reach them with small inputs. */
  limits?: Partial<ScanLimits>;
  /** Keep per-row detail and the rows that are not key events (detail.ts); off by default. */
  detail?: boolean;
  /** Keep only the columns the waist needs without --by (BuilderOptions.waistOnly); off by default, and ignored with `detail`. */
  waistOnly?: boolean;
  /**
   * Told how reading goes, after each read of a file's bytes (about every MiB): the bytes read of all
   * the files so far, and their total size when every file is a regular file (a pipe has none).
   */
  onProgress?: (p: ReadProgress) => void;
  /** Read a large CSV file on two threads (default true); tests set the size and the split, and may read the part on this thread. */
  parallel?: boolean | Parameters<typeof twoThreadSplit>[1];
}

/** How far reading has got: bytes of the files (compressed bytes for gzip), and their total when known. */
export interface ReadProgress {
  file: string;
  bytes: number;
  total?: number;
}

/** The total size of the files, or undefined when one is not a regular file (a pipe, standard input). */
async function totalSize(files: string[]): Promise<number | undefined> {
  let total = 0;
  for (const f of files) {
    try {
      const st = await stat(f);
      if (!st.isFile()) return undefined;
      total += st.size;
    } catch {
      return undefined; // the reader reports the file itself
    }
  }
  return total;
}

export function formatOf(file: string, format?: EventFormat): EventFormat {
  if (format) return format;
  const lower = file.toLowerCase();
  const ext = extname(lower.endsWith('.gz') ? lower.slice(0, -3) : lower);
  if (ext === '.csv' || ext === '.txt') return 'csv';
  if (ext === '.ndjson' || ext === '.jsonl' || ext === '.json') return 'ndjson';
  if (ext === '.parquet' && !lower.endsWith('.gz')) return 'parquet';
  throw new TidemarkError('EVENTS_FORMAT', `cannot tell the format from the extension '${extname(lower) || '(none)'}'`, { file }, 'Pass --input-format csv, ndjson or parquet');
}

/** Read one or more event files. Throws TidemarkError for unreadable files, bad headers, bad rows (unless skipping) and logs with no usable row. */
export async function readEvents(files: string[], opts: ReadEventsOptions): Promise<EventLog> {
  const waistOnly = opts.waistOnly === true && !opts.detail;
  const builder = new EventLogBuilder({ rules: opts.rules, skipBadRows: opts.skipBadRows ?? false, toKey: opts.toKey, detail: opts.detail, waistOnly });
  const needEvent = opts.rules.activity.keyEvents !== undefined;
  const limits: ScanLimits = { ...DEFAULT_LIMITS, ...opts.limits };
  // the second thread's part carries no per-row detail: a read with detail stays on one thread
  const split = opts.parallel === false || opts.detail ? undefined
    : twoThreadSplit({ rules: opts.rules, skipBadRows: opts.skipBadRows ?? false, toKey: opts.toKey, waistOnly }, opts.parallel === true || opts.parallel === undefined ? {} : opts.parallel);
  const total = opts.onProgress ? await totalSize(files) : undefined;
  let bytes = 0;
  for (const file of files) {
    const fmt = formatOf(file, opts.format);
    const onBytes = opts.onProgress ? (n: number) => opts.onProgress!({ file, bytes: (bytes += n), total }) : undefined;
    if (fmt === 'csv') await readCsv(file, builder, opts.rules.columns, needEvent, opts.delimiter ?? ',', limits, split, onBytes);
    // hyparquet is loaded only for a Parquet file (about 0.1–0.2 s of start-up otherwise)
    else if (fmt === 'parquet') await (await import('./parquet.js')).readParquet(file, builder, opts.rules.columns, needEvent, onBytes);
    else await readNdjson(file, builder, opts.rules.columns, limits, onBytes);
  }
  const log = builder.build();
  if ((log.detail ? log.detail.keyRows : log.size) === 0) {
    const r = log.rows;
    const why = r.read === 0 ? 'it holds no event rows' : r.notKeyEvent === r.read ? 'no row is a key event' : 'no row could be used';
    throw new TidemarkError('EVENTS_EMPTY', `nothing to analyse: ${why}`, { file: files.join(', ') },
      r.notKeyEvent > 0 ? 'Check activity.keyEvents against the event names in the file' : 'Check the file and the column mapping');
  }
  return log;
}
