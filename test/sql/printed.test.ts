/**
 * The SQL that `tidemark sql` prints, run as an analyst would: each query on a real engine (embedded
 * DuckDB; PostgreSQL when a server is reachable), each result exported as CSV into the folder, the
 * manifest query's one cell saved as manifest.json. The folder then reads as a waist equal to the
 * memory engine's on the same events (the reference semantics), and gives the same report JSON.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { DuckDBInstance } from '@duckdb/node-api';
import pg from 'pg';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { main } from '../../src/cli/main.js';
import { bufferIo } from '../../src/cli/io.js';
import { simulateMakerspace } from '../../src/demo/makerspace.js';
import { loadRulesFile, parseRules } from '../../src/rules/load.js';
import { readWaist } from '../../src/waist/read.js';
import { waistCsv } from '../../src/waist/csv.js';
import { WAIST_TABLES, type TableName } from '../../src/waist/tables.js';
import { QUERY_FILES } from '../../src/sql/print.js';
import { expectTidemarkError, tempDir } from '../core/helpers.js';
import { memoryWaist, pgReachable, pgUrl } from '../engines/sqlEngines.js';
import type { Waist } from '../../src/waist/types.js';

const t = tempDir();
afterAll(() => t.done());

/** A sample of the simulated makerspace log (invented data), with one attribute column. */
function sampleLog(): string {
  const rows: string[] = ['user_id,timestamp,event,plan'];
  let i = 0;
  simulateMakerspace(11, (e) => {
    if (i++ % 25 === 0) rows.push(`${e.user_id},${e.timestamp},${e.event},${e.plan}`);
  });
  return t.file('bookings.csv', `${rows.join('\n')}\n`);
}

async function printed(args: string[]): Promise<string> {
  const out = join(t.dir, `sql-${Math.random().toString(36).slice(2)}`);
  const io = bufferIo();
  expect(await main(['sql', ...args, '--out', out, '--quiet'], io), io.err).toBe(0);
  return out;
}

/**
 * The waist read back, with what a warehouse build words differently set aside: the engine's name,
 * the coverage's last digits (the database writes the double), the attributes other than --by
 * (the printed SQL names only that one: it cannot know a table's other columns), and the line
 * accounting (a table has no lines; the rows are compared).
 */
function comparable(w: Waist): unknown {
  const m = {
    ...w.manifest,
    engine: null,
    rows: { ...w.manifest.rows, lines: null },
    lastPeriod: { ...w.manifest.lastPeriod, coverage: Math.round(w.manifest.lastPeriod.coverage * 1e9) },
    attributes: w.manifest.attributes.filter((a) => a.name === w.manifest.by),
  };
  return JSON.parse(JSON.stringify({ manifest: m, tables: w.tables }));
}

const cases = [
  { name: 'weekly rules, --by plan', rules: () => loadRulesFile(join(import.meta.dirname, '../../rules/weekly.yaml')), args: ['--by', 'plan'], range: { by: 'plan' } },
  {
    name: 'weekly rules with split states (sub-state names of our own), --by plan',
    rules: () => ({ ...loadRulesFile(join(import.meta.dirname, '../../rules/weekly.yaml')), splits: [{ state: 'engaged', atLeast: 3, names: ['steady', 'keen'] as [string, string] }, { state: 'returned', atLeast: 2, names: ['back_light', 'back_busy'] as [string, string] }] }),
    args: ['--by', 'plan'],
    range: { by: 'plan' },
  },
  { name: 'monthly rules', rules: () => loadRulesFile(join(import.meta.dirname, '../../rules/monthly.yaml')), args: [], range: {} },
  {
    name: 'daily rules in Europe/Berlin, key events, warm-up, --from/--to',
    rules: () => parseRules('grain: day\ntimezone: Europe/Berlin\nlapseLimit: 5\nwarmup: 2\nactivity: { keyEvents: [booking_made, checked_in], minEvents: 1 }\ntenureBands: [0, 1, 7]\n'),
    args: ['--from', '2026-06-01', '--to', '2026-09-30'],
    range: { from: '2026-06-01', to: '2026-09-30' },
  },
];

describe('tidemark sql, run on DuckDB', () => {
  for (const c of cases) {
    it(`gives the memory engine's waist: ${c.name}`, async () => {
      const log = sampleLog();
      const rules = c.rules();
      const rulesFile = t.file(`rules-${Math.random().toString(36).slice(2)}.yaml`, JSON.stringify(rules));
      const dir = await printed(['--dialect', 'duckdb', '--events-table', 'events', '--rules', rulesFile, ...c.args]);
      const db = await DuckDBInstance.create(':memory:');
      const con = await db.connect();
      try {
        await con.run(`CREATE TABLE events AS SELECT * FROM read_csv('${log}', all_varchar = true, header = true)`);
        for (const name of Object.keys(WAIST_TABLES) as TableName[]) {
          const sql = readFileSync(join(dir, QUERY_FILES[name].sql), 'utf8').trimEnd().replace(/;$/, '');
          await con.run(`COPY (${sql}) TO '${join(dir, QUERY_FILES[name].csv)}' (HEADER, DELIMITER ',')`);
        }
        const manifest = (await con.runAndReadAll(readFileSync(join(dir, 'manifest.sql'), 'utf8'))).getRows()[0][0] as string;
        writeFileSync(join(dir, 'manifest.json'), manifest);
      } finally {
        con.closeSync();
        db.closeSync();
      }
      const want = await memoryWaist(log, rules, c.range);
      expect(comparable(readWaist(dir))).toEqual(comparable(want));
    }, 120_000); // a bound on a hang on a busy machine
  }

  it('writes a manifest.json whose data fields are null, which the reader refuses naming the field', async () => {
    const dir = await printed(['--dialect', 'duckdb', '--events-table', 'events']);
    const m = JSON.parse(readFileSync(join(dir, 'manifest.json'), 'utf8'));
    expect(m.periods).toBeNull();
    expect(m.rules.grain).toBe('week');
    const e = await expectTidemarkError(() => readWaist(dir), 'INPUT_INVALID');
    expect(e.oneLine()).toMatch(/manifest\.json.*key periods/);
  });
});

describe('tidemark sql, run on PostgreSQL', () => {
  let up = false;
  beforeAll(async () => {
    up = await pgReachable();
    if (!up && process.env.CI === 'true') throw new Error('no PostgreSQL server reachable (PGHOST…): .ci/run starts one');
    if (!up) console.warn('notice: no PostgreSQL server reachable (PGHOST…); the printed PostgreSQL SQL is not run');
  });
  for (const c of cases) {
    it(`gives the memory engine's waist: ${c.name}`, async (ctx) => {
      if (!up) return ctx.skip();
      const log = sampleLog();
      const rules = c.rules();
      const rulesFile = t.file(`rules-${Math.random().toString(36).slice(2)}.yaml`, JSON.stringify(rules));
      const table = `tm_printed_${process.pid}_${Math.random().toString(36).slice(2, 8)}`;
      const dir = await printed(['--dialect', 'postgres', '--events-table', table, '--rules', rulesFile, ...c.args]);
      const client = new pg.Client({ connectionString: pgUrl() });
      await client.connect();
      try {
        const lines = readFileSync(log, 'utf8').trim().split('\n').slice(1).map((l) => l.split(','));
        await client.query(`CREATE TABLE ${table} (user_id TEXT, "timestamp" TEXT, event TEXT, plan TEXT)`);
        for (let i = 0; i < lines.length; i += 1000) {
          const chunk = lines.slice(i, i + 1000);
          await client.query(`INSERT INTO ${table} VALUES ${chunk.map((_, j) => `($${4 * j + 1}, $${4 * j + 2}, $${4 * j + 3}, $${4 * j + 4})`).join(', ')}`, chunk.flat());
        }
        for (const name of Object.keys(WAIST_TABLES) as TableName[]) {
          const res = await client.query(readFileSync(join(dir, QUERY_FILES[name].sql), 'utf8'));
          const cols = WAIST_TABLES[name].columns;
          writeFileSync(join(dir, QUERY_FILES[name].csv), waistCsv(cols, res.rows.map((r) => cols.map((k) => r[k]))));
        }
        const res = await client.query(readFileSync(join(dir, 'manifest.sql'), 'utf8'));
        writeFileSync(join(dir, 'manifest.json'), res.rows[0].manifest);
      } finally {
        await client.query(`DROP TABLE IF EXISTS ${table}`);
        await client.end();
      }
      const want = await memoryWaist(log, rules, c.range);
      expect(comparable(readWaist(dir))).toEqual(comparable(want));
    }, 300_000);
  }
});
