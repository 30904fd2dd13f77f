/**
 * The byte-level CSV scanner: RFC 4180's own examples, an independent parse, chunk boundaries,
 * physical lines, and the stray-quote and bound rules.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { STRAY_QUOTE } from '../../src/ingest/csvScan.js';
import { physicalLines, rfc4180Parse, rfc4180Write, scanAll } from './helpers.js';

const enc = new TextEncoder();
const b = (s: string) => enc.encode(s);
const fieldsOf = (s: string, opts: Parameters<typeof scanAll>[1] = {}) => scanAll(b(s), opts).records.map((r) => r.fields);

describe('RFC 4180 §2, the RFC\'s own examples (rules 1–7; example texts as printed in RFC 4180, October 2005)', () => {
  // expected values read off the RFC's prose for each rule
  it('rule 1: records on separate lines, delimited by CRLF', () => {
    expect(fieldsOf('aaa,bbb,ccc\r\nzzz,yyy,xxx\r\n')).toEqual([['aaa', 'bbb', 'ccc'], ['zzz', 'yyy', 'xxx']]);
  });
  it('rule 2: the last record may lack its line break', () => {
    expect(fieldsOf('aaa,bbb,ccc\r\nzzz,yyy,xxx')).toEqual([['aaa', 'bbb', 'ccc'], ['zzz', 'yyy', 'xxx']]);
  });
  it('rule 3: an optional header line in the same format', () => {
    expect(fieldsOf('field_name,field_name,field_name\r\naaa,bbb,ccc\r\nzzz,yyy,xxx\r\n')).toEqual([
      ['field_name', 'field_name', 'field_name'], ['aaa', 'bbb', 'ccc'], ['zzz', 'yyy', 'xxx']]);
  });
  it('rule 4: spaces are part of a field', () => {
    expect(fieldsOf('aaa, bbb ,ccc')).toEqual([['aaa', ' bbb ', 'ccc']]);
  });
  it('rule 5: fields may be enclosed in double quotes', () => {
    expect(fieldsOf('"aaa","bbb","ccc"\r\nzzz,yyy,xxx')).toEqual([['aaa', 'bbb', 'ccc'], ['zzz', 'yyy', 'xxx']]);
  });
  it('rule 6: line breaks, quotes and commas inside quoted fields', () => {
    expect(fieldsOf('"aaa","b\r\nbb","ccc"\r\nzzz,yyy,xxx')).toEqual([['aaa', 'b\r\nbb', 'ccc'], ['zzz', 'yyy', 'xxx']]);
  });
  it('rule 7: a quote inside a quoted field is doubled', () => {
    expect(fieldsOf('"aaa","b""bb","ccc"')).toEqual([['aaa', 'b"bb', 'ccc']]);
  });
  it('the independent parser (test/ingest/helpers.ts) agrees on every example', () => {
    for (const t of ['aaa,bbb,ccc\r\nzzz,yyy,xxx\r\n', '"aaa","b\r\nbb","ccc"\r\nzzz,yyy,xxx', '"aaa","b""bb","ccc"', 'aaa, bbb ,ccc']) {
      expect(fieldsOf(t)).toEqual(rfc4180Parse(t));
    }
  });
});

describe('physical lines', () => {
  it('a record with a quoted line break spans two lines; the next starts on line 3', () => {
    const { records, lines } = scanAll(b('a,"x\ny"\nb,c\n'));
    expect(records.map((r) => [r.line, r.lines])).toEqual([[1, 2], [3, 1]]);
    expect(lines).toBe(3);
  });
  it('an empty input has no record and no line; a lone line feed is one blank record', () => {
    expect(scanAll(b(''))).toEqual({ records: [], lines: 0 });
    const one = scanAll(b('\n'));
    expect(one.records.map((r) => r.fields)).toEqual([['']]);
    expect(one.lines).toBe(1);
  });
  it('CR is part of the line end before LF, and a lone CR at the very end is dropped', () => {
    expect(fieldsOf('a,b\r\n"c"\r\nd\r')).toEqual([['a', 'b'], ['c'], ['d']]);
  });
  it('a lone CR inside a line is data, and a quote inside an unquoted field is a character (common practice)', () => {
    expect(fieldsOf('a\rb,c\nx"y,z\n')).toEqual([['a\rb', 'c'], ['x"y', 'z']]);
  });
});

// fields drawn from characters that matter to CSV: delimiters, quotes, line breaks, multi-byte text
const cellChar = fc.constantFrom('a', 'Z', '0', ' ', ',', ';', '\t', '|', '"', '\n', '\r\n', '\r', 'é', '€', '🛠', '""');
const cell = fc.array(cellChar, { maxLength: 6 }).map((cs) => cs.join(''));
const table = fc.array(fc.array(cell, { minLength: 1, maxLength: 5 }), { minLength: 1, maxLength: 8 });

describe('round trip: write per RFC 4180, scan back (fast-check, seeded)', () => {
  it('gives the table back, at every chunk size, and the independent parser agrees', () => {
    fc.assert(
      fc.property(table, fc.constantFrom(',', ';', '\t', '|'), fc.constantFrom('\r\n', '\n'), fc.boolean(), fc.boolean(), fc.constantFrom(1, 2, 3, 7, 64),
        (rows, delim, eol, quoteAll, finalEol, chunk) => {
          const text = rfc4180Write(rows, { delim, eol, quoteAll, finalEol });
          const whole = scanAll(b(text), { delim });
          expect(whole.records.map((r) => r.fields)).toEqual(rows);
          expect(whole.records.every((r) => r.status === 'record' && r.flaw === 0)).toBe(true);
          expect(scanAll(b(text), { delim, chunk }).records).toEqual(whole.records);
          expect(rfc4180Parse(text, delim)).toEqual(rows);
          expect(whole.lines).toBe(physicalLines(b(text)));
        }),
      { seed: 4180, numRuns: 400 },
    );
  });
});

describe('stray quotes and runaway fields', () => {
  const limits = { maxQuotedLines: 3, maxRecordBytes: 64 };

  it('an unclosed quote at the end of input: the opening line is rejected, the lines after it are read', () => {
    const { records, lines } = scanAll(b('h1,h2\na,"b\nc,d\ne,f\n'));
    expect(records.map((r) => [r.status, r.line, r.lines])).toEqual([['record', 1, 1], ['unclosed', 2, 1], ['record', 3, 1], ['record', 4, 1]]);
    expect(records.slice(2).map((r) => r.fields)).toEqual([['c', 'd'], ['e', 'f']]);
    expect(lines).toBe(4);
  });

  it('a quoted field over the line bound is unclosed at its opening line, and reading resumes on the next line', () => {
    const text = 'a,"b\nl2\nl3\nl4\nl5\nl6\n';
    const { records, lines } = scanAll(b(text), { limits });
    expect(records[0]).toMatchObject({ status: 'unclosed', line: 1, lines: 1 });
    expect(records.slice(1).map((r) => r.fields[0])).toEqual(['l2', 'l3', 'l4', 'l5', 'l6']);
    expect(lines).toBe(6);
  });

  it('a field within the line bound is kept whole', () => {
    expect(fieldsOf('a,"1\n2\n3\n4"\n', { limits })).toEqual([['a', '1\n2\n3\n4']]);
  });

  it('a quoted field over the byte bound is unclosed too', () => {
    const text = `a,"${'x'.repeat(40)}\n${'y'.repeat(40)}"\nnext\n`;
    const { records } = scanAll(b(text), { limits });
    expect(records[0]).toMatchObject({ status: 'unclosed', line: 1, lines: 1 });
    expect(records[1].fields).toEqual([`${'y'.repeat(40)}"`]);
    expect(records[2].fields).toEqual(['next']);
  });

  it('a quote that closes on a later line followed by text was a stray opening quote', () => {
    const { records } = scanAll(b('m1,"stray\nm2,x,"ok"\n'));
    expect(records[0]).toMatchObject({ status: 'unclosed', line: 1, lines: 1 });
    expect(records[1]).toMatchObject({ status: 'record', line: 2, fields: ['m2', 'x', 'ok'] });
  });

  it('text after a closing quote on the same line flaws the record, which still ends at its line end', () => {
    const { records } = scanAll(b('"ab"c,d\ne,f\n'));
    expect(records[0].flaw).toBe(STRAY_QUOTE);
    expect(records[1]).toMatchObject({ fields: ['e', 'f'], flaw: 0, line: 2 });
  });

  it('a quote opened on a line over the byte bound, with no line feed after it, is too long at any chunk size', () => {
    const data = b(`"${'a'.repeat(80)}`);
    for (const chunk of [1, 3, 100]) expect(scanAll(data, { limits, chunk }).records.map((r) => r.status)).toEqual(['too long']);
    expect(scanAll(b('"abc'), { limits }).records.map((r) => r.status)).toEqual(['unclosed']);
  });

  it('a line over the byte bound outside quotes is too long', () => {
    const { records } = scanAll(b(`ok\n${'z'.repeat(100)}\n`), { limits });
    expect(records.map((r) => r.status)).toEqual(['record', 'too long']);
    expect(records[1].line).toBe(2);
  });
});

describe('any bytes (fast-check, seeded)', () => {
  // weighted towards letters so that quoted fields run long as well as short
  const byte = fc.oneof({ weight: 6, arbitrary: fc.constant(0x61) }, { weight: 4, arbitrary: fc.constantFrom(0x2c, 0x22, 0x0a, 0x0d, 0x20, 0xc3, 0xa9, 0xff, 0x00) });
  const bytes = fc.array(byte, { maxLength: 200 }).map((a) => Uint8Array.from(a));
  it('the lines of the records add up to the physical lines, and chunking changes nothing', () => {
    fc.assert(
      fc.property(bytes, fc.constantFrom(1, 2, 5, 16), fc.constantFrom(1, 2, 8), fc.constantFrom(8, 32, 1000), (data, chunk, maxQuotedLines, maxRecordBytes) => {
        const limits = { maxQuotedLines, maxRecordBytes };
        const whole = scanAll(data, { limits });
        expect(scanAll(data, { limits, chunk }).records).toEqual(whole.records);
        if (whole.records.at(-1)?.status !== 'too long') {
          expect(whole.records.reduce((a, r) => a + r.lines, 0)).toBe(physicalLines(data));
          expect(whole.lines).toBe(physicalLines(data));
        }
      }),
      { seed: 20261202, numRuns: 3000 },
    );
  });
});
