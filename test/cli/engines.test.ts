/**
 * `--engine duckdb|postgres` and `--db/--table/--query` on the commands: the same JSON as the memory
 * engine on the same events (the waist is the contract, src/waist/), and every misuse refused before
 * anything is read with exit 2 and one line naming the flag (common CLI practice: 2 = usage).
 * PostgreSQL takes part when a server is reachable (.ci/run starts one; see test/engines/sqlEngines.ts).
 */
import { rmSync, truncateSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { DuckDBInstance } from '@duckdb/node-api';
import pg from 'pg';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runCli, seeded, tempDir } from '../report/fixtures.js';
import { pgReachable, pgUrl } from '../engines/sqlEngines.js';
import { LARGE_INPUT_BYTES, largeInputHint } from '../../src/cli/common.js';
import { filesSource } from '../../src/engines/types.js';

const dir = tempDir('tidemark-engines-cli-');
/** A path that cannot be read: a command that opened it would fail with exit 1, not 2. */
const MISSING = join(dir, 'no-such-folder', 'x');
const EVENTS = join(dir, 'bookings.csv');
const DB = join(dir, 'bookings.duckdb');
const PG_TABLE = `tm_cli_${process.pid}`;
let pgUp = false;

beforeAll(async () => {
  // an invented makerspace log: 80 members over 10 weeks, with a plan column
  const rng = seeded(31);
  const rows = ['user_id,timestamp,event,plan'];
  const start = Date.UTC(2026, 2, 2);
  for (let i = 0; i < 1500; i++) {
    const m = Math.floor(rng() * 80);
    rows.push(`m${m},${new Date(start + Math.floor(rng() * 70 * 86_400_000)).toISOString()},${rng() < 0.8 ? 'booking_made' : 'checked_in'},${m % 3 === 0 ? 'studio' : 'hobby'}`);
  }
  writeFileSync(EVENTS, `${rows.join('\n')}\n`);
  const db = await DuckDBInstance.create(DB);
  const c = await db.connect();
  await c.run(`CREATE TABLE bookings AS SELECT * FROM read_csv('${EVENTS}', all_varchar = true, header = true)`);
  c.closeSync();
  db.closeSync();
  pgUp = await pgReachable();
  if (pgUp) {
    const client = new pg.Client({ connectionString: pgUrl() });
    await client.connect();
    await client.query(`CREATE TABLE ${PG_TABLE} (user_id text, "timestamp" text, event text, plan text)`);
    await client.query(`INSERT INTO ${PG_TABLE} SELECT * FROM unnest($1::text[], $2::text[], $3::text[], $4::text[])`,
      [0, 1, 2, 3].map((k) => rows.slice(1).map((r) => r.split(',')[k])));
    await client.end();
  } else if (process.env.CI === 'true') {
    throw new Error('no PostgreSQL server reachable (PGHOST…): .ci/run starts one');
  }
});

afterAll(async () => {
  rmSync(dir, { recursive: true, force: true });
  if (!pgUp) return;
  const client = new pg.Client({ connectionString: pgUrl() });
  await client.connect();
  await client.query(`DROP TABLE IF EXISTS ${PG_TABLE}`);
  await client.end();
});

/**
 * The JSON output without the engine's name (the one field that names who made the waist), and for a
 * table without the line accounting (a table has no lines; its rows are compared).
 */
function withoutEngine(text: string, lines = true): unknown {
  return JSON.parse(text, (k, v) => ((k === 'engine' && typeof v === 'object') || (!lines && k === 'lines') ? undefined : v));
}

describe('the SQL engines give the memory engine\'s JSON', () => {
  it.each([
    ['flows', []],
    ['retention', []],
    ['explain', ['--by', 'plan']],
    ['survival', []],
  ])('%s %j: --engine duckdb over the file and over a DuckDB table', async (command, extra) => {
    const memory = await runCli([command, '--events', EVENTS, '--format', 'json', '--quiet', ...extra]);
    expect(memory.code, memory.err).toBe(0);
    const files = await runCli([command, '--engine', 'duckdb', '--events', EVENTS, '--format', 'json', '--quiet', ...extra]);
    expect(files.code, files.err).toBe(0);
    expect(withoutEngine(files.out)).toEqual(withoutEngine(memory.out));
    const table = await runCli([command, '--engine', 'duckdb', '--db', DB, '--table', 'bookings', '--format', 'json', '--quiet', ...extra]);
    expect(table.code, table.err).toBe(0);
    expect(withoutEngine(table.out, false)).toEqual(withoutEngine(memory.out, false));
  }, 120_000); // several engine runs: a bound on a hang on a busy machine

  it('flows --engine postgres over a table and over a query file', async (ctx) => {
    if (!pgUp) return ctx.skip();
    const memory = await runCli(['flows', '--events', EVENTS, '--format', 'json', '--quiet']);
    const table = await runCli(['flows', '--engine', 'postgres', '--db', pgUrl() as string, '--table', PG_TABLE, '--format', 'json', '--quiet']);
    expect(table.code, table.err).toBe(0);
    expect(withoutEngine(table.out, false)).toEqual(withoutEngine(memory.out, false));
    const query = join(dir, 'events.sql');
    writeFileSync(query, `SELECT user_id, "timestamp", event, plan FROM ${PG_TABLE} WHERE event IS NOT NULL`);
    const fromQuery = await runCli(['flows', '--engine', 'postgres', '--db', pgUrl() as string, '--query', query, '--format', 'json', '--quiet']);
    expect(fromQuery.code, fromQuery.err).toBe(0);
    expect(withoutEngine(fromQuery.out, false)).toEqual(withoutEngine(memory.out, false));
  }, 120_000);
});

/** Exactly one line on stderr, starting `tidemark: FLAG: `, and exit 2. */
function expectFlagRefusal(r: { code: number; err: string }, flag: string): void {
  expect(r.code, r.err).toBe(2);
  const lines = r.err.split('\n').filter((l) => l.startsWith('tidemark:'));
  expect(lines, r.err).toHaveLength(1);
  expect(lines[0]).toMatch(new RegExp(`^tidemark: ${flag}: `));
}

describe('database options are refused before anything is read (the paths cannot be read)', () => {
  it.each([
    [['flows', '--table', 'bookings'], '--table'],
    [['flows', '--query', MISSING], '--query'],
    [['flows', '--db', MISSING], '--db'],
    [['flows', '--db', MISSING, '--table', 'bookings'], '--engine'],
    [['flows', '--engine', 'memory', '--db', MISSING, '--table', 'bookings'], '--engine'],
    [['flows', '--engine', 'duckdb', '--db', MISSING, '--table', 'a', '--query', MISSING], '--query'],
    [['flows', '--engine', 'duckdb', '--db', MISSING, '--query', MISSING], '--query'],
    [['flows', '--engine', 'duckdb', '--db', 'postgres://nobody@127.0.0.1:1/x', '--table', 'a'], '--db'],
    [['flows', '--engine', 'postgres', '--db', MISSING, '--table', 'a'], '--db'],
    [['flows', '--engine', 'postgres', '--events', MISSING], '--engine'],
    [['flows', '--engine', 'duckdb', '--events', MISSING, '--db', MISSING, '--table', 'a'], '--db'],
    [['flows', '--engine', 'duckdb', '--db', MISSING, '--table', 'a', '--delimiter', ';'], '--delimiter'],
    [['flows', '--waist', MISSING, '--db', MISSING, '--table', 'a'], '--db'],
    [['classify', '--engine', 'duckdb', '--events', MISSING], '--engine'],
  ])('%j names %s', async (argv, flag) => {
    expectFlagRefusal(await runCli(argv), flag);
  });
});

describe('a hint to use the duckdb engine for large files', () => {
  it(`from ${LARGE_INPUT_BYTES / 1e9} GB of event files on the memory engine, and only then`, () => {
    // a sparse file: its size is set, nothing is written or read
    const big = join(dir, 'big.csv');
    writeFileSync(big, '');
    truncateSync(big, LARGE_INPUT_BYTES);
    expect(largeInputHint(filesSource([big]), undefined)).toMatch(/^note: 1\.0 GB of events for the memory engine; --engine duckdb/);
    expect(largeInputHint(filesSource([big]), 'memory')).toBeDefined();
    expect(largeInputHint(filesSource([big]), 'duckdb')).toBeUndefined();
    expect(largeInputHint(filesSource([EVENTS]), 'memory')).toBeUndefined();
    expect(largeInputHint(filesSource([big, MISSING]), 'memory')).toBeUndefined();
    expect(largeInputHint({ kind: 'table', db: DB, table: 'bookings' }, 'duckdb')).toBeUndefined();
    truncateSync(big, LARGE_INPUT_BYTES - 1);
    expect(largeInputHint(filesSource([big]), 'memory')).toBeUndefined();
  });

  it('counts a compressed file as the text it holds: gzip 4 bytes a byte, Parquet 10 (the memory engine reads it slowly)', () => {
    const gz = join(dir, 'big.csv.gz');
    writeFileSync(gz, '');
    truncateSync(gz, LARGE_INPUT_BYTES / 4);
    expect(largeInputHint(filesSource([gz]), 'memory')).toBe('note: 250 MB of events (about 1.0 GB as text) for the memory engine; --engine duckdb reads large logs out of core, in less memory');
    truncateSync(gz, LARGE_INPUT_BYTES / 4 - 1);
    expect(largeInputHint(filesSource([gz]), 'memory')).toBeUndefined();
    const pq = join(dir, 'big.parquet');
    writeFileSync(pq, '');
    truncateSync(pq, LARGE_INPUT_BYTES / 10);
    expect(largeInputHint(filesSource([pq]), 'memory')).toMatch(/^note: 100 MB of Parquet for the memory engine, which reads Parquet several times slower; --engine duckdb/);
    expect(largeInputHint(filesSource([pq]), 'duckdb')).toBeUndefined();
    truncateSync(pq, LARGE_INPUT_BYTES / 10 - 1);
    expect(largeInputHint(filesSource([pq]), 'memory')).toBeUndefined();
    // a Parquet file without the extension, named by --input-format
    const bin = join(dir, 'big.bin');
    writeFileSync(bin, '');
    truncateSync(bin, LARGE_INPUT_BYTES / 10);
    expect(largeInputHint(filesSource([bin], { format: 'parquet' }), 'memory')).toBeDefined();
    expect(largeInputHint(filesSource([bin]), 'memory')).toBeUndefined();
  });
});
