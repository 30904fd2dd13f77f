/**
 * Text checks on raw bytes: UTF-8 validity (RFC 3629), byte order marks, NUL bytes, line feeds.
 * Event files must be UTF-8: bytes that are not would decode to U+FFFD and could merge two user ids
 * into one, so they are found and refused (or the record rejected) before any field is decoded.
 */
import { isAscii, isUtf8 } from 'node:buffer';
import { TidemarkError } from '../errors.js';
import type { ChunkReader } from './source.js';

const LF = 10;

/**
 * Node's Buffer decoders without toString's argument handling (about a third faster per short field).
 * Present on every Buffer since Node 0.x; not in @types/node.
 */
export interface SliceBuffer extends Buffer {
  latin1Slice(start: number, end: number): string;
  utf8Slice(start: number, end: number): string;
}

/**
 * Offset of the first byte that does not start a well-formed UTF-8 sequence in `buf[start, end)`, or
 * -1 when the range is valid. Follows the syntax of RFC 3629 §4 (no overlong forms, no surrogates
 * U+D800–DFFF, nothing above U+10FFFF); a sequence cut off by `end` is invalid.
 * @example firstInvalidUtf8(Buffer.from([0x61, 0xc3, 0xa9, 0xe9]), 0, 4) // 3 (a lone Latin-1 é)
 */
export function firstInvalidUtf8(buf: Uint8Array, start: number, end: number): number {
  let i = start;
  while (i < end) {
    const b = buf[i];
    if (b < 0x80) {
      i++;
      continue;
    }
    let need: number, lo = 0x80, hi = 0xbf;
    if (b >= 0xc2 && b <= 0xdf) need = 1;
    else if (b >= 0xe0 && b <= 0xef) {
      need = 2;
      if (b === 0xe0) lo = 0xa0;
      else if (b === 0xed) hi = 0x9f;
    } else if (b >= 0xf0 && b <= 0xf4) {
      need = 3;
      if (b === 0xf0) lo = 0x90;
      else if (b === 0xf4) hi = 0x8f;
    } else return i;
    if (i + need >= end) return i; // cut off by the end of the range
    const second = buf[i + 1];
    if (second < lo || second > hi) return i;
    for (let k = 2; k <= need; k++) if ((buf[i + k] & 0xc0) !== 0x80) return i;
    i += need + 1;
  }
  return -1;
}

/** Number of line feeds in `buf[start, end)`. */
export function countLf(buf: Buffer, start: number, end: number): number {
  let n = 0;
  for (let i = buf.indexOf(LF, start); i >= 0 && i < end; i = buf.indexOf(LF, i + 1)) n++;
  return n;
}

/** Length of a UTF-8 byte order mark at the start of the input (3 or 0); refuses UTF-16 and UTF-32 marks. */
export function byteOrderMark(buf: Buffer, end: number, file: string): number {
  const b0 = buf[0], b1 = buf[1];
  if (end >= 3 && b0 === 0xef && b1 === 0xbb && buf[2] === 0xbf) return 3;
  const utf32 = end >= 4 && ((b0 === 0xff && b1 === 0xfe && buf[2] === 0 && buf[3] === 0) || (b0 === 0 && b1 === 0 && buf[2] === 0xfe && buf[3] === 0xff));
  if (utf32 || (end >= 2 && ((b0 === 0xff && b1 === 0xfe) || (b0 === 0xfe && b1 === 0xff)))) {
    const enc = utf32 ? 'UTF-32' : 'UTF-16';
    throw new TidemarkError('EVENTS_FORMAT', `the file is ${enc} text (it starts with a ${enc} byte order mark); tidemark reads UTF-8`, { file, line: 1 },
      'Re-save the file as UTF-8 (in most editors and spreadsheets: Save As, encoding UTF-8)');
  }
  return 0;
}

/** What the readers know about the bytes in the buffer after a refill. */
export interface ChunkText {
  /** The buffer decoded byte for byte (latin1), so a byte offset is a string index: ASCII fields are sliced from it (made on first use). */
  readonly text: string;
  /** Every byte up to `checkedEnd` is ASCII. */
  ascii: boolean;
  /** Some bytes up to `checkedEnd` are not UTF-8: check each record before decoding it. */
  dirty: boolean;
}

/**
 * Check the bytes of a refill before any is decoded: refuse a NUL byte in the new bytes (binary or
 * UTF-16/32 input, such as /dev/zero), and check UTF-8 up to the last line feed (or the end of input),
 * where no character can be cut in two. `line` is the physical line of `buf[from]`.
 */
export function inspectChunk(r: ChunkReader, from: number, newFrom: number, line: number): ChunkText {
  const { buf, end } = r;
  const nul = buf.subarray(newFrom, end).indexOf(0);
  if (nul >= 0) {
    const at = newFrom + nul;
    throw new TidemarkError('EVENTS_FORMAT', `a NUL byte at byte offset ${(r.base + at).toLocaleString('en-US')}: the file looks binary, or UTF-16/UTF-32 text, not UTF-8`,
      { file: r.file, line: line + countLf(buf, from, at) }, 'If it is text, re-save it as UTF-8; otherwise give the events file');
  }
  let checkedEnd = end;
  if (!r.eof) checkedEnd = lastLf(buf, from, end) + 1;
  const region = buf.subarray(from, Math.max(from, checkedEnd));
  const ascii = isAscii(region);
  let text: string | undefined;
  return {
    // decoded on first use only: the CSV hot path reads fields as bytes and never asks
    get text() {
      return (text ??= (buf as SliceBuffer).latin1Slice(0, end));
    },
    ascii,
    dirty: !ascii && !isUtf8(region),
  };
}

function lastLf(buf: Buffer, from: number, end: number): number {
  if (end <= from) return from - 1;
  const k = buf.lastIndexOf(LF, end - 1);
  return k >= from ? k : from - 1;
}

/**
 * The error or rejection text for invalid UTF-8 at byte offset `offset` (file offset) holding `byte`.
 */
export function invalidUtf8Hint(offset: number, byte: number): string {
  return `byte 0x${byte.toString(16).toUpperCase().padStart(2, '0')} at byte offset ${offset.toLocaleString('en-US')} is not UTF-8 (ids must not be guessed): re-save the file as UTF-8, or pass --skip-bad-rows to skip and count such rows`;
}

/**
 * Whether the UTF-8 text `b[s, e)` is empty or white space only, as `text.trim() === ''` decides,
 * from the bytes: an ASCII byte other than TAB, LF, VT, FF, CR or space settles it at once (trim
 * removes no other ASCII character); text with only non-ASCII bytes beside white space is decoded
 * and trimmed (trim also removes U+00A0, U+FEFF and other Unicode spaces).
 */
export function blankBytes(b: Uint8Array, s: number, e: number): boolean {
  let other = false;
  for (let i = s; i < e; i++) {
    const c = b[i];
    if (c >= 0x80) other = true;
    else if (c !== 0x20 && (c < 0x09 || c > 0x0d)) return false;
  }
  return !other || Buffer.from(b.buffer, b.byteOffset + s, e - s).toString('utf8').trim() === '';
}
