/**
 * Hostile-input corpus for outputs and personal data: per-person --by columns, formula cells in CSV
 * outputs, very long values in sentences, control codes (ESC sequences, CR, newline, bidi overrides)
 * in option values, file names, column names and data values, and output paths that cannot or must
 * not be written. Each case ends in a result or one clean line with exit 1 or 2 (harness.ts).
 */
import { existsSync, mkdirSync, readFileSync, readdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import Papa from 'papaparse';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { bufferIo } from '../../src/cli/io.js';
import { main } from '../../src/cli/main.js';
import { corpusDir, expectClean, expectRefusal, run } from './harness.js';

const ESC = '\u001b[2J\u001b[31m';
const BIDI = '\u202e';
const NASTY = [`${ESC}red`, 'cr\rhere', 'new\nline', `bidi${BIDI}txt.exe`, `iso\u2066late\u2069`];
// eslint-disable-next-line no-control-regex
const RAW_CONTROL = /[\u0000-\u0009\u000b-\u001f\u007f-\u009f\u2028\u2029\u202a-\u202e\u2066-\u2069]/;

let t: ReturnType<typeof corpusDir>;
const csvCell = (v: string) => (/[",\r\n]/.test(v) ? `"${v.replace(/"/g, '""')}"` : v);

/**
 * A weekly log of the fictional makerspace: `members` members over 6 weeks from Monday 2026-03-02,
 * with extra columns from `extra(i)` (name → value).
 */
function bookings(name: string, members: number, extra: (i: number) => Record<string, string> = () => ({}), event: (i: number) => string = () => 'booking'): string {
  const cols = Object.keys(extra(0));
  const lines = [['user_id', 'timestamp', 'event', ...cols].map(csvCell).join(',')];
  for (let i = 0; i < members; i++) {
    for (let w = i % 3; w < 6; w++) {
      if ((i + w) % 4 === 0 && w !== i % 3) continue;
      const ts = new Date(Date.UTC(2026, 2, 2, 10) + (w * 7 + (i % 7)) * 86_400_000).toISOString();
      lines.push([`m${String(i).padStart(3, '0')}`, ts, event(i), ...Object.values(extra(i))].map(csvCell).join(','));
    }
  }
  return t.file(name, `${lines.join('\n')}\n`);
}

beforeAll(() => {
  t = corpusDir();
});
afterAll(() => t.done());

describe('per-person --by columns', () => {
  it('a column named with control codes, holding one value per member: refused, the name escaped', async () => {
    const ev = bookings('contacts.csv', 60, (i) => ({ [`e${ESC}mail`]: `m${i}@makerspace.example` }));
    const line = expectRefusal(await run('explain', '--events', ev, '--by', `e${ESC}mail`), 1);
    expect(line).toContain('e\\u001b[2J\\u001b[31mmail');
    expect(line).toContain('--publish-per-person-values');
  });

  it('a phone-like column with a few shared numbers (households) is still refused', async () => {
    const ev = bookings('phones.csv', 60, (i) => ({ phone: `+44 7700 900${String(i % 50).padStart(3, '0')}` }));
    expect(expectRefusal(await run('survival', '--events', ev, '--by', 'phone'), 1)).toMatch(/40 of 60 users \(67%\)/);
  });

  it('an ordinary column is accepted by every command that takes --by', async () => {
    const ev = bookings('plans.csv', 60, (i) => ({ plan: ['hobby', 'studio', 'pro'][i % 3] }));
    for (const cmd of ['explain', 'survival']) {
      const r = await run(cmd, '--events', ev, '--by', 'plan', '--quiet');
      expectClean(r);
      expect(r.code, `${cmd}: ${r.err}`).toBe(0);
    }
  });
});

describe('formula cells in CSV outputs', () => {
  const FORMULAS = ['=HYPERLINK("http://x.example","x")', '+cmd|\' /C calc\'!A0', '-2+3', '@SUM(1+1)', '\t=1', '\r=1'];

  it('classify --format csv: user ids that start like a formula get a leading quote', async () => {
    const lines = ['user_id,timestamp,event'];
    FORMULAS.forEach((id, i) => lines.push(`${csvCell(id)},2026-03-0${2 + i}T10:00:00Z,booking`));
    lines.push('-3,2026-03-02T11:00:00Z,booking');
    const ev = t.file('formula-ids.csv', `${lines.join('\n')}\n`);
    const r = await run('classify', '--events', ev, '--quiet');
    expect(r.code, r.err).toBe(0);
    const firstCells = r.out.split(/\n(?=[^\n]*,\d{4}-)/).slice(1).map((row) => row.replace(/^"/, '').slice(0, 2));
    for (const c of firstCells) expect(c === '-3' || c.startsWith("'"), JSON.stringify(c)).toBe(true);
    expect(r.out).toContain(`'=HYPERLINK(""http://x.example"",""x"")`);
    expect(r.out).toMatch(/^-3,/m); // a plain number stays as it is
  });

  it('the report data files: event names and --by values that start like a formula are neutralised', async () => {
    const ev = bookings('formula-report.csv', 60, (i) => ({ plan: FORMULAS[i % 3] }), (i) => FORMULAS[i % FORMULAS.length]);
    const out = join(t.dir, 'formula-report');
    const r = await run('report', '--events', ev, '--by', 'plan', '--out', out, '--quiet');
    expect(r.code, r.err).toBe(0);
    // read back with an RFC 4180 reader: no field starts like a formula (numbers aside)
    for (const f of readdirSync(out).filter((n) => n.endsWith('.csv'))) {
      for (const field of Papa.parse<string[]>(readFileSync(join(out, f), 'utf8')).data.flat()) {
        if (/^[=+@\t\r-]/.test(field)) expect(field, f).toMatch(/^-?[\d.]+(e-?\d+)?$/);
      }
    }
    const names = readFileSync(join(out, 'event-names.csv'), 'utf8');
    expect(names).toContain(`"'=HYPERLINK(""http://x.example"",""x"")"`);
    expect(names).toContain("'@SUM(1+1)");
    expect(readFileSync(join(out, 'by-plan.csv'), 'utf8')).toContain("'-2+3");
  }, 60_000);
});

describe('a 3,000-character value', () => {
  const LONG = `studio-${'x'.repeat(3000)}`;

  it('is shortened in explain\'s sentences and terminal tables, kept whole in JSON data', async () => {
    const ev = bookings('long-plan.csv', 60, (i) => ({ plan: i % 2 ? LONG : 'hobby' }));
    const table = await run('explain', '--events', ev, '--by', 'plan', '--quiet');
    expect(table.code, table.err).toBe(0);
    for (const line of table.out.split('\n')) expect(line.length, line.slice(0, 80)).toBeLessThan(400);
    expect(table.out).toContain('studio-xxx');
    expect(table.out).toContain('…');
    const j = JSON.parse((await run('explain', '--events', ev, '--by', 'plan', '--format', 'json', '--quiet')).out);
    expect(j.bySegment.sentence.length).toBeLessThan(400);
    expect(j.bySegment.groups.map((g: { group: string }) => g.group)).toContain(LONG);
  });

  it('is shortened in the report\'s findings, readings, notes and titles, and a long column name makes a short file name', async () => {
    const col = `plan_${'y'.repeat(300)}`;
    const ev = bookings('long-report.csv', 60, (i) => ({ [col]: i % 2 ? LONG : 'hobby' }), (i) => (i % 2 ? LONG : 'booking'));
    const out = join(t.dir, 'long-report');
    const r = await run('report', '--events', ev, '--by', col, '--out', out);
    expectClean(r);
    expect(r.code, r.err).toBe(0);
    const html = readFileSync(join(out, 'index.html'), 'utf8');
    expect(html).not.toContain('x'.repeat(200));
    expect(html).not.toContain('y'.repeat(200));
    const md = readFileSync(join(out, 'summary.md'), 'utf8');
    expect(md).not.toContain('x'.repeat(200));
    for (const f of readdirSync(out)) expect(Buffer.byteLength(f), f).toBeLessThan(100);
    for (const line of r.out.split('\n')) expect(line.length).toBeLessThan(400);
  }, 60_000);
});

describe('control codes never reach the terminal raw', () => {
  it.each(NASTY)('in an option value (%j): one clean line, exit 2', async (v) => {
    for (const argv of [['flows', '--events', 'x.csv', '--format', v], ['report', '--out', v, '--events', 'x.csv', '--format', v], ['flows', `--${v}`], [v]]) {
      const line = expectRefusal(await run(...argv), 2);
      expect(line).not.toMatch(RAW_CONTROL);
    }
  });

  it.each(NASTY)('in a file name (%j): missing, or holding a bad row', async (v) => {
    expectRefusal(await run('flows', '--events', join(t.dir, `no-${v}.csv`)), 1);
    const f = t.file(`bad-${v}.csv`, `user_id,timestamp,event\nm1,not-a-time,booking\n`);
    const line = expectRefusal(await run('flows', '--events', f), 1);
    expect(line).toMatch(/bad timestamp/);
    expectRefusal(await run('rules', 'check', join(t.dir, `no-${v}.yaml`)), 1);
  });

  it.each(NASTY)('in a column name (%j): a missing user column, an unknown --by', async (v) => {
    const f = t.file('cols.csv', `${csvCell(`id${v}`)},timestamp,event,${csvCell(`pl${v}an`)}\nm1,2026-03-02T10:00:00Z,booking,hobby\n`);
    expectRefusal(await run('flows', '--events', f), 1);
    // an unknown --by column is a usage error found after reading (exit 2, naming --by); a header
    // holding a carriage return is refused by the reader first (exit 1: CR alone as a line end)
    expectRefusal(await run('explain', '--events', f, '--user-column', `id${v}`, '--by', `x${v}`), v.includes('\r') ? 1 : 2);
  });

  it.each(NASTY)('in a data value (%j): a bad timestamp, an event name in the report, a --by value in tables and sentences', async (v) => {
    expectRefusal(await run('flows', '--events', t.file('bad-ts.csv', `user_id,timestamp,event\nm1,${csvCell(`2026${v}`)},booking\n`)), 1);
    const ev = bookings('nasty-values.csv', 60, (i) => ({ plan: i % 2 ? `studio${v}` : 'hobby' }), (i) => (i % 2 ? `book${v}` : 'booking'));
    for (const cmd of ['explain', 'survival']) {
      const r = await run(cmd, '--events', ev, '--by', 'plan');
      expectClean(r);
      expect(r.code, r.err).toBe(0);
      expect(r.out.replace(/\n/g, ''), cmd).not.toMatch(RAW_CONTROL);
    }
    const out = join(t.dir, `nasty-${NASTY.indexOf(v)}`);
    const r = await run('report', '--events', ev, '--by', 'plan', '--out', out);
    expectClean(r);
    expect(r.code, r.err).toBe(0);
    expect(r.out.replace(/\n/g, '')).not.toMatch(RAW_CONTROL);
    // the page and the Markdown are safe to print on a terminal too
    for (const f of ['index.html', 'summary.md']) expect(readFileSync(join(out, f), 'utf8').replace(/\n/g, ''), f).not.toMatch(RAW_CONTROL);
  }, 60_000);

  it('in CSV data on standard output: escaped on a terminal, exact through a pipe', async () => {
    const ids = NASTY.map((v, i) => `m${i}${v}`);
    const ev = t.file('nasty-ids.csv', `user_id,timestamp,event\n${ids.map((id) => `${csvCell(id)},2026-03-02T10:00:00Z,booking`).join('\n')}\n`);
    const tty = Object.assign(bufferIo(), { stdoutIsTTY: true });
    expect(await main(['classify', '--events', ev, '--quiet'], tty)).toBe(0);
    expect(tty.out.replace(/\n/g, '')).not.toMatch(RAW_CONTROL);
    expect(tty.out).toContain('m0\\u001b[2J');
    const pipe = await run('classify', '--events', ev, '--quiet');
    for (const id of ids) expect(pipe.out).toContain(csvCell(id));
  });

  it('in a --out folder name: the note on standard error is escaped', async () => {
    const ev = bookings('plain.csv', 30);
    const out = join(t.dir, `out${ESC}\nx`);
    const r = await run('report', '--events', ev, '--out', out);
    expectClean(r);
    expect(r.code, r.err).toBe(0);
    expect(r.err).toContain('\\u001b[2J');
    expect(existsSync(join(out, 'index.html'))).toBe(true);
  }, 60_000);
});

describe('outputs that cannot or must not be written', () => {
  it('report --out a folder of other files: refused, nothing touched', async () => {
    const ev = bookings('keep.csv', 30);
    const dir = join(t.dir, 'my-data');
    mkdirSync(dir);
    writeFileSync(join(dir, 'events.csv'), 'precious');
    const line = expectRefusal(await run('report', '--events', ev, '--out', dir), 1);
    expect(line).toMatch(/not part of a tidemark report/);
    expect(readdirSync(dir)).toEqual(['events.csv']);
  }, 60_000);

  it('report --out the root folder, or a path through a file: refused with one line', async () => {
    const ev = bookings('root.csv', 30);
    expectRefusal(await run('report', '--events', ev, '--out', '/'), 1);
    const file = t.file('a-file', 'x');
    expect(expectRefusal(await run('report', '--events', ev, '--out', join(file, 'weekly')), 1)).toMatch(/part of the path is a file/);
  }, 60_000);

  it('--out FILE that is a folder: refused with one line, for every command', async () => {
    const ev = bookings('dir-out.csv', 30);
    const dir = join(t.dir, 'a-folder');
    mkdirSync(dir);
    for (const cmd of ['flows', 'classify', 'retention']) expect(expectRefusal(await run(cmd, '--events', ev, '--out', dir, '--quiet'), 1)).toMatch(/it is a folder/);
    expect(expectRefusal(await run('rules', 'schema', '--out', dir), 1)).toMatch(/it is a folder/);
  });

  it('a report over an earlier one holds only this run\'s files', async () => {
    const ev = bookings('stale.csv', 60, (i) => ({ plan: ['hobby', 'studio', 'pro'][i % 3] }));
    const out = join(t.dir, 'weekly');
    expect((await run('report', '--events', ev, '--by', 'plan', '--out', out, '--quiet')).code).toBe(0);
    expect(readdirSync(out)).toContain('by-plan.csv');
    const r = await run('report', '--events', ev, '--out', out, '--quiet', '--format', 'json');
    expect(r.code, r.err).toBe(0);
    expect(readdirSync(out).sort()).toEqual([...JSON.parse(r.out).files, '.tidemark-report'].sort());
    expect(readdirSync(out)).not.toContain('by-plan.csv');
    expect(readdirSync(t.dir).filter((f) => f.startsWith('.weekly'))).toEqual([]);
  }, 60_000);
});
