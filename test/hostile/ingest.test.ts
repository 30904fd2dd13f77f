/**
 * Hostile and awkward event files, through the command line: each ends in a correct result or one
 * clean line with exit 1 or 2, quickly, with every row and line accounted for.
 */
import { execFileSync, spawn } from 'node:child_process';
import { mkdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, describe, expect, it } from 'vitest';
import { corpusDir, expectClean, expectRefusal, run } from './harness.js';

const c = corpusDir();
afterAll(() => c.done());

const HEAD = 'user_id,timestamp,event,note';
const row = (id: string, week: number, note = 'x') => `${id},2026-05-${String(4 + 7 * (week % 4)).padStart(2, '0')}T10:00:00Z,booking_made,${note}`;
const rows = (n: number) => Array.from({ length: n }, (_, i) => row(`m${i % 40}`, i));
const csv = (...lines: string[]) => `${lines.join('\n')}\n`;
const flows = (...args: string[]) => run('flows', '--format', 'json', ...args);
/** The "rows: …" accounting line on stderr. */
const rowsLine = (err: string) => err.split('\n').find((l) => l.startsWith('rows:')) ?? '';

describe('CSV per RFC 4180', () => {
  it('quoted fields, doubled quotes, quoted line breaks and CRLF read cleanly', async () => {
    const f = c.file('rfc.csv', `${HEAD}\r\n"m1",2026-05-04T10:00:00Z,booking_made,"a ""quoted"", note"\r\nm2,2026-05-05T10:00:00Z,booking_made,"two\r\nlines"\r\n`);
    const r = await flows('--events', f);
    expectClean(r);
    expect(r.code, r.err).toBe(0);
    expect(rowsLine(r.err)).toBe('rows: 2 read, 2 used; lines: 4 read = 1 header + 3 in rows');
  });
});

describe('stray quotes and runaway fields', () => {
  const stray = () => c.file('stray.csv', csv(HEAD, ...rows(3), 'm9,2026-05-11T10:00:00Z,booking_made,"oops', ...rows(200)));

  it('a stray quote is refused at the line it opened on', async () => {
    const line = expectRefusal(await flows('--events', stray()), 1);
    expect(line).toMatch(/stray\.csv:5: unclosed quote\. The quoted field opened on this line runs on past 64 lines: most likely a stray quote/);
  });

  it('with --skip-bad-rows the swallowed lines are read and every line is counted', async () => {
    const r = await flows('--events', stray(), '--skip-bad-rows');
    expectClean(r);
    expect(r.code, r.err).toBe(0);
    expect(rowsLine(r.err)).toBe('rows: 204 read, 203 used, 1 rejected (unclosed quote 1)');
    expect(JSON.parse(r.out).rows.lines).toEqual({ read: 205, header: 1, blank: 0, records: 203, rejected: 1 });
  });

  it('a quote open at the end of the file', async () => {
    const f = c.file('eof.csv', csv(HEAD, ...rows(3), 'm9,2026-05-11T10:00:00Z,booking_made,"oops', ...rows(2)));
    expect(expectRefusal(await flows('--events', f), 1)).toMatch(/eof\.csv:5: unclosed quote\. The quoted field opened on this line is still open at the end of the file/);
  });

  it('text after a closing quote', async () => {
    const f = c.file('after.csv', csv(HEAD, '"m1"x,2026-05-04T10:00:00Z,booking_made,y'));
    expect(expectRefusal(await flows('--events', f), 1)).toMatch(/after\.csv:2: stray quote/);
  });

  it('a bad row after a record over several lines names its physical line', async () => {
    const f = c.file('phys.csv', csv(HEAD, row('m1', 0, '"one\ntwo\nthree"'), 'm2,soon,booking_made,x'));
    expect(expectRefusal(await flows('--events', f), 1)).toMatch(/phys\.csv:5, column timestamp: bad timestamp: 'soon'/);
  });
});

describe('huge fields and endless input', () => {
  it('a 50 MB field is refused at once as a line over 1 MiB (not read in quadratic time)', async () => {
    const f = c.file('huge.csv', `${HEAD}\n${row('m1', 0)}\nm2,2026-05-04T10:00:00Z,booking_made,"${'x'.repeat(50_000_000)}"\n`);
    expect(expectRefusal(await flows('--events', f), 1)).toMatch(/huge\.csv:3: a line longer than 1 MiB/);
    const g = c.file('huge2.csv', `${HEAD}\n${row('m1', 0)}\nm2,2026-05-04T10:00:00Z,booking_made,${'x'.repeat(50_000_000)}\n`);
    expect(expectRefusal(await flows('--events', g, '--skip-bad-rows'), 1)).toMatch(/huge2\.csv:3: a line longer than 1 MiB/);
  }, 30_000); // a bound on a hang: writing 100 MB of test files takes a few seconds on a busy machine

  it('/dev/zero as CSV ends at once', async () => {
    expect(expectRefusal(await flows('--events', '/dev/zero', '--input-format', 'csv'), 1)).toMatch(/\/dev\/zero:1: a NUL byte at byte offset 0: the file looks binary, or UTF-16\/UTF-32 text/);
  }, 10_000); // a bound on a hang (it used to never end)

  it('/dev/zero as NDJSON ends at once, with no stack trace', async () => {
    expectRefusal(await flows('--events', '/dev/zero', '--input-format', 'ndjson'), 1);
  }, 10_000);

  it('an NDJSON line over 1 MiB is refused', async () => {
    const f = c.file('long.ndjson', `{"user_id":"m1","timestamp":"2026-05-04T10:00:00Z","note":"${'y'.repeat(2_000_000)}"}\n`);
    expect(expectRefusal(await flows('--events', f), 1)).toMatch(/long\.ndjson:1: a line longer than 1 MiB/);
  });

  it('a header of 100,000 columns is refused', async () => {
    const f = c.file('wide.csv', `user_id,timestamp,event,${Array.from({ length: 100_000 }, (_, i) => `c${i}`).join(',')}\n`);
    expect(expectRefusal(await flows('--events', f), 1)).toMatch(/100,003 columns/);
  });
});

describe('encodings', () => {
  it('UTF-16 with a byte order mark: re-save as UTF-8', async () => {
    const f = c.file('u16.csv', Buffer.concat([Buffer.from([0xff, 0xfe]), Buffer.from(csv(HEAD, row('m1', 0)), 'utf16le')]));
    expect(expectRefusal(await flows('--events', f), 1)).toMatch(/UTF-16 text.*Re-save the file as UTF-8/);
  });

  it('UTF-16 without a byte order mark: refused at its first NUL', async () => {
    const f = c.file('u16le.csv', Buffer.from(csv(HEAD, row('m1', 0)), 'utf16le'));
    expect(expectRefusal(await flows('--events', f), 1)).toMatch(/u16le\.csv:1: a NUL byte at byte offset 1/);
  });

  it('Latin-1 ids are refused with the line and byte offset, never merged; with --skip-bad-rows counted', async () => {
    const data = Buffer.concat([Buffer.from(`${HEAD}\n${row('m1', 0)}\nJos`), Buffer.from([0xe9]), Buffer.from(',2026-05-04T10:00:00Z,booking_made,x\nJos'), Buffer.from([0xe8]), Buffer.from(',2026-05-11T10:00:00Z,booking_made,x\n')]);
    const f = c.file('latin1.csv', data);
    expect(expectRefusal(await flows('--events', f), 1)).toMatch(new RegExp(`latin1\\.csv:3: invalid UTF-8\\. Byte 0xE9 at byte offset ${data.indexOf(0xe9)} is not UTF-8`));
    const r = await flows('--events', f, '--skip-bad-rows');
    expect(r.code, r.err).toBe(0);
    expect(rowsLine(r.err)).toBe('rows: 3 read, 1 used, 2 rejected (invalid UTF-8 2)');
  });

  it('CR-only line ends are refused with a hint', async () => {
    const f = c.file('mac.csv', `${HEAD}\r${row('m1', 0)}\r`);
    expect(expectRefusal(await flows('--events', f), 1)).toMatch(/CR alone as its line end/);
  });

  it('a non-ASCII delimiter is a usage error', async () => {
    const f = c.file('d.csv', csv(HEAD, row('m1', 0)));
    expect(expectRefusal(await flows('--events', f, '--delimiter', '§'), 2)).toMatch(/--delimiter: must be one ASCII character/);
  });
});

describe('NDJSON ids', () => {
  const nd = (id: string) => `{"user_id":${id},"timestamp":"2026-05-04T10:00:00Z","event":"booking_made"}`;
  it.each([
    ['9007199254740993', /beyond 2\^53/],
    ['123.0', /not written as a plain whole number/],
    ['1e400', /not written as a plain whole number/],
    ['{"a":1}', /An object is not an id/],
    ['[1,2]', /An array is not an id/],
    ['"\\udbff"', /bad user id: '"\\udbff"'\. The id holds a lone UTF-16 surrogate/],
  ])('%s is refused with the reason', async (id, why) => {
    const f = c.file('ids.ndjson', `${nd('"m1"')}\n${nd(id)}\n`);
    const line = expectRefusal(await flows('--events', f), 1);
    expect(line).toMatch(/ids\.ndjson:2, column user_id: bad user id/);
    expect(line).toMatch(why);
  });

  it('123 and 123.0 never become one user: with --skip-bad-rows the second is rejected and counted', async () => {
    const f = c.file('ids.ndjson', `${nd('123')}\n${nd('123.0')}\n${nd('"124"')}\n`);
    const r = await flows('--events', f, '--skip-bad-rows');
    expect(r.code, r.err).toBe(0);
    expect(rowsLine(r.err)).toBe('rows: 3 read, 2 used, 1 rejected (bad user id 1)');
  });
});

describe('paths', () => {
  it.each(['x.ndjson', 'x.csv'])('a folder named %s: one clear line', async (name) => {
    const d = join(c.dir, name);
    mkdirSync(d, { recursive: true });
    expect(expectRefusal(await flows('--events', d), 1)).toMatch(/this is a folder, not an events file/);
  });

  it('a missing file, and a path through a file', async () => {
    expect(expectRefusal(await flows('--events', join(c.dir, 'missing.csv')), 1)).toMatch(/missing\.csv: no such file\. Check the path/);
    const f = c.file('plain.csv', csv(HEAD, row('m1', 0)));
    expect(expectRefusal(await flows('--events', join(f, 'inner.csv')), 1)).toMatch(/no such file \(a part of the path is not a folder\)/);
  });

  it.skipIf(process.getuid?.() === 0)('an unreadable file (skipped as root, who reads every file)', async () => {
    const f = c.file('locked.csv', csv(HEAD, row('m1', 0)));
    execFileSync('chmod', ['000', f]);
    expect(expectRefusal(await flows('--events', f), 1)).toMatch(/permission denied/);
  });

  it('an empty file, a file with only a byte order mark, a blank first line, a header alone', async () => {
    expect(expectRefusal(await flows('--events', c.file('empty.csv', '')), 1)).toMatch(/the file is empty/);
    expect(expectRefusal(await flows('--events', c.file('bom.csv', '\uFEFF')), 1)).toMatch(/the file is empty/);
    expect(expectRefusal(await flows('--events', c.file('blank.csv', csv('', HEAD, row('m1', 0)))), 1)).toMatch(/blank\.csv:1: the first line is blank: it must be the header/);
    expect(expectRefusal(await flows('--events', c.file('head.csv', csv(HEAD))), 1)).toMatch(/nothing to analyse: it holds no event rows/);
    expect(expectRefusal(await flows('--events', c.file('empty.ndjson', '\n\n')), 1)).toMatch(/nothing to analyse: it holds no event rows/);
  });

  it('a FIFO is read once and works (mkfifo)', async () => {
    const fifo = join(c.dir, 'pipe.csv');
    execFileSync('mkfifo', [fifo]);
    const src = c.file('src.csv', csv(HEAD, ...rows(400)));
    const writer = spawn('sh', ['-c', `cat "${src}" > "${fifo}"`]);
    const closed = new Promise((r) => writer.on('close', r));
    const r = await flows('--events', fifo);
    expect(await closed).toBe(0);
    expect(r.code, r.err).toBe(0);
    expect(rowsLine(r.err)).toBe('rows: 400 read, 400 used');
  }, 20_000); // a bound on a hang, should the FIFO be opened twice

  const bin = fileURLToPath(new URL('../../src/cli/bin.js', import.meta.url));
  /** Run the CLI in a child process; `stdin` as given to spawn. */
  const spawned = async (args: string[], stdin: 'pipe' | number, feed?: Buffer) => {
    const child = spawn(process.execPath, [bin, ...args], { stdio: [stdin, 'pipe', 'pipe'] });
    let err = '';
    child.stderr?.on('data', (d) => (err += String(d)));
    child.stdout?.resume();
    if (feed) child.stdin?.end(feed);
    const code = await new Promise((r) => child.on('close', r));
    return { code, err };
  };

  it('/dev/stdin is read once and works, from a shell pipe and from a parent process\'s socket', async () => {
    const src = c.file('stdin.csv', csv(HEAD, ...rows(50)));
    const args = ['flows', '--events', '/dev/stdin', '--input-format', 'csv', '--format', 'json'];
    // a shell pipe: `cat stdin.csv | tidemark flows --events /dev/stdin …`
    const shell = spawn('sh', ['-c', `cat "${src}" | "${process.execPath}" "${bin}" ${args.join(' ')} 2>&1 >/dev/null`]);
    let out = '';
    shell.stdout.on('data', (d) => (out += String(d)));
    expect(await new Promise((r) => shell.on('close', r)), out).toBe(0);
    expect(rowsLine(out)).toBe('rows: 50 read, 50 used');
    // a socket (Node's spawn): /dev/stdin cannot be opened (ENXIO), so descriptor 0 is read
    const sock = await spawned(args, 'pipe', readFileSync(src));
    expect(sock.code, sock.err).toBe(0);
    expect(rowsLine(sock.err)).toBe('rows: 50 read, 50 used');
  }, 30_000); // a bound on a hang; each spawned CLI compiles its TypeScript first
});
