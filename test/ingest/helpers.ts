/**
 * Helpers for the reader tests: drive the CSV scanner over bytes in chunks of a chosen size, an
 * independent RFC 4180 parser, an RFC 4180 writer, and the physical line count of a byte string.
 */
import { afterEach, beforeEach, expect } from 'vitest';
import { CsvScanner, ESCAPED, NEED_MORE, RECORD, END, UNCLOSED, TOO_LONG } from '../../src/ingest/csvScan.js';
import { DEFAULT_LIMITS, type ScanLimits } from '../../src/ingest/limits.js';
import type { EventLog, RowAccount } from '../../src/ingest/eventLog.js';
import { readEvents, type ReadEventsOptions } from '../../src/ingest/read.js';
import { rulesOf, tempDir } from '../core/helpers.js';

export interface ScannedRecord {
  status: 'record' | 'unclosed' | 'too long';
  fields: string[];
  /** Physical line the record starts on. */
  line: number;
  lines: number;
  flaw: number;
}

const utf8 = new TextDecoder('utf-8');

/**
 * Scan `bytes` as the reader does, but feeding at most `chunk` new bytes at a time (the buffer keeps
 * the unfinished record and grows when it must). Returns the records and the lines counted.
 */
export function scanAll(bytes: Uint8Array, opts: { delim?: string; chunk?: number; limits?: Partial<ScanLimits> } = {}): { records: ScannedRecord[]; lines: number } {
  const limits = { ...DEFAULT_LIMITS, ...opts.limits };
  const chunk = opts.chunk ?? bytes.length + 1;
  const sc = new CsvScanner((opts.delim ?? ',').charCodeAt(0), limits);
  let buf = new Uint8Array(Math.max(chunk, 1));
  let end = 0, fed = 0, pos = 0, line = 1;
  const records: ScannedRecord[] = [];
  const feed = () => {
    // keep buf[pos, end), move it to the front, add up to `chunk` bytes (growing the buffer if full)
    const kept = buf.subarray(pos, end);
    if (kept.length + chunk > buf.length) {
      const bigger = new Uint8Array(kept.length + chunk);
      bigger.set(kept);
      buf = bigger;
    } else buf.copyWithin(0, pos, end);
    end = kept.length;
    pos = 0;
    const add = bytes.subarray(fed, Math.min(bytes.length, fed + chunk));
    buf.set(add, end);
    end += add.length;
    fed += add.length;
  };
  feed();
  for (let guard = 0; guard < 10 * bytes.length + 100; guard++) {
    const st = sc.scan(buf, pos, end, fed >= bytes.length);
    if (st === NEED_MORE) {
      expect(fed, 'NEED_MORE only before the end of input').toBeLessThan(bytes.length);
      feed();
      continue;
    }
    if (st === END) return { records, lines: line - 1 };
    const fields: string[] = [];
    if (st === RECORD || st === TOO_LONG) {
      for (let k = 0; k < sc.nFields; k++) {
        const v = utf8.decode(buf.subarray(sc.starts[k], sc.ends[k]));
        fields.push(sc.flags[k] & ESCAPED ? v.replaceAll('""', '"') : v);
      }
    }
    if (st === TOO_LONG) {
      records.push({ status: 'too long', fields, line, lines: sc.lines, flaw: sc.flaw });
      return { records, lines: line - 1 };
    }
    records.push({ status: st === UNCLOSED ? 'unclosed' : 'record', fields, line: st === UNCLOSED ? line + sc.openOffset : line, lines: sc.lines, flaw: sc.flaw });
    line += sc.lines;
    pos = sc.next;
  }
  throw new Error('the scanner made no progress');
}

/**
 * An independent RFC 4180 parser, written from the ABNF of RFC 4180 §2 as one sticky regular
 * expression per field (escaped = DQUOTE *(TEXTDATA / COMMA / CR / LF / 2DQUOTE) DQUOTE; non-escaped =
 * *TEXTDATA), with TEXTDATA widened to any character but the quote, the delimiter, CR and LF (common
 * practice for non-ASCII text) and LF accepted as well as CRLF between records. Well-formed input only.
 */
export function rfc4180Parse(text: string, delim = ','): string[][] {
  const d = delim.replace(/[\\^$.*+?()[\]{}|]/g, '\\$&');
  const field = new RegExp(`"((?:[^"]|"")*)"|([^"${d}\\r\\n]*)`, 'y');
  const rows: string[][] = [];
  let i = 0;
  while (i < text.length) {
    const row: string[] = [];
    for (;;) {
      field.lastIndex = i;
      const m = field.exec(text);
      if (!m) throw new Error(`no field at ${i}`);
      row.push(m[1] !== undefined ? m[1].replaceAll('""', '"') : m[2]);
      i = field.lastIndex;
      if (text[i] === delim) {
        i++;
        continue;
      }
      if (text.startsWith('\r\n', i)) i += 2;
      else if (text[i] === '\n') i++;
      else if (i < text.length) throw new Error(`unexpected ${JSON.stringify(text[i])} at ${i}`);
      break;
    }
    rows.push(row);
  }
  return rows;
}

/** Write rows per RFC 4180 §2: a field with the delimiter, a quote, CR or LF is quoted (or when `quoteAll`), quotes doubled. */
export function rfc4180Write(rows: string[][], opts: { delim?: string; eol?: string; quoteAll?: boolean; finalEol?: boolean } = {}): string {
  const d = opts.delim ?? ',';
  const eol = opts.eol ?? '\r\n';
  const cell = (v: string, onlyField: boolean) =>
    opts.quoteAll || v.includes(d) || /["\r\n]/.test(v) || (onlyField && v === '') ? `"${v.replaceAll('"', '""')}"` : v;
  return rows.map((r) => r.map((v) => cell(v, r.length === 1)).join(d)).join(eol) + (opts.finalEol ? eol : '');
}

/** Physical lines of a byte string: its line feeds, plus one for a last line without one. */
export function physicalLines(bytes: Uint8Array): number {
  let n = 0;
  for (const b of bytes) if (b === 10) n++;
  return bytes.length > 0 && bytes[bytes.length - 1] !== 10 ? n + 1 : n;
}

/** Both accounting identities of a read: rows and physical lines. */
export function expectBalanced(rows: RowAccount): void {
  const rejected = Object.values(rows.rejected).reduce((a, b) => a + (b ?? 0), 0);
  expect(rows.read, JSON.stringify(rows)).toBe(rows.used + rows.notKeyEvent + rows.afterRange + rejected);
  const l = rows.lines;
  expect(l.read, JSON.stringify(rows)).toBe(l.header + l.blank + l.records + l.rejected);
}

/** A fresh temporary folder for each test of the calling file (made before it, removed after). */
export function readerDir(): { readonly dir: string; file(name: string, text: string | Uint8Array): string } {
  let cur: ReturnType<typeof tempDir> | undefined;
  beforeEach(() => {
    cur = tempDir();
  });
  afterEach(() => cur?.done());
  return {
    get dir() {
      return cur!.dir;
    },
    file: (name, text) => cur!.file(name, text),
  };
}

/** The rules the reader tests use: daily grain, lapse limit 2. */
export const rules = rulesOf({ grain: 'day', lapseLimit: 2 });
/** The users of a log, event by event. */
export const usersOf = (log: EventLog): string[] => Array.from(log.user, (u) => log.users[u]);
/** Read one file with the reader tests' rules. */
export const read = (f: string, o: Partial<ReadEventsOptions> = {}): Promise<EventLog> => readEvents([f], { rules, ...o });
