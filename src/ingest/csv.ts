/**
 * CSV events: RFC 4180 (quoted fields, doubled quotes, line breaks inside quotes, CRLF or LF), a UTF-8
 * byte order mark dropped, a chosen one-byte delimiter. The file is read once, in chunks, by the
 * byte-level scanner in csvScan.ts; only the fields a row needs are decoded (ASCII fields are sliced
 * from the chunk decoded byte for byte, others decoded as UTF-8). Line numbers in messages are the
 * physical lines where records start, counted as the scan goes.
 */
import { TidemarkError, showValue } from '../errors.js';
import { CsvScanner, END, ESCAPED, NEED_MORE, NON_ASCII, QUOTED, TOO_LONG, UNCLOSED, type UnclosedWhy } from './csvScan.js';
import type { EventLogBuilder } from './eventLog.js';
import { headerPlan } from './header.js';
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

export async function readCsv(file: string, builder: EventLogBuilder, columns: { user: string; timestamp: string; event: string }, needEvent: boolean, delimiter = ',', limits: ScanLimits = DEFAULT_LIMITS): Promise<void> {
  const scanner = new CsvScanner(delimiterByte(delimiter), limits);
  const r = await ChunkReader.open(file, limits.chunk);
  try {
    await r.refill(0);
    let pos = byteOrderMark(r.buf, r.end, file);
    let line = 1; // the physical line of the record at pos
    let chunk: ChunkText = inspectChunk(r, pos, pos, line);
    let plan: ReturnType<typeof headerPlan> | undefined;
    let attrs: string[] = [];

    const field = (k: number): string => {
      const s = scanner.starts[k], e = scanner.ends[k], f = scanner.flags[k];
      const v = f & NON_ASCII ? (r.buf as SliceBuffer).utf8Slice(s, e) : chunk.text.slice(s, e);
      return f & ESCAPED ? v.replaceAll('""', '"') : v;
    };
    /** Buffer offset of the first byte of `buf[s, e)` that is not UTF-8, or -1 (checked only in a refill that has one). */
    const badUtf8 = (s: number, e: number): number => (chunk.dirty ? firstInvalidUtf8(r.buf, s, e) : -1);

    for (;;) {
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
      } else if (bad >= 0) {
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
      } else {
        const pp = plan.attributePositions;
        for (let a = 0; a < pp.length; a++) attrs[a] = field(pp[a]);
        const u = plan.user;
        const known = scanner.flags[u] & ESCAPED ? -1 : builder.knownUser(r.buf, scanner.starts[u], scanner.ends[u]);
        builder.add(file, line, known >= 0 ? known : field(u), field(plan.timestamp), plan.event >= 0 ? field(plan.event) : undefined, attrs, lines);
      }
      line += lines;
      pos = scanner.next;
    }
    if (!plan) throw new TidemarkError('EVENTS_FORMAT', 'the file is empty: it needs a header line', { file, line: 1 }, `Start the file with a header such as ${columns.user},${columns.timestamp},${columns.event}`);
    builder.endFile(line - 1);
  } finally {
    await r.close();
  }
}


