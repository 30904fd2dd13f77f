/**
 * The SQL engines under test, each as one function from event files to a waist, and the memory
 * engine's waist they are compared with. PostgreSQL takes part when a server is
 * reachable (PGHOST…, as .ci/run starts one); outside CI it is skipped with a notice, and with
 * CI=true a missing server fails.
 */
import { readFileSync } from 'node:fs';
import fc from 'fast-check';
import pg from 'pg';
import Papa from 'papaparse';
import { createEngine } from '../../src/engines/index.js';
import { runDuckdb } from '../../src/engines/duckdb/run.js';
import { runPostgres } from '../../src/engines/postgres/run.js';
import { filesSource, type RangeOptions } from '../../src/engines/types.js';
import type { Rules } from '../../src/rules/schema.js';
import type { Waist } from '../../src/waist/types.js';

/** Time zones of the random rules: daylight-saving changes both ways, a half-hour offset (Kolkata), a half-hour shift (Lord Howe). */
export const RULE_ZONES = ['UTC', 'America/Chicago', 'Europe/Berlin', 'Pacific/Auckland', 'Asia/Kolkata', 'Australia/Lord_Howe'];
export const WEEKDAYS = ['monday', 'tuesday', 'wednesday', 'thursday', 'friday', 'saturday', 'sunday'] as const;
export const EVENTS = ['booking', 'tool_reservation', 'login', 'cancel'];

/**
 * The rules variants the SQL engines are compared over, as fields for `fc.record`: grains, week
 * starts, zones, key events, minEvents, lapse limits, warm-up, tenure bands and split states (an
 * active state split by key events in the period, at `splitAt`).
 */
export function ruleVariantArbs() {
  return {
    grain: fc.constantFrom('day' as const, 'week' as const, 'month' as const),
    weekStart: fc.constantFrom(...WEEKDAYS),
    timezone: fc.constantFrom(...RULE_ZONES),
    keyEvents: fc.option(fc.subarray(EVENTS, { minLength: 1 }), { nil: undefined }),
    minEvents: fc.integer({ min: 1, max: 3 }),
    lapseLimit: fc.integer({ min: 0, max: 3 }),
    warmup: fc.integer({ min: 0, max: 2 }),
    bands: fc.uniqueArray(fc.integer({ min: 1, max: 8 }), { maxLength: 3 }),
    splits: fc.option(fc.subarray(['engaged', 'returned'], { minLength: 1 }), { nil: undefined }),
    splitAt: fc.integer({ min: 1, max: 3 }),
  };
}

export type EngineRun = (file: string, rules: Rules, range: RangeOptions, skipBadRows: boolean) => Promise<Waist>;

/** The waist as plain data, without the engine's name (the one field that must differ). */
export function comparable(w: Waist): unknown {
  return JSON.parse(JSON.stringify({ ...w, manifest: { ...w.manifest, engine: null } }));
}

/** As {@link comparable}, without the line accounting: for the same events in sources with and without lines (a CSV file and a table). */
export function withoutLines(w: unknown): unknown {
  const c = structuredClone(w) as { manifest: { rows: { lines?: unknown } } };
  delete c.manifest.rows.lines;
  return c;
}

export async function memoryWaist(file: string, rules: Rules, range: RangeOptions = {}, skipBadRows = false): Promise<Waist> {
  return (await createEngine('memory').run(filesSource([file], { skipBadRows }), rules, range)).waist;
}

export const duckdbRun: EngineRun = (file, rules, range, skipBadRows) => runDuckdb({ files: [file], skipBadRows }, rules, range);

/** Connection settings from the environment (libpq's PGHOST, PGPORT, PGUSER, PGDATABASE). */
export function pgUrl(): string | undefined {
  if (process.env.TIDEMARK_PG_URL) return process.env.TIDEMARK_PG_URL;
  if (!process.env.PGHOST) return undefined;
  const host = process.env.PGHOST, port = process.env.PGPORT ?? '5432', user = process.env.PGUSER ?? 'postgres', db = process.env.PGDATABASE ?? 'postgres';
  return `postgres://${encodeURIComponent(user)}@${host}:${port}/${encodeURIComponent(db)}`;
}

/** Whether a PostgreSQL server answers at {@link pgUrl}. */
export async function pgReachable(): Promise<boolean> {
  const url = pgUrl();
  if (!url) return false;
  const client = new pg.Client({ connectionString: url, connectionTimeoutMillis: 3000 });
  try {
    await client.connect();
    await client.query('SELECT 1');
    return true;
  } catch {
    return false;
  } finally {
    await client.end().catch(() => {});
  }
}

let tableNo = 0;
/**
 * Load a CSV of events into a fresh table of text columns (the way an analyst's table holds
 * timestamps as text), then run the PostgreSQL engine on it.
 */
export const postgresRun: EngineRun = async (file, rules, range, skipBadRows) => {
  const url = pgUrl() as string;
  const parsed = Papa.parse<string[]>(readFileSync(file, 'utf8').replace(/^\uFEFF/, ''), { skipEmptyLines: true });
  const [header, ...rows] = parsed.data;
  const table = `tm_events_${process.pid}_${tableNo++}`;
  const client = new pg.Client({ connectionString: url });
  await client.connect();
  try {
    await client.query(`CREATE TABLE ${table} (${header.map((h) => `"${h.replace(/"/g, '""')}" TEXT`).join(', ')})`);
    for (let i = 0; i < rows.length; i += 500) {
      const chunk = rows.slice(i, i + 500).filter((r) => r.length === header.length);
      if (chunk.length === 0) continue;
      const values = chunk.map((r, j) => `(${r.map((_, k) => `$${j * header.length + k + 1}`).join(', ')})`).join(', ');
      await client.query(`INSERT INTO ${table} VALUES ${values}`, chunk.flat());
    }
  } finally {
    await client.end();
  }
  try {
    return await runPostgres({ url, table, skipBadRows }, rules, range);
  } finally {
    const c2 = new pg.Client({ connectionString: url });
    await c2.connect();
    await c2.query(`DROP TABLE IF EXISTS ${table}`);
    await c2.end();
  }
};
