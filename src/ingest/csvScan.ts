/**
 * A byte-level CSV record scanner (RFC 4180 §2: fields separated by a delimiter, records by CRLF or LF,
 * fields optionally enclosed in double quotes, a quote inside a quoted field doubled, line breaks
 * allowed inside quoted fields).
 *
 * It scans one record at a time over a buffer of bytes and keeps each field as a byte range
 * (`starts`/`ends`) with flags; it allocates nothing per record and decodes nothing. It counts the
 * physical lines (line feeds) each record spans, so line numbers cost no second pass.
 *
 * Beyond RFC 4180, for real exports:
 * - A quote inside an unquoted field is kept as a character (common practice: RFC 4180 forbids it,
 *   spreadsheets and Python's csv module read it literally).
 * - Text after a closing quote on the same line (`"ab"c`) flaws the record (STRAY_QUOTE).
 * - A quoted field that runs past `maxQuotedLines` lines or the record past `maxRecordBytes` bytes, or
 *   that the input ends inside, or whose closing quote is on a later line and followed by text, is
 *   taken for an unclosed (stray) quote: the scanner reports UNCLOSED with the line the quote opened on
 *   and resumes at the next physical line, so the lines it swallowed are read as the records they are.
 * - A record longer than `maxRecordBytes` outside quotes is TOO_LONG.
 */
import type { ScanLimits } from './limits.js';

/** scan() results. */
export const RECORD = 0;
export const NEED_MORE = 1;
export const END = 2;
export const UNCLOSED = 3;
export const TOO_LONG = 4;

/** Field flags. */
export const QUOTED = 1;
/** The quoted field holds doubled quotes ("") to undo. */
export const ESCAPED = 2;
/** The field holds bytes ≥ 0x80 (decode as UTF-8, not by slicing the byte-for-byte text). */
export const NON_ASCII = 4;

/** Record flaws (with RECORD). */
export const STRAY_QUOTE = 1;

/** Why a quoted field was taken for an unclosed quote (with UNCLOSED). */
export type UnclosedWhy = 'lines' | 'bytes' | 'end of input' | 'text after a later closing quote';

const QUOTE = 34;
const LF = 10;
const CR = 13;

export class CsvScanner {
  /** Fields of the last record: byte ranges in the buffer given to scan(), and flags. */
  starts = new Int32Array(64);
  ends = new Int32Array(64);
  flags = new Uint8Array(64);
  nFields = 0;
  /** The record's first byte, the end of its content (before the line end), and where the next record starts. */
  recStart = 0;
  recEnd = 0;
  next = 0;
  /** Physical lines the record spans (for UNCLOSED: from its start to the line the quote opened on). */
  lines = 0;
  /** RECORD: 0 or STRAY_QUOTE. */
  flaw = 0;
  /** UNCLOSED: lines between the record's first line and the line the quote opened on, and why. */
  openOffset = 0;
  why: UnclosedWhy = 'lines';

  constructor(private readonly delim: number, private readonly limits: Pick<ScanLimits, 'maxRecordBytes' | 'maxQuotedLines'>) {}

  private push(nf: number, s: number, e: number, f: number): void {
    if (nf === this.starts.length) {
      const n = nf * 2;
      const st = new Int32Array(n), en = new Int32Array(n), fl = new Uint8Array(n);
      st.set(this.starts);
      en.set(this.ends);
      fl.set(this.flags);
      this.starts = st;
      this.ends = en;
      this.flags = fl;
    }
    this.starts[nf] = s;
    this.ends[nf] = e;
    this.flags[nf] = f;
  }

  private record(recStart: number, recEnd: number, next: number, lfs: number, nf: number, flaw: number): number {
    this.recStart = recStart;
    this.recEnd = recEnd;
    this.next = next;
    this.lines = lfs + 1;
    this.nFields = nf;
    this.flaw = flaw;
    return recEnd - recStart > this.limits.maxRecordBytes ? TOO_LONG : RECORD;
  }

  /** A quoted field taken for an unclosed quote: reject up to its opening line, resume after that line. */
  private unclosed(recStart: number, openLfs: number, firstLf: number, end: number, eof: boolean, why: UnclosedWhy): number {
    this.recStart = recStart;
    this.openOffset = openLfs;
    this.lines = openLfs + 1;
    this.why = why;
    this.nFields = 0;
    if (firstLf >= 0) {
      this.next = firstLf + 1;
      this.recEnd = firstLf;
      return UNCLOSED;
    }
    // no line feed after the opening quote: the opening line runs to the end of the input (unclosed)
    // unless it is itself longer than the bound (too long, found the same way whatever the chunking)
    this.recEnd = end;
    this.next = end;
    return eof && end - recStart <= this.limits.maxRecordBytes ? UNCLOSED : TOO_LONG;
  }

  /**
   * Scan the record starting at `pos` in `buf[0, end)`. `eof`: no bytes follow `end`. Returns RECORD
   * (fields in starts/ends/flags, lines, next), NEED_MORE (the record runs past `end`: read more and scan
   * again from its start), END (no bytes left), UNCLOSED or TOO_LONG.
   */
  scan(buf: Uint8Array, pos: number, end: number, eof: boolean): number {
    const d = this.delim;
    const maxBytes = this.limits.maxRecordBytes;
    const maxLines = this.limits.maxQuotedLines;
    const recStart = pos;
    if (pos >= end && eof) return END;
    let i = pos;
    let nf = 0;
    let lfs = 0;
    let flaw = 0;
    for (;;) {
      let j = i;
      if (j < end && buf[j] === QUOTE) {
        const openLfs = lfs;
        let firstLf = -1;
        let f = QUOTED;
        let hi = 0;
        j++;
        for (;;) {
          if (j >= end) {
            if (!eof) return j - recStart > maxBytes ? this.unclosed(recStart, openLfs, firstLf, end, eof, 'bytes') : NEED_MORE;
            return this.unclosed(recStart, openLfs, firstLf, end, eof, 'end of input');
          }
          const c = buf[j];
          if (c === QUOTE) {
            if (j + 1 >= end && !eof) return NEED_MORE;
            if (j + 1 < end && buf[j + 1] === QUOTE) {
              f |= ESCAPED;
              j += 2;
              continue;
            }
            break;
          }
          if (c === LF) {
            lfs++;
            if (firstLf < 0) firstLf = j;
            if (lfs - openLfs > maxLines) return this.unclosed(recStart, openLfs, firstLf, end, eof, 'lines');
          }
          hi |= c;
          j++;
        }
        // j is at the closing quote
        if (j - recStart > maxBytes) return this.unclosed(recStart, openLfs, firstLf, end, eof, 'bytes');
        const fieldEnd = j;
        j++;
        if (j >= end) {
          if (!eof) return NEED_MORE;
          this.push(nf++, i + 1, fieldEnd, hi >= 0x80 ? f | NON_ASCII : f);
          return this.record(recStart, j, j, lfs, nf, flaw);
        }
        const c = buf[j];
        if (c === d) {
          this.push(nf++, i + 1, fieldEnd, hi >= 0x80 ? f | NON_ASCII : f);
          i = j + 1;
          continue;
        }
        if (c === LF) {
          this.push(nf++, i + 1, fieldEnd, hi >= 0x80 ? f | NON_ASCII : f);
          return this.record(recStart, j, j + 1, lfs, nf, flaw);
        }
        if (c === CR) {
          if (j + 1 >= end && !eof) return NEED_MORE;
          if (j + 1 >= end || buf[j + 1] === LF) {
            // CRLF, or a CR ending the input
            this.push(nf++, i + 1, fieldEnd, hi >= 0x80 ? f | NON_ASCII : f);
            return this.record(recStart, j, Math.min(end, j + 2), lfs, nf, flaw);
          }
        }
        // text after the closing quote: a stray quote. When the quoted span crossed a line, the quote
        // that opened it was most likely the stray one.
        if (lfs > openLfs) return this.unclosed(recStart, openLfs, firstLf, end, eof, 'text after a later closing quote');
        flaw = STRAY_QUOTE;
        // read the rest of the field as unquoted text, from j
      }
      // an unquoted field from i (or the rest of a flawed quoted field from j)
      const fieldStart = i;
      let hi = 0;
      while (j < end) {
        const c = buf[j];
        if (c === d || c === LF) break;
        hi |= c;
        j++;
      }
      if (j >= end) {
        if (!eof) return j - recStart > maxBytes + 1 ? this.record(recStart, j, j, lfs, nf, flaw) /* TOO_LONG */ : NEED_MORE;
        let fe = j;
        if (fe > fieldStart && buf[fe - 1] === CR) fe--;
        this.push(nf++, fieldStart, fe, hi >= 0x80 ? NON_ASCII : 0);
        return this.record(recStart, fe, j, lfs, nf, flaw);
      }
      if (buf[j] === d) {
        this.push(nf++, fieldStart, j, hi >= 0x80 ? NON_ASCII : 0);
        i = j + 1;
        continue;
      }
      let fe = j;
      if (fe > fieldStart && buf[fe - 1] === CR) fe--;
      this.push(nf++, fieldStart, fe, hi >= 0x80 ? NON_ASCII : 0);
      return this.record(recStart, fe, j + 1, lfs, nf, flaw);
    }
  }
}
