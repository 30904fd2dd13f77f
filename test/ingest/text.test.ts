/** UTF-8 validity (RFC 3629), byte order marks and NUL bytes. */
import { isUtf8 } from 'node:buffer';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { blankBytes, byteOrderMark, countLf, firstInvalidUtf8 } from '../../src/ingest/text.js';
import { TidemarkError } from '../../src/errors.js';

const fatal = new TextDecoder('utf-8', { fatal: true });
const decodes = (bytes: Uint8Array) => {
  try {
    fatal.decode(bytes);
    return true;
  } catch {
    return false;
  }
};
const first = (bytes: number[]) => firstInvalidUtf8(Uint8Array.from(bytes), 0, bytes.length);

describe('firstInvalidUtf8', () => {
  it('accepts the examples of RFC 3629 §7 (byte values as printed there; recalled from the RFC)', () => {
    expect(first([0x41, 0xe2, 0x89, 0xa2, 0xce, 0x91, 0x2e])).toBe(-1); // "A≢Α."
    expect(first([0xed, 0x95, 0x9c, 0xea, 0xb5, 0xad, 0xec, 0x96, 0xb4])).toBe(-1); // Korean "hangugeo"
    expect(first([0xe6, 0x97, 0xa5, 0xe6, 0x9c, 0xac, 0xe8, 0xaa, 0x9e])).toBe(-1); // Japanese "nihongo"
    expect(first([0xef, 0xbb, 0xbf, 0xf0, 0xa3, 0x8e, 0xb4])).toBe(-1); // BOM + U+233B4
  });

  it('refuses what RFC 3629 §3–4 excludes, at the first byte of the bad sequence', () => {
    expect(first([0x61, 0xc0, 0x80])).toBe(1); // overlong NUL
    expect(first([0x61, 0x62, 0xed, 0xa0, 0x80])).toBe(2); // surrogate U+D800
    expect(first([0xf4, 0x90, 0x80, 0x80])).toBe(0); // above U+10FFFF
    expect(first([0xe0, 0x80, 0xaf])).toBe(0); // overlong "/"
    expect(first([0x63, 0x61, 0x66, 0xe9])).toBe(3); // "café" in Latin-1
    expect(first([0x61, 0xff])).toBe(1);
    expect(first([0xe2, 0x89])).toBe(0); // cut off
  });

  it('agrees with the WHATWG TextDecoder (fatal) and node:buffer isUtf8 on any bytes, and names the first bad byte (fast-check)', () => {
    const byte = fc.oneof(fc.integer({ min: 0, max: 0x7f }), fc.integer({ min: 0x80, max: 0xff }), fc.constantFrom(0xc2, 0xe0, 0xed, 0xf0, 0xf4, 0x80, 0xbf));
    fc.assert(
      fc.property(fc.array(byte, { maxLength: 40 }), (arr) => {
        const bytes = Uint8Array.from(arr);
        const at = firstInvalidUtf8(bytes, 0, bytes.length);
        expect(at === -1).toBe(decodes(bytes));
        expect(at === -1).toBe(isUtf8(bytes));
        if (at >= 0) {
          // everything before it decodes, and no character starts at it
          expect(decodes(bytes.subarray(0, at))).toBe(true);
          for (let n = 1; n <= 4 && at + n <= bytes.length; n++) expect(decodes(bytes.subarray(at, at + n))).toBe(false);
        }
      }),
      { seed: 3629, numRuns: 3000 },
    );
  });
});

describe('byte order marks', () => {
  it('drops a UTF-8 mark and refuses UTF-16 and UTF-32 marks with a re-save hint', () => {
    expect(byteOrderMark(Buffer.from([0xef, 0xbb, 0xbf, 0x61]), 4, 'a.csv')).toBe(3);
    expect(byteOrderMark(Buffer.from('user'), 4, 'a.csv')).toBe(0);
    for (const mark of [[0xff, 0xfe, 0x75, 0x00], [0xfe, 0xff, 0x00, 0x75], [0xff, 0xfe, 0x00, 0x00], [0x00, 0x00, 0xfe, 0xff]]) {
      let err: unknown;
      try {
        byteOrderMark(Buffer.from(mark), 4, 'a.csv');
      } catch (e) {
        err = e;
      }
      expect(err).toBeInstanceOf(TidemarkError);
      expect((err as TidemarkError).oneLine()).toMatch(/UTF-(16|32).*Re-save the file as UTF-8/);
    }
  });
});

describe('countLf', () => {
  it('counts line feeds in a range only', () => {
    const b = Buffer.from('a\nb\n\nc\n');
    expect(countLf(b, 0, b.length)).toBe(4);
    expect(countLf(b, 2, 5)).toBe(2);
    expect(countLf(b, 5, 5)).toBe(0);
  });
});

describe('blankBytes (a user id that is empty or white space, decided from its bytes)', () => {
  it("agrees with String.prototype.trim() === '' on its UTF-8 bytes (fast-check; trim, as ECMA-262 defines white space, is the reference)", () => {
    // ASCII white space and the Unicode spaces trim removes (U+00A0, U+1680, U+2000–U+200A, U+2028, U+2029, U+202F, U+205F, U+3000, U+FEFF), and characters it keeps (U+200B, U+0085)
    const piece = fc.constantFrom(' ', '\t', '\n', '\v', '\f', '\r', '\u00a0', '\u1680', '\u2000', '\u200a', '\u2028', '\u2029', '\u202f', '\u205f', '\u3000', '\ufeff', '\u200b', '\u0085', 'u', '1', 'é', '🛠', '\u0001', '\u007f');
    fc.assert(
      fc.property(fc.array(piece, { maxLength: 8 }), (parts) => {
        const s = parts.join('');
        const b = Buffer.from(`x${s}y`);
        expect(blankBytes(b, 1, b.length - 1)).toBe(s.trim() === '');
      }),
      { seed: 67, numRuns: 2000 },
    );
  });
});
