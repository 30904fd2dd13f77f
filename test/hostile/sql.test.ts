/**
 * Hostile input for the SQL engines and `tidemark sql`: names built to break out of SQL (quotes,
 * semicolons, comment markers, backslashes, line breaks in a rules name), malformed files, timestamps
 * at the edges of what tidemark reads, and bad options. Every case ends in the memory engine's answer
 * (the same waist, or the same refusal) or one clean line; nothing from the data is ever run as SQL.
 */
import { readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { gzipSync } from 'node:zlib';
import { DuckDBInstance } from '@duckdb/node-api';
import { afterAll, describe, expect, it } from 'vitest';
import { TidemarkError } from '../../src/errors.js';
import { runDuckdb } from '../../src/engines/duckdb/run.js';
import { parseRules } from '../../src/rules/load.js';
import { stringify } from 'yaml';
import { comparable, memoryWaist } from '../engines/sqlEngines.js';
import { corpusDir, expectRefusal, run } from './harness.js';

const c = corpusDir();
afterAll(() => c.done());

const weekly = parseRules('grain: week\nlapseLimit: 1\n');
const ROWS = Array.from({ length: 30 }, (_, i) => `m${i % 7},2026-03-${String(2 + (i % 20)).padStart(2, '0')}T10:00:00Z,booking,${['hobby', 'pro'][i % 2]}`);
const csv = (rows: string[], header = 'user_id,timestamp,event,plan') => [header, ...rows].join('\n') + '\n';

/** Both engines: the same waist, or the same refusal (code and, for data errors, message). */
async function sameAsMemory(file: string, rules = weekly, skip = false, by?: string): Promise<string> {
  const got = await runDuckdb({ files: [file], skipBadRows: skip }, rules, { by }).then((w) => comparable(w), (e: unknown) => e);
  const want = await memoryWaist(file, rules, { by }, skip).then((w) => comparable(w), (e: unknown) => e);
  if (want instanceof TidemarkError) {
    expect(got, String(want.message)).toBeInstanceOf(TidemarkError);
    expect((got as TidemarkError).oneLine()).toBe(want.oneLine());
    return 'refused';
  }
  expect(got).toEqual(want);
  return 'equal';
}

describe('the DuckDB engine on hostile files: the memory engine\'s answer', () => {
  it.each([
    ['an unclosed quote (stops the run at its line)', csv([...ROWS.slice(0, 5), 'm9,"2026-03-04T10:00:00Z,booking,pro', ...ROWS.slice(5)]), false],
    ['a row with a field too many, skipped and counted', csv([...ROWS, 'm1,2026-03-04T10:00:00Z,booking,pro,extra']), true],
    ['a row with a field too many, refused at its line', csv([...ROWS, 'm1,2026-03-04T10:00:00Z,booking,pro,extra']), false],
    ['bad timestamps of every kind, skipped and counted', csv([...ROWS, 'm1,2026-02-29T10:00:00Z,booking,pro', 'm1,1899-12-31T12:00:00Z,booking,pro', 'm1,2200-01-01T00:00:00Z,booking,pro',
      'm1,99999999999999999999999,booking,pro', 'm1,2026-03-04T24:00:00Z,booking,pro', `m1,${'1'.repeat(45)},booking,pro`, 'm1,1e9,booking,pro', 'm1,,booking,pro',
      // shapes of the fast form that only look like it
      'm1,-026-03-04T10:00:00Z,booking,pro', 'm1, 026-03-04T10:00:00Z,booking,pro', 'm1,2026-03-04T1 :00:00Z,booking,pro', 'm1,2026-03-04T10:00:00.1 2Z,booking,pro',
      'm1,2026-03-04 10:00:00Z,booking,pro', 'm1,2026-03-04T10:60:00Z,booking,pro', 'm1,2026-03-04T10:00:00.000Z ,booking,pro']), true],
    ['edge timestamps that are read: a leap second, offsets across years, the last instant of 2199', csv([...ROWS, 'm1,2026-03-04T23:59:60Z,booking,pro', 'm2,1899-12-31T23:00:00-02:00,booking,pro',
      'm3,2199-12-31T23:59:59.999Z,booking,pro', 'm4,  2026-03-05T10:00:00Z\u3000,booking,pro', 'm5,20260305T1000+0130,booking,pro', 'm6,1772702400.75,booking,pro']), true],
    ['blank and white-space user ids, rejected', csv([...ROWS, ' ,2026-03-04T10:00:00Z,booking,pro', '\u3000\u00a0,2026-03-04T10:00:00Z,booking,pro']), true],
    ['a header only', csv([]), false],
    ['an empty file', '', false],
    ['a BOM and CRLF line ends', `\uFEFF${csv(ROWS).replace(/\n/g, '\r\n')}`, false],
    ['SQL in every field', csv([...ROWS, `"x'); DROP TABLE tm_ev; --",2026-03-04T10:00:00Z,"it's; --","a\\\\b'"`]), false],
  ])('%s', async (_what, text, skip) => {
    expect(await sameAsMemory(c.file(`f${Math.random().toString(36).slice(2)}.csv`, text), weekly, skip as boolean)).toMatch(/equal|refused/);
  }, 60_000);

  it('--by a column named with quotes, and key events with quotes and backslashes', async () => {
    const rules = parseRules(stringify({ grain: 'week', lapseLimit: 1, activity: { keyEvents: ["it's", 'a\\b', 'x"y'] } }));
    const rows = ROWS.map((r, i) => r.replace('booking', ["it's", '"a\\b"', '"x""y"', 'other'][i % 4]));
    const file = c.file('quoted.csv', csv(rows, `user_id,timestamp,event,"pl""an'; --"`));
    expect(await sameAsMemory(file, rules, false, `pl"an'; --`)).toBe('equal');
  }, 60_000);

  it('--by a per-person column (an email address a member) is refused as the memory engine refuses it, and runs when allowed', async () => {
    const rows = Array.from({ length: 60 }, (_, i) => `m${i % 25},2026-03-${String(2 + (i % 20)).padStart(2, '0')}T10:00:00Z,booking,member${i % 25}@makerspace.invalid`);
    const file = c.file('emails.csv', csv(rows, 'user_id,timestamp,event,email'));
    expect(await sameAsMemory(file, weekly, false, 'email')).toBe('refused');
    const allowed = { by: 'email', allowPerPersonColumn: true };
    expect(comparable(await runDuckdb({ files: [file] }, weekly, allowed))).toEqual(comparable(await memoryWaist(file, weekly, allowed)));
  }, 60_000);

  it('NDJSON with lines that are not objects, blank lines and numbers as ids and timestamps', async () => {
    const lines = [
      '{"user_id":"m1","timestamp":"2026-03-02T10:00:00Z","event":"booking","plan":"pro"}',
      '{"user_id":7,"timestamp":1772445600,"event":"booking","plan":{"tier":[1,2]}}',
      '{"user_id":7.0,"timestamp":1772445600000,"event":"booking"}',
      '', '   ', '[1,2]', 'not json', '{"user_id":"m2","timestamp":null}', '{"user_id":"m3","timestamp":true}',
      '{"user_id":"m4","timestamp":"2026-03-09T10:00:00Z","event":null,"plan":"hobby"}',
    ];
    expect(await sameAsMemory(c.file('mixed.ndjson', `${lines.join('\n')}\n`), weekly, true)).toBe('equal');
  }, 60_000);

  it('a gzip-compressed CSV gives the plain file\'s waist; a .gz that is not gzip is refused in one line', async () => {
    const plain = c.file('plain.csv', csv(ROWS));
    const gz = c.file('packed.csv.gz', gzipSync(readFileSync(plain)));
    const a = comparable(await runDuckdb({ files: [gz] }, weekly));
    expect(a).toEqual(comparable(await memoryWaist(plain, weekly)));
    const fake = c.file('fake.csv.gz', 'user_id,timestamp\n');
    const e = await runDuckdb({ files: [fake] }, weekly).then(() => undefined, (x: unknown) => x);
    expect(e).toBeInstanceOf(TidemarkError);
  }, 60_000);

  it('a missing file, an unknown extension, a database without the table', async () => {
    for (const [file, code] of [[join(c.dir, 'nope.csv'), 'FILE_NOT_FOUND'], [c.file('x.xlsx', 'a'), 'EVENTS_FORMAT']]) {
      const e = await runDuckdb({ files: [file] }, weekly).then(() => undefined, (x: unknown) => x);
      expect((e as TidemarkError).code).toBe(code);
    }
    const dbFile = join(c.dir, 'events.duckdb');
    const db = await DuckDBInstance.create(dbFile);
    const con = await db.connect();
    await con.run('CREATE TABLE other (x INTEGER)');
    con.closeSync();
    db.closeSync();
    const e = await runDuckdb({ db: dbFile, table: 'events"; DROP TABLE other; --' }, weekly).then(() => undefined, (x: unknown) => x);
    expect((e as TidemarkError).code).toBe('INPUT_INVALID');
    expect((e as TidemarkError).oneLine()).toMatch(/no table or view/);
  }, 60_000);
});

describe('tidemark sql: hostile names and options', () => {
  it('quotes, semicolons and comment markers in the table and column names stay names; a rules name cannot end a comment', async () => {
    const rules = c.file('evil.yaml', stringify({ name: "weekly\n; DROP TABLE events; --\u001b[31m", grain: 'week', lapseLimit: 2, columns: { user: 'us"er', timestamp: 'ts`x', event: "ev'ent" } }));
    const out = join(c.dir, 'evil-sql');
    const r = await run('sql', '--dialect', 'duckdb', '--events-table', 'main.ev"ents; DROP TABLE x; --', '--rules', rules, '--out', out, '--by', "pl'an", '--quiet');
    expect(r.code, r.err).toBe(0);
    // run on DuckDB against a table with those very names: the query reads it and nothing else happens
    const db = await DuckDBInstance.create(':memory:');
    const con = await db.connect();
    try {
      await con.run(`CREATE TABLE "ev""ents; DROP TABLE x; --" ("us""er" VARCHAR, "ts\`x" VARCHAR, "ev'ent" VARCHAR, "pl'an" VARCHAR)`);
      await con.run(`INSERT INTO "ev""ents; DROP TABLE x; --" VALUES ('m1', '2026-03-02T10:00:00Z', 'booking', 'pro'), ('m1', '2026-03-09T10:00:00Z', 'booking', 'pro')`);
      await con.run('CREATE TABLE x (keep INTEGER)');
      for (const f of readdirSync(out).filter((f) => f.endsWith('.sql'))) {
        const sql = readFileSync(join(out, f), 'utf8');
        for (const line of sql.split('\n').filter((l) => l.startsWith('--'))) expect(line).not.toMatch(/[\u0000-\u001f]/);
        await con.runAndReadAll(sql);
      }
      expect((await con.runAndReadAll('SELECT count(*) FROM x')).getRows()[0][0]).toBe(0n);
    } finally {
      con.closeSync();
      db.closeSync();
    }
  }, 60_000);

  it.each([
    [['--dialect', 'duckdb', '--out', 'o'], '--events-table'],
    [['--dialect', 'duckdb', '--events-table', 't'], '--out'],
    [['--dialect', 'oracle', '--events-table', 't', '--out', 'o'], "option '--dialect"],
    [['--dialect', 'duckdb', '--events-table', 't', '--out', 'o', '--from', '2026-02-30'], '--from'],
    [['--dialect', 'duckdb', '--events-table', 't', '--out', 'o', '--warmup', '-1'], '--warmup'],
    [['--dialect', 'duckdb', '--events-table', 't', '--out', 'o', '--timestamp-type', 'epoch'], "option '--timestamp-type"],
    [['--dialect', 'duckdb', '--events-table', 't', '--out', 'o', '--from', '2026-05-01', '--to', '2026-04-01'], '--from'],
  ])('refuses %j in one line naming %s (exit 2)', async (args, flag) => {
    const line = expectRefusal(await run('sql', ...args), 2);
    expect(line).toContain(flag);
  });

  it('an --out that is a file is refused in one line (exit 1)', async () => {
    const file = c.file('taken', 'x');
    const line = expectRefusal(await run('sql', '--dialect', 'postgres', '--events-table', 't', '--out', file), 1);
    expect(line).toMatch(/taken/);
  });
});
