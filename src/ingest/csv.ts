/**
 * CSV events: RFC 4180 (quoted fields, doubled quotes, line breaks inside quotes, CRLF or LF), a UTF-8
 * byte order mark dropped, a chosen one-byte delimiter. The file is read once, in chunks, by the
 * byte-level scanner in csvScan.ts; only the fields a row needs are decoded (ASCII fields are sliced
 * from the chunk decoded byte for byte, others decoded as UTF-8). Line numbers in messages are the
 * physical lines where records start, counted as the scan goes.
 *
 * A large regular file is read by two threads (parallel.ts): this thread reads up to a line start near
 * the middle, a worker thread the rest, and the worker's rows are merged after this thread's. The worker's
 * part is used only when this thread's last record ends exactly where the worker began (a quoted line
 * break across the split, or a stray quote's resumption, makes it read on alone instead), so the log,
 * the codes, the accounting and the first error are those of one reader.
 *
 * The split balances itself, whichever thread is done first (which one lags changes from run to run):
 * - This thread first: it takes a line start `mid` about halfway through what the worker has left,
 *   asks the worker (through a {@link PartSignal}, shared memory the worker looks at each time it
 *   refills its buffer) to stop at the record that starts at `mid`, and reads [mid, end) itself into a
 *   third builder. Merged: this thread's rows, the worker's, the third part's.
 * - The worker first: at its next refill this thread takes a line start `mid` about halfway through
 *   what it has left of its own part, sends the worker [mid, split) (asked to stop at the split), and
 *   stops its own scan at `mid`. Merged: this thread's rows, the worker's second part, its first.
 * A reader asked to stop stops only when one of its records starts exactly there; when it had already
 * gone past the place, or a record of its runs across it (a quoted line break, a stray quote's
 * resumption), it reads on to the end and the part after it is dropped (and when this thread's own
 * record runs across `mid`, it reads on to the split itself). So codes, lines and accounts are one
 * reader's, and the first error in file order wins, its line offset by the parts before it.
 */
import { TidemarkError, showValue } from '../errors.js';
import { CsvScanner, END, ESCAPED, NEED_MORE, NON_ASCII, QUOTED, TOO_LONG, UNCLOSED, type UnclosedWhy } from './csvScan.js';
import type { EventLogBuilder, PartialLog } from './eventLog.js';
import { headerPlan, type HeaderPlan } from './header.js';
import { DEFAULT_LIMITS, MAX_COLUMNS, bytesText, type ScanLimits } from './limits.js';
import { ChunkReader } from './source.js';
import { byteOrderMark, countLf, firstInvalidUtf8, inspectChunk, invalidUtf8Hint, type ChunkText, type SliceBuffer } from './text.js';

/** The delimiter as one byte: an ASCII character other than a quote, CR or LF. */
export function delimiterByte(delimiter: string): number {
  const c = delimiter.length === 1 ? delimiter.charCodeAt(0) : -1;
  if (c < 1 || c > 127 || c === 34 || c === 10 || c === 13) {
    throw new TidemarkError('USAGE', `the CSV delimiter must be one ASCII character other than a quote or a line break, not '${showValue(delimiter)}'`, { key: 'delimiter' },
      'For example --delimiter ";" or --delimiter "\\t"');
  }
  return c;
}

function unclosedHint(why: UnclosedWhy, limits: ScanLimits): string {
  const cause = why === 'lines' ? `runs on past ${limits.maxQuotedLines} lines` : why === 'bytes' ? `runs on past ${bytesText(limits.maxRecordBytes)}`
    : why === 'end of input' ? 'is still open at the end of the file' : 'closes on a later line followed by more text';
  return `the quoted field opened on this line ${cause}: most likely a stray quote. Close or remove it, or pass --skip-bad-rows to skip this line and read on`;
}

function tooLong(file: string, line: number, limits: ScanLimits): TidemarkError {
  return new TidemarkError('EVENTS_FORMAT', `a line longer than ${bytesText(limits.maxRecordBytes)} (the longest record tidemark reads): this does not look like a CSV event log`,
    { file, line }, 'Check the file and the --delimiter; shorten very long values');
}


/** Whether any of the fields at `used` holds doubled quotes to undo (then the row takes the string path). */
function anyEscaped(used: readonly number[], flags: Uint8Array): boolean {
  for (let k = 0; k < used.length; k++) if (flags[used[k]] & ESCAPED) return true;
  return false;
}

/** Files below this size are not presized (their columns double a few times at most). */
const PRESIZE_MIN_BYTES = 4 << 20;

/**
 * About how many rows `bytes` bytes of the file hold, from the line feeds in the first refill `buf[0, end)`
 * (4% over, so that an estimate a little short still needs no doubling), or 0 when too few lines tell.
 */
export function rowsEstimate(buf: Buffer, end: number, bytes: number): number {
  if (bytes < PRESIZE_MIN_BYTES) return 0;
  const lf = countLf(buf, 0, end);
  if (lf < 64) return 0;
  return Math.ceil((bytes / end) * lf * 1.04) + 1024;
}

/** A file's columns and the reusable row state of the scan. */
interface CsvFile {
  file: string;
  builder: EventLogBuilder;
  columns: { user: string; timestamp: string; event: string };
  needEvent: boolean;
  limits: ScanLimits;
  scanner: CsvScanner;
  r: ChunkReader;
}

/** Where a scan stopped: the physical line of the next record and its file offset (-1 at the end of the file). */
interface Stop {
  line: number;
  at: number;
}

/**
 * Scan records from `pos` (physical line `line`) to the end of the file, or until a record would start
 * at or after the file offset `stopAt`. Without `plan` the first record is the header; `onPlan` is told
 * it, and may return a new `stopAt`. A part's reader is given its `signal`; `onRefill`, told the offset
 * of the record at the front of each refill, may return a nearer `stopAt`.
 */
async function scanCsv(f: CsvFile, pos: number, line: number, plan: HeaderPlan | undefined, stopAt: number, onPlan?: (plan: HeaderPlan, line: number) => Promise<number>, signal?: PartSignal, onRefill?: (at: number, stopAt: number) => Promise<number>): Promise<Stop & { plan: HeaderPlan | undefined }> {
  const { file, builder, columns, needEvent, limits, scanner, r } = f;
  // a part's reader: tells how far it has read and takes a stop asked for since, at each refill
  if (signal) {
    signal.tell(r.base + r.end);
    if (stopAt < 0) stopAt = signal.asked();
  }
  let chunk: ChunkText = inspectChunk(r, pos, pos, line);
  let attrs: string[] = plan ? new Array<string>(plan.attributePositions.length).fill('') : [];

  const field = (k: number): string => {
    const s = scanner.starts[k], e = scanner.ends[k], fl = scanner.flags[k];
    const v = fl & NON_ASCII ? (r.buf as SliceBuffer).utf8Slice(s, e) : chunk.text.slice(s, e);
    return fl & ESCAPED ? v.replaceAll('""', '"') : v;
  };
  /** Buffer offset of the first byte of `buf[s, e)` that is not UTF-8, or -1 (checked only in a refill that has one). */
  const badUtf8 = (s: number, e: number): number => (chunk.dirty ? firstInvalidUtf8(r.buf, s, e) : -1);

  for (;;) {
    if (stopAt >= 0 && r.base + pos >= stopAt) return { line, at: r.base + pos, plan };
    const st = scanner.scan(r.buf, pos, r.end, r.eof);
    if (st === NEED_MORE) {
      const kept = await r.refill(pos);
      pos = 0;
      chunk = inspectChunk(r, 0, kept, line);
      if (signal) {
        signal.tell(r.base + r.end);
        if (stopAt < 0) stopAt = signal.asked();
      }
      // this thread, before the split: it may move its stop nearer (the worker takes over the rest)
      if (onRefill && stopAt >= 0) stopAt = await onRefill(r.base, stopAt);
      continue;
    }
    if (st === END) break;
    if (st === TOO_LONG) throw tooLong(file, line, limits);
    const lines = scanner.lines;
    const bad = badUtf8(scanner.recStart, scanner.next);
    if (!plan) {
      if (bad >= 0) {
        throw new TidemarkError('EVENTS_FORMAT', 'the header is not UTF-8 text', { file, line: line + countLf(r.buf, scanner.recStart, bad) },
          invalidUtf8Hint(r.base + bad, r.buf[bad]).replace(/, or pass --skip-bad-rows.*$/, ''));
      }
      if (st === UNCLOSED) throw new TidemarkError('EVENTS_FORMAT', 'the header has an unclosed quote', { file, line: line + scanner.openOffset }, unclosedHint(scanner.why, limits));
      if (scanner.flaw) throw new TidemarkError('EVENTS_FORMAT', 'the header has text after a closing quote', { file, line }, 'Quote each header name whole, or not at all');
      if (scanner.nFields > MAX_COLUMNS) {
        throw new TidemarkError('EVENTS_FORMAT', `the header has ${scanner.nFields.toLocaleString('en-US')} columns, more than the ${MAX_COLUMNS.toLocaleString('en-US')} tidemark keeps`, { file, line },
          'Keep the user, timestamp and event columns and the attributes you need');
      }
      if (scanner.nFields === 1 && scanner.starts[0] === scanner.ends[0]) {
        throw new TidemarkError('EVENTS_FORMAT', 'the first line is blank: it must be the header', { file, line }, `Start the file with a header such as ${columns.user},${columns.timestamp},${columns.event}`);
      }
      const loneCr = r.buf.subarray(scanner.recStart, scanner.recEnd).indexOf(13);
      if (loneCr >= 0 && scanner.recStart + loneCr + 1 < scanner.recEnd) {
        throw new TidemarkError('EVENTS_FORMAT', 'the header holds a carriage return inside the line: the file seems to use CR alone as its line end', { file, line },
          'Re-save the file with LF or CRLF line ends');
      }
      const names: string[] = [];
      for (let k = 0; k < scanner.nFields; k++) names.push(field(k));
      plan = headerPlan(names, columns, needEvent, file);
      builder.startFile(file, plan.attributeNames);
      builder.header(lines);
      attrs = new Array<string>(plan.attributePositions.length).fill('');
      line += lines;
      pos = scanner.next;
      if (onPlan) stopAt = await onPlan(plan, line);
      continue;
    }
    if (bad >= 0) {
      builder.reject('invalid UTF-8', file, line + countLf(r.buf, scanner.recStart, bad), undefined, undefined, invalidUtf8Hint(r.base + bad, r.buf[bad]), lines);
    } else if (st === UNCLOSED) {
      builder.reject('unclosed quote', file, line + scanner.openOffset, undefined, undefined, unclosedHint(scanner.why, limits), lines);
    } else if (scanner.flaw) {
      builder.reject('stray quote', file, line, undefined, undefined, 'Text follows a closing quote: double each quote inside a quoted field, or pass --skip-bad-rows', lines);
    } else if (scanner.nFields === 1 && scanner.starts[0] === scanner.ends[0] && !(scanner.flags[0] & QUOTED)) {
      builder.blank();
    } else if (scanner.nFields !== plan.width) {
      builder.reject('wrong number of fields', file, line, undefined, `${scanner.nFields} fields, header has ${plan.width}`,
        'Quote fields that contain the delimiter, or pass --skip-bad-rows', lines);
    } else if (!anyEscaped(plan.used, scanner.flags)) {
      // the hot path: the fields as byte ranges, no string for a known id, event or value
      builder.addFields(file, line, lines, r.buf, scanner.starts, scanner.ends, plan.user, plan.timestamp, plan.event, plan.attributePositions);
    } else {
      const pp = plan.attributePositions;
      for (let a = 0; a < pp.length; a++) attrs[a] = field(pp[a]);
      builder.add(file, line, field(plan.user), field(plan.timestamp), plan.event >= 0 ? field(plan.event) : undefined, attrs, lines);
    }
    line += lines;
    pos = scanner.next;
  }
  return { line, at: -1, plan };
}

/** How a file is read on two threads: from what size, and where to split (tests choose the split). */
export interface SplitOptions {
  /** Smallest regular file read on two threads, in bytes. */
  minBytes: number;
  /** The byte offset near which to split a file of `size` bytes whose header ends at `headerEnd`; a line start at or after it is used. */
  splitNear: (size: number, headerEnd: number) => number;
  /** Read the later part: resolves to that part's rows or its first error; `onBytes` hears of the bytes it reads. */
  readPart: (job: CsvPartJob, onBytes?: (n: number) => void) => PartRun;
  /**
   * When this thread has read its part and the later part's reader has read up to byte `at` of a file
   * of `size` bytes: the offset near which this thread is to take over the rest (a line start at or
   * after it is used), or undefined to leave the rest to that reader.
   */
  balanceNear?: (size: number, at: number) => number | undefined;
  /** Read a last part on this thread (from the line start `balanceNear` led to, into its own builder). */
  readHere?: (job: CsvPartJob, onBytes?: (n: number) => void) => Promise<PartResult>;
  /**
   * When the later part's reader is done and this thread, at byte `at`, still has to read up to the
   * split at `split`: the offset near which that reader is to take over the rest of this thread's part
   * (a line start at or after it is used), or undefined to read it here.
   */
  takeNear?: (at: number, split: number) => number | undefined;
}

/** A reader of a later part on another thread ({@link SplitOptions.readPart}). */
export interface PartRun {
  result: Promise<PartResult>;
  /** Have the same reader, once done, read another part (`job.signal` asks it where to stop); undefined when it cannot. */
  more?: (job: CsvPartJob, onBytes?: (n: number) => void) => Promise<PartResult>;
  /** No more parts for it: end it once it has answered. */
  done: () => void;
  /** Stop it now (a worker thread is ended). */
  cancel: () => void;
}

/** A later part of a CSV file, for a reader on another thread. */
export interface CsvPartJob {
  file: string;
  start: number;
  plan: HeaderPlan;
  delimiter: string;
  limits: ScanLimits;
  /** A {@link PartSignal}'s memory: the reader tells how far it has read, and may be asked to stop. */
  signal?: SharedArrayBuffer;
}

/**
 * What the reader of a later part gives back: its rows and where it stopped (`end`: the offset of the
 * record it stopped before when asked to, -1 at the end of the file), its first error (lines counted
 * from the part's first line), or that it could not run at all (then this thread reads on).
 */
export type PartResult = { ok: true; partial: PartialLog; end: number } | { ok: false; error: TidemarkError } | { ok: false; unavailable: true };

/**
 * Shared memory between this thread and the reader of a later part: how far that reader has read (a
 * file offset, told at each refill of its buffer) and the offset of the record it is asked to stop
 * before (-1: none). Two 64-bit integers, read and written with Atomics.
 */
export class PartSignal {
  private readonly cells: BigInt64Array;

  /** A signal over `memory` (another thread's), or over new memory with no stop asked. */
  constructor(memory?: SharedArrayBuffer) {
    this.memory = memory ?? new SharedArrayBuffer(16);
    this.cells = new BigInt64Array(this.memory, 0, 2);
    if (!memory) Atomics.store(this.cells, 0, -1n);
  }

  readonly memory: SharedArrayBuffer;

  /** The offset of the record to stop before, or -1. */
  asked(): number {
    return Number(Atomics.load(this.cells, 0));
  }

  /** Ask the reader to stop before the record that starts at `at` (if one does). */
  ask(at: number): void {
    Atomics.store(this.cells, 0, BigInt(at));
  }

  /** The reader has read the file up to byte `at`. */
  tell(at: number): void {
    Atomics.store(this.cells, 1, BigInt(at));
  }

  /** How far the reader has read (0 before its first read). */
  read(): number {
    return Number(Atomics.load(this.cells, 1));
  }
}

/**
 * Tells `onBytes` of the bytes a reader reads, up to a bound that can change: a reader reads whole
 * chunks past the end of its part, and only its part's bytes count as its own (progress).
 */
function boundedCount(onBytes: (n: number) => void): { add: (n: number) => void; bound: (limit: number) => void } {
  let got = 0, limit = Infinity;
  const told = () => Math.min(got, limit);
  return {
    add: (n) => {
      const before = told();
      got += n;
      if (told() > before) onBytes(told() - before);
    },
    // never told less: a bound below what was told already (a reader asked to stop after it had read
    // past the place) leaves the count as it is
    bound: (l) => {
      const before = told();
      limit = Math.max(l, before);
      if (told() > before) onBytes(told() - before);
    },
  };
}

/** `e` with its line moved down by `lines` (an error of a later part, whose lines count from its first). */
function offsetError(e: TidemarkError, lines: number): TidemarkError {
  return new TidemarkError(e.code, e.message, e.where.line === undefined ? e.where : { ...e.where, line: e.where.line + lines }, e.hint);
}

/** `onBytes` is told the bytes of the file read as they are read, by both threads (progress). */
export async function readCsv(file: string, builder: EventLogBuilder, columns: { user: string; timestamp: string; event: string }, needEvent: boolean, delimiter = ',', limits: ScanLimits = DEFAULT_LIMITS, split?: SplitOptions, onBytes?: (n: number) => void): Promise<void> {
  const scanner = new CsvScanner(delimiterByte(delimiter), limits);
  // this thread reads whole chunks past the split, the worker past where it is asked to stop: only the
  // bytes of each one's part count as its own
  const mine = onBytes && boundedCount(onBytes);
  const theirs = onBytes && boundedCount(onBytes);
  const r = await ChunkReader.open(file, limits.chunk, undefined, mine?.add);
  let run: PartRun | undefined;
  let part: PartRun | undefined;
  let partStart = -1;
  let first: PartResult | undefined;
  let job: CsvPartJob | undefined;
  // the worker, done first, reading from `takeFrom` to the split (or on to the end)
  let second: Promise<PartResult> | undefined;
  let takeFrom = -1;
  try {
    await r.refill(0);
    const f: CsvFile = { file, builder, columns, needEvent, limits, scanner, r };
    const pos = byteOrderMark(r.buf, r.end, file);
    const onPlan = async (plan: HeaderPlan, line: number): Promise<number> => {
      const size = r.fileSize;
      // this thread's columns hold the whole file's rows (a worker's part is merged into them)
      if (size !== undefined) builder.expectRows(rowsEstimate(r.buf, r.end, size - r.base));
      if (!split || size === undefined || size < split.minBytes || line !== 2) return -1;
      const at = await r.lineStartAfter(Math.max(r.base, split.splitNear(size, r.base)));
      if (at === undefined || at >= size) return -1;
      partStart = at;
      job = { file, start: at, plan, delimiter, limits, signal: new PartSignal().memory };
      run = part = split.readPart(job, theirs?.add);
      void part.result.then((got) => (first = got));
      mine?.bound(at);
      return at;
    };
    // the worker done first with its whole part: it takes over about half of what is left of this thread's
    const onRefill = async (at: number, stopAt: number): Promise<number> => {
      if (second || takeFrom === -2 || !first || !first.ok || first.end >= 0 || !run?.more || !split?.takeNear || !job || stopAt !== partStart) return stopAt;
      const near = split.takeNear(at, partStart);
      takeFrom = -2; // asked once
      const mid = near === undefined ? undefined : await r.lineStartAfter(Math.max(near, at + 1));
      if (mid === undefined || mid >= partStart) return stopAt;
      const signal = new PartSignal();
      // it stops at the split only if a record of its starts there (else it reads on to the end)
      signal.ask(partStart);
      takeFrom = mid;
      const count = onBytes && boundedCount(onBytes);
      count?.bound(partStart - mid);
      second = run.more({ file, start: mid, plan: job.plan, delimiter, limits, signal: signal.memory }, count?.add);
      mine?.bound(mid);
      return mid;
    };
    let stop = await scanCsv(f, pos, 1, undefined, -1, onPlan, undefined, onRefill);
    if (second && stop.at !== takeFrom) run?.cancel(); // its part is of no use (its first answer is kept)
    run?.done();
    if (second) {
      const got = stop.at === takeFrom ? await second : undefined;
      if (got?.ok) {
        builder.endFile(stop.line - 1);
        builder.merge(got.partial, file, stop.line - 1);
        // it stopped at the split: the worker's first part follows
        if (got.end === partStart && first?.ok) return builder.merge(first.partial, file, stop.line - 1 + got.partial.rows.lines.read);
        if (got.end >= 0) throw new Error(`the worker stopped at ${got.end}, not at the split (${partStart})`);
        return;
      }
      if (got && 'error' in got) throw offsetError(got.error, stop.line - 1);
      // this thread's last record ran across where the worker began (or the worker could not run): read on to the split
      part = undefined;
      if (stop.at >= 0) stop = await scanCsv(f, stop.at - r.base, stop.line, stop.plan, partStart);
      part = run;
    }
    if (part && job && stop.at === partStart) {
      const size = r.fileSize!;
      // balance: take over about half of what the worker has left, when that is worth it
      let mid = -1;
      let third: Promise<PartResult> | undefined;
      if (!first && split?.balanceNear && split.readHere && job.signal) {
        const signal = new PartSignal(job.signal);
        const near = split.balanceNear(size, Math.max(partStart, signal.read()));
        const at = near === undefined ? undefined : await r.lineStartAfter(Math.max(near, partStart + 1));
        // not when the worker has read past it already (it would read on; the third part would be lost)
        if (at !== undefined && at < size && !first && signal.read() < at) {
          mid = at;
          signal.ask(mid);
          theirs?.bound(mid - partStart);
          third = split.readHere({ file, start: mid, plan: job.plan, delimiter, limits }, onBytes);
        }
      }
      const last = third && (await third);
      const got = await part.result;
      part = undefined;
      if (got.ok) {
        builder.endFile(stop.line - 1);
        builder.merge(got.partial, file, stop.line - 1);
        // the worker stopped where the third part starts: that part follows its rows
        if (last && got.end === mid) {
          const before = stop.line - 1 + got.partial.rows.lines.read;
          if (last.ok) return builder.merge(last.partial, file, before);
          if ('error' in last) throw offsetError(last.error, before);
          throw new Error('a part read on this thread cannot be unavailable');
        }
        if (got.end >= 0) throw new Error(`the worker stopped at ${got.end}, not where it was asked to (${mid})`);
        return;
      }
      if ('error' in got) throw offsetError(got.error, stop.line - 1);
    }
    // no split, the worker could not run, or this thread's last record ran past the split: read on alone
    run?.cancel();
    run = part = undefined;
    mine?.bound(Infinity);
    if (stop.at >= 0) stop = await scanCsv(f, stop.at - r.base, stop.line, stop.plan, -1);
    if (!stop.plan) throw new TidemarkError('EVENTS_FORMAT', 'the file is empty: it needs a header line', { file, line: 1 }, `Start the file with a header such as ${columns.user},${columns.timestamp},${columns.event}`);
    builder.endFile(stop.line - 1);
  } finally {
    run?.cancel();
    await r.close();
  }
}

/**
 * Read the part of a CSV file from byte `start` (a line start) to its end into `builder`, with the
 * header plan read by the first part: what a worker thread runs. Lines count from the part's first.
 * With a `signal`, it stops before the record that starts at the offset it is asked to stop at, if one
 * does. Returns where it stopped: that offset, or -1 at the end of the file.
 */
export async function readCsvPart(job: CsvPartJob, builder: EventLogBuilder, columns: { user: string; timestamp: string; event: string }, needEvent: boolean, onBytes?: (n: number) => void): Promise<number> {
  const scanner = new CsvScanner(delimiterByte(job.delimiter), job.limits);
  const r = await ChunkReader.open(job.file, job.limits.chunk, job.start, onBytes);
  try {
    await r.refill(0);
    builder.startFile(job.file, job.plan.attributeNames);
    const signal = job.signal && new PartSignal(job.signal);
    // room for the rows up to where it is asked to stop from the start (a part taken over), else to the end
    const until = signal && signal.asked() >= 0 ? signal.asked() : r.fileSize;
    if (until !== undefined) builder.expectRows(rowsEstimate(r.buf, r.end, until - job.start));
    const f: CsvFile = { file: job.file, builder, columns, needEvent, limits: job.limits, scanner, r };
    let stop = await scanCsv(f, 0, 1, job.plan, -1, undefined, signal);
    // asked to stop at a record start, but a record of this part starts past it (it was asked too late,
    // or a record runs across it): read on to the end, and the one who asked reads nothing after us
    if (stop.at >= 0 && stop.at !== signal?.asked()) stop = await scanCsv(f, stop.at - r.base, stop.line, job.plan, -1);
    builder.endFile(stop.line - 1);
    return stop.at;
  } finally {
    await r.close();
  }
}
