/**
 * The NDJSON reader: ids (strings; numbers only as plain safe integers), the raw-token lookup, lines,
 * bounds, encodings.
 */
import { describe, expect, it } from 'vitest';
import { rawMember } from '../../src/ingest/jsonRaw.js';
import { userIdOf } from '../../src/ingest/ndjson.js';
import { expectTidemarkError } from '../core/helpers.js';
import { expectBalanced, read, readerDir, usersOf } from './helpers.js';

const t = readerDir();
const TS = '"timestamp":"2026-03-01T10:00:00Z","event":"booking"';
const line = (id: string, extra = '') => `{"user_id":${id},${TS}${extra}}`;

describe('rawMember (the token as written, per the JSON grammar of RFC 8259)', () => {
  it('finds the top-level member, the last when it repeats, never a nested one', () => {
    expect(rawMember('{"user_id": 1.0e3, "x": {"user_id": 2}}', 'user_id')).toBe('1.0e3');
    expect(rawMember('{"x": {"user_id": 2}, "y": [1, {"user_id": 3}]}', 'user_id')).toBeUndefined();
    expect(rawMember('{"user_id":1,"user_id":22}', 'user_id')).toBe('22');
    expect(rawMember('{"a":"}\\"{","user_id" :\t-0 }', 'user_id')).toBe('-0');
    expect(rawMember('{"user\\u005fid":123.0}', 'user_id')).toBe('123.0');
  });
});

describe('ids', () => {
  it('strings are ids as written; plain safe integers are ids too, and 123 meets "123"', async () => {
    const f = t.file('a.ndjson', [line('"m1"'), line('123'), line('"123"'), line('-5'), line('9007199254740991')].join('\n'));
    const log = await read(f);
    expect(usersOf(log)).toEqual(['m1', '123', '123', '-5', '9007199254740991']);
  });

  it.each([
    ['9007199254740993', /beyond 2\^53/], // 2^53 + 1: JSON.parse gives 9007199254740992
    ['123.0', /not written as a plain whole number/],
    ['1e3', /not written as a plain whole number/],
    ['1e400', /not written as a plain whole number/], // JSON.parse gives Infinity
    ['-0', /not written as a plain whole number/],
    ['{"id":1}', /bad user id\. An object is not an id/],
    ['[1]', /bad user id\. An array is not an id/],
    ['true', /bad user id\. A boolean \(true\) is not an id/],
    ['"\\ud800"', /lone UTF-16 surrogate/], // "\ud800" and "\udbff" would both be U+FFFD as UTF-8
  ])('%s is refused with the reason', async (id, why) => {
    const f = t.file('a.ndjson', `${line('"m1"')}\n${line(id)}\n`);
    const err = await expectTidemarkError(() => read(f), 'EVENTS_BAD_ROW');
    expect(err.where).toMatchObject({ line: 2, column: 'user_id' });
    expect(err.oneLine()).toMatch(/bad user id/);
    expect(err.oneLine()).toMatch(why);
  });

  it('ids beyond 2^53 never merge: with --skip-bad-rows both are rejected and counted', async () => {
    // 2^53 + 1 and 2^53 + 2 parse to different doubles, 2^53 + 1 and 2^53 to the same one
    const f = t.file('a.ndjson', [line('9007199254740992'), line('9007199254740993'), line('"m1"')].join('\n'));
    const log = await read(f, { skipBadRows: true });
    expect(usersOf(log)).toEqual(['m1']);
    expect(log.rows.rejected).toEqual({ 'bad user id': 2 });
    expectBalanced(log.rows);
  });

  it('null or a missing key is a missing id', async () => {
    const f = t.file('a.ndjson', `${line('null')}\n{${TS}}\n${line('"m1"')}\n`);
    const log = await read(f, { skipBadRows: true });
    expect(log.rows.rejected).toEqual({ 'missing user id': 2 });
  });

  it('userIdOf takes the raw token only for numbers', () => {
    expect(userIdOf('007', () => { throw new Error('not asked'); })).toEqual({ id: '007' });
    expect(userIdOf(7, () => '7')).toEqual({ id: '7' });
    expect(userIdOf(7, () => '7.00')).toMatchObject({ shown: '7.00' });
  });
});

describe('lines and values', () => {
  it('blank lines, CRLF ends, a BOM and a last line without a line feed are counted', async () => {
    const f = t.file('a.ndjson', `\uFEFF${line('"m1"')}\r\n\r\n   \n${line('"m2"')}\r\nnot json\n${line('"m3"')}`);
    const log = await read(f, { skipBadRows: true });
    expect(usersOf(log)).toEqual(['m1', 'm2', 'm3']);
    expect(log.rows.lines).toEqual({ read: 6, header: 0, blank: 2, records: 3, rejected: 1 });
    expectBalanced(log.rows);
  });

  it('scalar values are attributes; objects and arrays are not attribute values (and deep nesting is harmless)', async () => {
    const deep = `${'['.repeat(100_000)}${']'.repeat(100_000)}`;
    const f = t.file('a.ndjson', [line('"m1"', ',"plan":"pro","seats":3,"x":{"a":1}'), line('"m2"', `,"plan":${deep},"x":"y"`)].join('\n'));
    const log = await read(f);
    // names: keys with a scalar value somewhere in the first 1,000 lines
    expect(log.attributes.map((a) => a.name)).toEqual(['plan', 'seats', 'x']);
    const values = (k: number) => Array.from(log.attributes[k].codes, (c) => log.attributes[k].values[c]);
    expect(values(0)).toEqual(['pro', '']);
    expect(values(2)).toEqual(['', 'y']);
  });

  it('a line that is not one JSON object names its line', async () => {
    const f = t.file('a.ndjson', `${line('"m1"')}\n[1,2]\n`);
    const err = await expectTidemarkError(() => read(f), 'EVENTS_BAD_ROW');
    expect(err.where.line).toBe(2);
    expect(err.oneLine()).toMatch(/not valid JSON: '\[1,2\]'\. Each line must be one JSON object/);
  });
});

describe('bounds and encodings', () => {
  it('a line longer than the bound (lowered to 100 bytes here) is refused, naming it', async () => {
    const f = t.file('a.ndjson', `${line('"m1"')}\n${line('"m2"', `,"note":"${'z'.repeat(200)}"`)}\n`);
    const err = await expectTidemarkError(() => read(f, { limits: { maxRecordBytes: 100 }, skipBadRows: true }), 'EVENTS_FORMAT');
    expect(err.where.line).toBe(2);
    expect(err.oneLine()).toMatch(/a line longer than 100 bytes/);
  });

  it('NUL bytes (as from /dev/zero) are refused as binary input at once', async () => {
    const f = t.file('z.ndjson', Buffer.alloc(10_000));
    const err = await expectTidemarkError(() => read(f), 'EVENTS_FORMAT');
    expect(err.oneLine()).toMatch(/z\.ndjson:1: a NUL byte at byte offset 0/);
  });

  it('invalid UTF-8 is refused naming line and byte offset, or rejected and counted when skipping', async () => {
    const data = Buffer.concat([Buffer.from(`${line('"m1"')}\n{"user_id":"caf`), Buffer.from([0xe9]), Buffer.from(`",${TS}}\n`)]);
    const f = t.file('a.ndjson', data);
    const err = await expectTidemarkError(() => read(f), 'EVENTS_BAD_ROW');
    expect(err.where.line).toBe(2);
    expect(err.oneLine()).toContain(`byte offset ${data.indexOf(0xe9)}`);
    const log = await read(f, { skipBadRows: true });
    expect(log.rows.rejected).toEqual({ 'invalid UTF-8': 1 });
  });
});
