/**
 * Read event files into an {@link EventLog}. The format follows the extension (.csv, .ndjson/.jsonl)
 * unless given. Each file is read once, front to back (FIFOs and /dev/stdin work).
 */
import { extname } from 'node:path';
import { TidemarkError } from '../errors.js';
import type { Rules } from '../rules/schema.js';
import { readCsv } from './csv.js';
import { EventLogBuilder, type EventLog } from './eventLog.js';
import { DEFAULT_LIMITS, type ScanLimits } from './limits.js';
import { readNdjson } from './ndjson.js';
import { twoThreadSplit } from './parallel.js';

export type EventFormat = 'csv' | 'ndjson';

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
  /** Read a large CSV file on two threads (default true); tests set the size and the split, and may read the part on this thread. */
  parallel?: boolean | Parameters<typeof twoThreadSplit>[1];
}

export function formatOf(file: string, format?: EventFormat): EventFormat {
  if (format) return format;
  const ext = extname(file).toLowerCase();
  if (ext === '.csv' || ext === '.txt') return 'csv';
  if (ext === '.ndjson' || ext === '.jsonl' || ext === '.json') return 'ndjson';
  throw new TidemarkError('EVENTS_FORMAT', `cannot tell the format from the extension '${ext || '(none)'}'`, { file }, 'Pass --input-format csv or --input-format ndjson');
}

/** Read one or more event files. Throws TidemarkError for unreadable files, bad headers, bad rows (unless skipping) and logs with no usable row. */
export async function readEvents(files: string[], opts: ReadEventsOptions): Promise<EventLog> {
  const builder = new EventLogBuilder({ rules: opts.rules, skipBadRows: opts.skipBadRows ?? false, toKey: opts.toKey });
  const needEvent = opts.rules.activity.keyEvents !== undefined;
  const limits: ScanLimits = { ...DEFAULT_LIMITS, ...opts.limits };
  const split = opts.parallel === false ? undefined
    : twoThreadSplit({ rules: opts.rules, skipBadRows: opts.skipBadRows ?? false, toKey: opts.toKey }, opts.parallel === true || opts.parallel === undefined ? {} : opts.parallel);
  for (const file of files) {
    const fmt = formatOf(file, opts.format);
    if (fmt === 'csv') await readCsv(file, builder, opts.rules.columns, needEvent, opts.delimiter ?? ',', limits, split);
    else await readNdjson(file, builder, opts.rules.columns, limits);
  }
  const log = builder.build();
  if (log.size === 0) {
    const r = log.rows;
    const why = r.read === 0 ? 'it holds no event rows' : r.notKeyEvent === r.read ? 'no row is a key event' : 'no row could be used';
    throw new TidemarkError('EVENTS_EMPTY', `nothing to analyse: ${why}`, { file: files.join(', ') },
      r.notKeyEvent > 0 ? 'Check activity.keyEvents against the event names in the file' : 'Check the file and the column mapping');
  }
  return log;
}
