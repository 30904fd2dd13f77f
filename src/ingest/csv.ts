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
 * it, and may return a new `stopAt`.
 */
async function scanCsv(f: CsvFile, pos: number, line: number, plan: HeaderPlan | undefined, stopAt: number, onPlan?: (plan: HeaderPlan, line: number) => Promise<number>): Promise<Stop & { plan: HeaderPlan | undefined }> {
  const { file, builder, columns, needEvent, limits, scanner, r } = f;
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
  readPart: (job: CsvPartJob, onBytes?: (n: number) => void) => { result: Promise<PartResult>; cancel: () => void };
}

/** A later part of a CSV file, for a reader on another thread. */
export interface CsvPartJob {
  file: string;
  start: number;
  plan: HeaderPlan;
  delimiter: string;
  limits: ScanLimits;
}

/**
 * What the reader of a later part gives back: its rows, its first error (lines counted from the part's
 * first line), or that it could not run at all (then this thread reads on).
 */
export type PartResult = { ok: true; partial: PartialLog } | { ok: false; error: TidemarkError } | { ok: false; unavailable: true };

/** `onBytes` is told the bytes of the file read as they are read, by both threads (progress). */
export async function readCsv(file: string, builder: EventLogBuilder, columns: { user: string; timestamp: string; event: string }, needEvent: boolean, delimiter = ',', limits: ScanLimits = DEFAULT_LIMITS, split?: SplitOptions, onBytes?: (n: number) => void): Promise<void> {
  const scanner = new CsvScanner(delimiterByte(delimiter), limits);
  // this thread reads whole chunks past the split; only its bytes before the split count as its own
  let mine = 0, upTo = Infinity;
  const counted = onBytes && ((n: number) => {
    const before = Math.min(mine, upTo);
    mine += n;
    if (Math.min(mine, upTo) > before) onBytes(Math.min(mine, upTo) - before);
  });
  const countUpTo = (limit: number) => {
    if (!onBytes) return;
    const said = Math.min(mine, upTo);
    upTo = limit;
    if (Math.min(mine, upTo) !== said) onBytes(Math.min(mine, upTo) - said);
  };
  const r = await ChunkReader.open(file, limits.chunk, undefined, counted);
  let part: ReturnType<SplitOptions['readPart']> | undefined;
  let partStart = -1;
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
      part = split.readPart({ file, start: at, plan, delimiter, limits }, onBytes);
      countUpTo(at);
      return at;
    };
    let stop = await scanCsv(f, pos, 1, undefined, -1, onPlan);
    if (part && stop.at === partStart) {
      const got = await part.result;
      part = undefined;
      if (got.ok) {
        builder.endFile(stop.line - 1);
        builder.merge(got.partial, file, stop.line - 1);
        return;
      }
      if ('error' in got) {
        const e = got.error;
        throw new TidemarkError(e.code, e.message, e.where.line === undefined ? e.where : { ...e.where, line: e.where.line + stop.line - 1 }, e.hint);
      }
    }
    // no split, the worker could not run, or this thread's last record ran past the split: read on alone
    part?.cancel();
    part = undefined;
    countUpTo(Infinity);
    if (stop.at >= 0) stop = await scanCsv(f, stop.at - r.base, stop.line, stop.plan, -1);
    if (!stop.plan) throw new TidemarkError('EVENTS_FORMAT', 'the file is empty: it needs a header line', { file, line: 1 }, `Start the file with a header such as ${columns.user},${columns.timestamp},${columns.event}`);
    builder.endFile(stop.line - 1);
  } finally {
    part?.cancel();
    await r.close();
  }
}

/**
 * Read the part of a CSV file from byte `start` (a line start) to its end into `builder`, with the
 * header plan read by the first part: what a worker thread runs. Lines count from the part's first.
 */
export async function readCsvPart(job: CsvPartJob, builder: EventLogBuilder, columns: { user: string; timestamp: string; event: string }, needEvent: boolean, onBytes?: (n: number) => void): Promise<void> {
  const scanner = new CsvScanner(delimiterByte(job.delimiter), job.limits);
  const r = await ChunkReader.open(job.file, job.limits.chunk, job.start, onBytes);
  try {
    await r.refill(0);
    builder.startFile(job.file, job.plan.attributeNames);
    if (r.fileSize !== undefined) builder.expectRows(rowsEstimate(r.buf, r.end, r.fileSize - job.start));
    const stop = await scanCsv({ file: job.file, builder, columns, needEvent, limits: job.limits, scanner, r }, 0, 1, job.plan, -1);
    builder.endFile(stop.line - 1);
  } finally {
    await r.close();
  }
}
