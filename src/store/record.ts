/**
 * Reading event files for the store, and reading them again from it.
 *
 * tidemark's readers feed an {@link EventLogBuilder} one call a row (`add`), a rejected record
 * (`reject`), a blank line, a header and the end of a file. {@link RecordingBuilder} hands each of
 * those calls to a sink as well, with the row's fields as the reader gave them (the user id, the
 * timestamp as written, the event name, the attribute values) before any rule looked at them; the
 * store keeps them in its `events` table. {@link replay} makes the same calls again from that table,
 * so a log rebuilt from the store, under the same rules or new ones, is the log a full read of the
 * applied files would have given: the same rows, the same row and line accounting, the same file
 * names and lines in messages.
 */
import { TidemarkError } from '../errors.js';
import { readCsv } from '../ingest/csv.js';
import { EventLogBuilder, utf8Text, type EventLog, type LineRef, type RejectReason, type RowAccount } from '../ingest/eventLog.js';
import { DEFAULT_LIMITS, type ScanLimits } from '../ingest/limits.js';
import { readNdjson } from '../ingest/ndjson.js';
import { formatOf, type EventFormat } from '../ingest/read.js';
import type { Rules } from '../rules/schema.js';

/** Receives every row of a file as read. `index` numbers the file's entries from 0. */
export interface RowSink {
  row(index: number, line: number, lines: number, user: string, ts: string, event: string | undefined, attrs: readonly string[]): void;
  /** A record the reader rejected before the builder saw its fields (a stray quote, bad JSON…). */
  reject(index: number, line: number, lines: number, reason: RejectReason): void;
}

/** What the store keeps about a file besides its rows. */
export interface FileShape {
  /** The attribute columns, in the file's order. */
  attributes: string[];
  /** Whether any row had an event field. */
  hasEvent: boolean;
  headerLines: number;
  blankLines: number;
  /** Physical lines read. */
  lines: number;
  /** Entries recorded (rows and early rejects). */
  entries: number;
}

/** An empty row account. */
export function emptyAccount(): RowAccount {
  return { read: 0, used: 0, notKeyEvent: 0, afterRange: 0, partial: 0, rejected: {}, lines: { read: 0, header: 0, blank: 0, records: 0, rejected: 0 } };
}

/** A deep copy of an account. */
export function copyAccount(a: RowAccount): RowAccount {
  return { ...a, rejected: { ...a.rejected }, lines: { ...a.lines } };
}

/** after − before, field by field (rejected reasons in the order `after` holds them, zeros left out). */
export function accountDiff(after: RowAccount, before: RowAccount): RowAccount {
  const d = emptyAccount();
  for (const k of ['read', 'used', 'notKeyEvent', 'afterRange', 'partial'] as const) d[k] = after[k] - before[k];
  for (const k of ['read', 'header', 'blank', 'records', 'rejected'] as const) d.lines[k] = after.lines[k] - before.lines[k];
  for (const [k, n] of Object.entries(after.rejected) as [RejectReason, number][]) {
    const x = n - (before.rejected[k] ?? 0);
    if (x > 0) d.rejected[k] = x;
  }
  return d;
}

/** a + b in place into a copy of a (new rejected reasons after a's, in b's order). */
export function accountSum(a: RowAccount, b: RowAccount): RowAccount {
  const s = copyAccount(a);
  for (const k of ['read', 'used', 'notKeyEvent', 'afterRange', 'partial'] as const) s[k] += b[k];
  for (const k of ['read', 'header', 'blank', 'records', 'rejected'] as const) s.lines[k] += b.lines[k];
  for (const [k, n] of Object.entries(b.rejected) as [RejectReason, number][]) s.rejected[k] = (s.rejected[k] ?? 0) + n;
  return s;
}

const wellFormed = (s: string): boolean => (s as unknown as { isWellFormed(): boolean }).isWellFormed();

/** An event log builder that also hands every reader call to a sink. */
export class RecordingBuilder extends EventLogBuilder {
  private sink: RowSink | undefined;
  private shape: FileShape = newShape();
  private inAdd = false;

  /** Start recording a file into `sink`. */
  beginFile(sink: RowSink): void {
    this.sink = sink;
    this.shape = newShape();
  }

  /** The shape of the file just read. */
  fileShape(): FileShape {
    return this.shape;
  }

  override startFile(file: string, names: string[], lineOf?: (ref: LineRef) => number): void {
    this.shape.attributes = [...names];
    super.startFile(file, names, lineOf);
  }

  override header(lines: number): void {
    this.shape.headerLines += lines;
    super.header(lines);
  }

  override blank(): void {
    this.shape.blankLines++;
    super.blank();
  }

  override endFile(lines: number): void {
    this.shape.lines += lines;
    super.endFile(lines);
  }

  /** Ids always come as text, so that the sink sees them (the byte-level look-up is skipped). */
  override knownUser(): number {
    return -1;
  }

  /** The CSV reader's byte-range rows take the text path, so that the sink sees every value. */
  override addFields(file: string, line: LineRef, lines: number, b: Buffer, starts: Int32Array, ends: Int32Array, user: number, ts: number, event: number, attrFields: readonly number[]): void {
    const text = (k: number) => utf8Text(b, starts[k], ends[k]);
    this.add(file, line, text(user), text(ts), event >= 0 ? text(event) : undefined, attrFields.map((f) => (f >= 0 ? text(f) : '')), lines);
  }

  override reject(reason: RejectReason, file: string, line: LineRef, column: string | undefined, value: string | undefined, hint?: string, lines = 1): void {
    if (!this.inAdd) this.sink?.reject(this.shape.entries++, line, lines, reason);
    super.reject(reason, file, line, column, value, hint, lines);
  }

  override add(file: string, line: LineRef, userId: string | number, ts: string, event: string | undefined, attrs: readonly string[], lines = 1): void {
    if (typeof userId !== 'string') throw new Error('a reader passed a user code to the recording builder');
    if (!(wellFormed(userId) && wellFormed(ts) && (event === undefined || wellFormed(event)) && attrs.every(wellFormed))) {
      throw new TidemarkError('EVENTS_BAD_ROW', 'a value holds a lone UTF-16 surrogate (a broken \\u escape), which is not text and cannot be stored', { file, line },
        'Fix the export so that every value is text');
    }
    if (event !== undefined) this.shape.hasEvent = true;
    this.sink?.row(this.shape.entries++, line, lines, userId, ts, event, attrs);
    this.inAdd = true;
    try {
      super.add(file, line, userId, ts, event, attrs, lines);
    } finally {
      this.inAdd = false;
    }
  }
}

function newShape(): FileShape {
  return { attributes: [], hasEvent: false, headerLines: 0, blankLines: 0, lines: 0, entries: 0 };
}

/** How a file is read: the options of the update that applied it. */
export interface ReadChoice {
  format?: EventFormat;
  delimiter?: string;
  skipBadRows?: boolean;
}

/**
 * Read one file into the builder as tidemark's readers do (readEvents), recording it into `sink`.
 * Returns its shape and its own row account.
 */
export async function recordFile(builder: RecordingBuilder, file: string, rules: Rules, read: ReadChoice, sink: RowSink, limits: ScanLimits = DEFAULT_LIMITS): Promise<{ shape: FileShape; account: RowAccount }> {
  const before = copyAccount(builder.rows);
  builder.beginFile(sink);
  const fmt = formatOf(file, read.format);
  if (fmt === 'parquet') {
    throw new TidemarkError('EVENTS_FORMAT', 'the store keeps events as text and takes CSV or NDJSON files, not Parquet', { file },
      'Export the week as CSV or NDJSON for update, or run the commands on the Parquet file with --events');
  }
  if (fmt === 'csv') await readCsv(file, builder, rules.columns, rules.activity.keyEvents !== undefined, read.delimiter ?? ',', limits);
  else await readNdjson(file, builder, rules.columns, limits);
  return { shape: builder.fileShape(), account: accountDiff(builder.rows, before) };
}

/** A stored file for {@link replay}: its path as applied, its shape, and its entries in order. */
export interface StoredFile {
  path: string;
  shape: FileShape;
  /** Feeds the entries, in order, to the two callbacks. */
  entries(onRow: (line: number, lines: number, user: string, ts: string, event: string | undefined, attrs: readonly string[]) => void, onReject: (line: number, lines: number, reason: RejectReason) => void): Promise<void>;
}

/**
 * Make a builder's calls again from stored files, in order; returns each file's row account. The
 * builder decides every row afresh under its own rules.
 */
export async function replay(builder: EventLogBuilder, files: readonly StoredFile[]): Promise<RowAccount[]> {
  const accounts: RowAccount[] = [];
  for (const f of files) {
    const before = copyAccount(builder.rows);
    builder.startFile(f.path, f.shape.attributes);
    builder.header(f.shape.headerLines);
    await f.entries(
      (line, lines, user, ts, event, attrs) => builder.add(f.path, line, user, ts, event, attrs, lines),
      (line, lines, reason) => builder.reject(reason, f.path, line, undefined, undefined, undefined, lines),
    );
    for (let i = 0; i < f.shape.blankLines; i++) builder.blank();
    builder.endFile(f.shape.lines);
    accounts.push(accountDiff(builder.rows, before));
  }
  return accounts;
}

/** The check readEvents makes on a whole log: something to analyse. @throws TidemarkError EVENTS_EMPTY */
export function checkNotEmpty(log: EventLog, files: readonly string[]): void {
  if ((log.detail ? log.detail.keyRows : log.size) > 0) return;
  const r = log.rows;
  const why = r.read === 0 ? 'it holds no event rows' : r.notKeyEvent === r.read ? 'no row is a key event' : 'no row could be used';
  throw new TidemarkError('EVENTS_EMPTY', `nothing to analyse: ${why}`, { file: files.join(', ') },
    r.notKeyEvent > 0 ? 'Check activity.keyEvents against the event names in the file' : 'Check the file and the column mapping');
}
