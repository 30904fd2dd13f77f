/**
 * The CSV reader: physical line numbers and line accounting, stray quotes and runaway fields, bounds,
 * encodings (UTF-8 only; BOMs, NULs, invalid bytes), chunk boundaries, FIFOs.
 */
import { execFileSync, spawn } from 'node:child_process';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { readEvents } from '../../src/ingest/read.js';
import { expectTidemarkError } from '../core/helpers.js';
import { expectBalanced, physicalLines, read, readerDir, rules, usersOf } from './helpers.js';

const t = readerDir();
const row = (id: string, extra = 'x') => `${id},2026-03-01T10:00:00Z,booking,${extra}`;
const HEAD = 'user_id,timestamp,event,note';

describe('physical line numbers', () => {
  it.each([['\n', 'LF'], ['\r\n', 'CRLF']])('name the line a bad record starts on, past many chunk boundaries, after multi-byte text and quoted line breaks (%#: %s)', async (nl) => {
    const rows = [HEAD];
    for (let i = 0; i < 3_000; i++) rows.push(row(`m${i}`, `"atelier café é ${i}"`));
    rows.push(row('m-x', `"a note${nl}on two lines"`)); // physical lines 3,002-3,003
    rows.push('m-bad,not-a-time,booking,x'); // physical line 3,004
    const f = t.file('big.csv', rows.join(nl));
    // 1 KiB chunks: about 60 refills before the bad row (counted by hand: each row is ~45 bytes)
    const err = await expectTidemarkError(() => read(f, { limits: { chunk: 1024 } }), 'EVENTS_BAD_ROW');
    expect(err.where).toMatchObject({ file: f, line: 3_004, column: 'timestamp' });
  });

  it('the same log comes out at any chunk size', async () => {
    const rows = [HEAD];
    for (let i = 0; i < 500; i++) rows.push(row(`m${i % 37}`, i % 5 === 0 ? `"two\nlines ${i}"` : `"é ""${i}"""`));
    const f = t.file('e.csv', `${rows.join('\r\n')}\r\n`);
    const whole = await read(f);
    for (const chunk of [16, 100, 4097]) {
      const log = await read(f, { limits: { chunk } });
      expect(usersOf(log)).toEqual(usersOf(whole));
      expect(log.attributes[0].values).toEqual(whole.attributes[0].values);
      expect(log.rows).toEqual(whole.rows);
    }
    expect(whole.attributes[0].values).toContain('é "1"');
  });
});

describe('line accounting: lines read = header + blank + in rows + in rejected rows', () => {
  it('counts a header, blank lines, a two-line record, and rejected records by their lines', async () => {
    const text = [HEAD, row('m1'), '', row('m2', '"two\nlines"'), 'm3,later,booking,x', '', row('m4'), ''].join('\n');
    const f = t.file('a.csv', text);
    const log = await read(f, { skipBadRows: true });
    // counted by hand: 9 physical lines (the text ends with a line feed)
    expect(log.rows.lines).toEqual({ read: 8, header: 1, blank: 2, records: 4, rejected: 1 });
    expect(physicalLines(Buffer.from(text))).toBe(8);
    expect(log.rows).toMatchObject({ read: 4, used: 3 });
    expectBalanced(log.rows);
  });

  it('a last line without a line feed counts', async () => {
    const f = t.file('a.csv', `${HEAD}\n${row('m1')}`);
    expect((await read(f)).rows.lines).toEqual({ read: 2, header: 1, blank: 0, records: 1, rejected: 0 });
  });

  it('several files add up', async () => {
    const a = t.file('a.csv', `${HEAD}\n${row('m1')}\n\n`);
    const b = t.file('b.csv', `${HEAD}\n${row('m2')}\n`);
    const log = await readEvents([a, b], { rules });
    expect(log.rows.lines).toEqual({ read: 5, header: 2, blank: 1, records: 2, rejected: 0 });
  });
});

describe('stray quotes and runaway fields', () => {
  // a stray quote on line 3; 100 good rows follow (no quote among them)
  const stray = () => [HEAD, row('m1'), 'm2,2026-03-01T10:00:00Z,booking,"oops', ...Array.from({ length: 100 }, (_, i) => row(`n${i}`)), ''].join('\n');

  it('by default: refused as a likely unclosed quote at the line it opened on', async () => {
    const f = t.file('s.csv', stray());
    const err = await expectTidemarkError(() => read(f), 'EVENTS_BAD_ROW');
    expect(err.where.line).toBe(3);
    expect(err.oneLine()).toMatch(/s\.csv:3: unclosed quote\. The quoted field opened on this line runs on past 64 lines: most likely a stray quote/);
  });

  it('with --skip-bad-rows: the opening line is rejected and counted, and the swallowed lines are read as rows', async () => {
    const f = t.file('s.csv', stray());
    const log = await read(f, { skipBadRows: true });
    expect(log.rows).toMatchObject({ read: 102, used: 101, rejected: { 'unclosed quote': 1 } });
    expect(usersOf(log)).toContain('n99');
    expect(log.rows.lines).toEqual({ read: 103, header: 1, blank: 0, records: 101, rejected: 1 });
    expectBalanced(log.rows);
  });

  it('a quote still open at the end of the file: the same', async () => {
    const f = t.file('s.csv', [HEAD, row('m1'), 'm2,2026-03-01T10:00:00Z,booking,"oops', row('m3'), row('m4')].join('\n'));
    const err = await expectTidemarkError(() => read(f), 'EVENTS_BAD_ROW');
    expect(err.oneLine()).toMatch(/:3: unclosed quote\. The quoted field opened on this line is still open at the end of the file/);
    const log = await read(f, { skipBadRows: true });
    expect(usersOf(log)).toEqual(['m1', 'm3', 'm4']);
    expectBalanced(log.rows);
  });

  it('a quoted field past the byte bound (lowered here to 200 bytes) is a likely unclosed quote', async () => {
    const f = t.file('s.csv', [HEAD, `m1,2026-03-01T10:00:00Z,booking,"${'long '.repeat(30)}\n${'more '.repeat(30)}"`, row('m2')].join('\n'));
    const err = await expectTidemarkError(() => read(f, { limits: { maxRecordBytes: 200 } }), 'EVENTS_BAD_ROW');
    expect(err.oneLine()).toMatch(/:2: unclosed quote\. The quoted field opened on this line runs on past 200 bytes/);
  });

  it('text after a closing quote on the same line is a stray quote', async () => {
    const f = t.file('s.csv', [HEAD, 'm1,2026-03-01T10:00:00Z,booking,"ab"c', row('m2')].join('\n'));
    const err = await expectTidemarkError(() => read(f), 'EVENTS_BAD_ROW');
    expect(err.oneLine()).toMatch(/:2: stray quote\. Text follows a closing quote/);
    const log = await read(f, { skipBadRows: true });
    expect(log.rows.rejected).toEqual({ 'stray quote': 1 });
  });

  it('a quote in the middle of an unquoted field is a character', async () => {
    const f = t.file('s.csv', [HEAD, 'm"1,2026-03-01T10:00:00Z,booking,5" tall'].join('\n'));
    const log = await read(f);
    expect(usersOf(log)).toEqual(['m"1']);
    expect(log.attributes[0].values).toContain('5" tall');
  });
});

describe('bounds', () => {
  it('a line longer than 1 MiB is refused at once, even when skipping bad rows (a 3 MB field)', async () => {
    const f = t.file('long.csv', `${HEAD}\n${row('m1')}\nm2,2026-03-01T10:00:00Z,booking,${'z'.repeat(3_000_000)}\n`);
    const err = await expectTidemarkError(() => read(f, { skipBadRows: true }), 'EVENTS_FORMAT');
    expect(err.where.line).toBe(3);
    expect(err.oneLine()).toMatch(/a line longer than 1 MiB/);
  });

  it('a header of more than 1,000 columns is refused', async () => {
    const f = t.file('wide.csv', `user_id,timestamp,event,${Array.from({ length: 1000 }, (_, i) => `c${i}`).join(',')}\n`);
    const err = await expectTidemarkError(() => read(f), 'EVENTS_FORMAT');
    expect(err.oneLine()).toMatch(/1,003 columns, more than the 1,000/);
  });
});

describe('encodings', () => {
  const bytes = (...parts: (string | number[])[]) => Buffer.concat(parts.map((p) => (typeof p === 'string' ? Buffer.from(p) : Buffer.from(p))));

  it('invalid UTF-8 is refused naming the line and the byte offset; two Latin-1 ids are never merged', async () => {
    // "café" and "cafè" in Latin-1: both would decode to "caf\uFFFD"
    const data = bytes(`${HEAD}\n${row('m1')}\n`, 'caf', [0xe9], ',2026-03-01T10:00:00Z,booking,x\n', 'caf', [0xe8], ',2026-03-02T10:00:00Z,booking,x\n');
    const f = t.file('latin1.csv', data);
    const err = await expectTidemarkError(() => read(f), 'EVENTS_BAD_ROW');
    const offset = data.indexOf(0xe9); // computed here from the bytes written
    expect(err.where.line).toBe(3);
    expect(err.oneLine()).toContain(`invalid UTF-8. Byte 0xE9 at byte offset ${offset} is not UTF-8`);
    const log = await read(f, { skipBadRows: true });
    expect(usersOf(log)).toEqual(['m1']);
    expect(log.rows.rejected).toEqual({ 'invalid UTF-8': 2 });
    expectBalanced(log.rows);
  });

  it('invalid UTF-8 in a record over several lines names the line of the bad byte', async () => {
    const f = t.file('x.csv', bytes(`${HEAD}\nm1,2026-03-01T10:00:00Z,booking,"one\ntwo `, [0xff], '"\n'));
    const err = await expectTidemarkError(() => read(f), 'EVENTS_BAD_ROW');
    expect(err.where.line).toBe(3);
  });

  it('invalid UTF-8 in the header is refused even when skipping bad rows', async () => {
    const f = t.file('x.csv', bytes('user_id,timestamp,event,r', [0xe9], 'gion\n', row('m1')));
    const err = await expectTidemarkError(() => read(f, { skipBadRows: true }), 'EVENTS_FORMAT');
    expect(err.oneLine()).toMatch(/:1: the header is not UTF-8 text\. Byte 0xE9 at byte offset 25/);
  });

  it('a NUL byte refuses the file as binary or UTF-16, naming the line and byte offset, even when skipping', async () => {
    const data = bytes(`${HEAD}\n${row('m1')}\n${row('m2')}\nm3`, [0], `,x\n`);
    const f = t.file('nul.csv', data);
    const err = await expectTidemarkError(() => read(f, { skipBadRows: true }), 'EVENTS_FORMAT');
    expect(err.where.line).toBe(4);
    expect(err.oneLine()).toContain(`a NUL byte at byte offset ${data.indexOf(0)}: the file looks binary, or UTF-16/UTF-32 text`);
  });

  it('UTF-16 with its byte order mark: refused with the re-save hint', async () => {
    const f = t.file('u16.csv', Buffer.concat([Buffer.from([0xff, 0xfe]), Buffer.from(`${HEAD}\n${row('m1')}\n`, 'utf16le')]));
    const err = await expectTidemarkError(() => read(f), 'EVENTS_FORMAT');
    expect(err.oneLine()).toMatch(/UTF-16 text.*Re-save the file as UTF-8/);
  });

  it('a UTF-8 byte order mark is dropped; accented ids and values read as written', async () => {
    const f = t.file('bom.csv', `\uFEFF${HEAD}\nJosé,2026-03-01T10:00:00Z,booking,"Ærø ""tool"""\n`);
    const log = await read(f);
    expect(usersOf(log)).toEqual(['José']);
    expect(log.attributes[0].values).toContain('Ærø "tool"');
  });

  it('CR alone as the line end is refused with a hint', async () => {
    const f = t.file('mac.csv', `${HEAD}\r${row('m1')}\r`);
    const err = await expectTidemarkError(() => read(f), 'EVENTS_FORMAT');
    expect(err.oneLine()).toMatch(/CR alone as its line end.*LF or CRLF/);
  });
});

describe('delimiters', () => {
  it('a one-byte delimiter other than comma reads the same; a non-ASCII one is refused as usage', async () => {
    const f = t.file('s.csv', `user_id;timestamp;event\nm1;2026-03-01T10:00:00Z;booking\n`);
    expect(usersOf(await read(f, { delimiter: ';' }))).toEqual(['m1']);
    const err = await expectTidemarkError(() => read(f, { delimiter: '§' }), 'USAGE');
    expect(err.where.key).toBe('delimiter');
  });
});

describe('pipes', () => {
  it('a FIFO is read once, to the end (mkfifo)', async () => {
    const fifo = join(t.dir, 'events.csv');
    execFileSync('mkfifo', [fifo]);
    const text = [HEAD, ...Array.from({ length: 20_000 }, (_, i) => row(`m${i % 300}`)), ''].join('\n');
    const src = t.file('src.csv', text);
    // the writer opens the FIFO once and writes ~1 MB through it (more than a pipe buffer holds)
    const writer = spawn('sh', ['-c', `cat "${src}" > "${fifo}"`]);
    const closed = new Promise((r) => writer.on('close', r));
    const log = await read(fifo);
    expect(await closed).toBe(0);
    expect(log.size).toBe(20_000);
    expect(log.rows.lines.read).toBe(20_001);
  }, 20_000); // a bound on a hang, should the reader wait for a second open of the FIFO
});
