/**
 * The DuckDB engine's sources: Parquet (text columns, and typed ones: a timestamp with a time zone is
 * an instant, one without is local time, a number epoch time), NDJSON and gzip, several files with
 * different columns, and a table in a DuckDB database file give the waist the memory engine gives on
 * the same events as CSV (the reference semantics; the files are written from one seeded log).
 */
import { join } from 'node:path';
import { readFileSync, truncateSync, writeFileSync } from 'node:fs';
import { gzipSync } from 'node:zlib';
import { DuckDBInstance } from '@duckdb/node-api';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { runDuckdb } from '../../src/engines/duckdb/run.js';
import { duckdbMemoryLimit } from '../../src/engines/duckdb/index.js';
import { parseRules } from '../../src/rules/load.js';
import { createEngine } from '../../src/engines/index.js';
import { filesSource } from '../../src/engines/types.js';
import { mulberry32 } from '../stats/prng.js';
import { tempDir } from '../core/helpers.js';
import { comparable, memoryWaist, withoutLines } from './sqlEngines.js';

const t = tempDir();
afterAll(() => t.done());

const rules = parseRules('grain: week\ntimezone: America/Chicago\nlapseLimit: 1\nactivity: { minEvents: 1 }\n');
const START = Date.UTC(2026, 1, 2); // crosses the 2026-03-08 change of America/Chicago (IANA tz database)
let csvFile = '';
let rows: { user: string; ms: number; event: string; plan: string }[] = [];

beforeAll(() => {
  const rng = mulberry32(2026);
  rows = Array.from({ length: 600 }, () => ({
    user: `m${Math.floor(rng() * 40)}`,
    ms: START + Math.floor(rng() * 90 * 86_400_000),
    event: ['booking_made', 'checked_in', 'tool_reserved'][Math.floor(rng() * 3)],
    plan: ['hobby', 'studio', 'pro', ''][Math.floor(rng() * 4)],
  }));
  csvFile = t.file('log.csv', ['user_id,timestamp,event,plan', ...rows.map((r) => `${r.user},${new Date(r.ms).toISOString()},${r.event},${r.plan}`)].join('\n') + '\n');
});

async function withDuckdb<T>(file: string, fn: (run: (sql: string) => Promise<void>) => Promise<T>): Promise<T> {
  const db = await DuckDBInstance.create(file);
  const con = await db.connect();
  try {
    return await fn(async (sql) => void (await con.run(sql)));
  } finally {
    con.closeSync();
    db.closeSync();
  }
}

describe('DuckDB sources give the memory engine\'s waist', () => {
  it('Parquet with text columns, and with a TIMESTAMP WITH TIME ZONE column', async () => {
    const want = comparable(await memoryWaist(csvFile, rules, { by: 'plan' }));
    const text = join(t.dir, 'text.parquet');
    const typed = join(t.dir, 'typed.parquet');
    await withDuckdb(':memory:', async (run) => {
      await run("SET TimeZone = 'UTC'");
      await run(`COPY (SELECT * FROM read_csv('${csvFile}', all_varchar = true, header = true)) TO '${text}' (FORMAT parquet)`);
      await run(`COPY (SELECT user_id, CAST("timestamp" AS TIMESTAMPTZ) AS "timestamp", event, plan FROM read_csv('${csvFile}', all_varchar = true, header = true)) TO '${typed}' (FORMAT parquet)`);
    });
    // the parquet files hold NULL where the CSV has an empty plan: both are "no value"
    for (const f of [text, typed]) {
      // the memory engine reads Parquet too: the same file, the same waist (lines included: one a row)
      expect(comparable(await runDuckdb({ files: [f] }, rules, { by: 'plan' }))).toEqual(comparable(await memoryWaist(f, rules, { by: 'plan' })));
      // and the counts of the CSV the file was written from (a Parquet file has no header line)
      expect(withoutLines(comparable(await runDuckdb({ files: [f] }, rules, { by: 'plan' })))).toEqual(withoutLines(want));
    }
  }, 60_000);

  it('Parquet with local timestamps (no zone) and with epoch milliseconds', async () => {
    const local = t.file('local.csv', ['user_id,timestamp,event', ...rows.map((r) => `${r.user},${localText(r.ms)},${r.event}`)].join('\n') + '\n');
    const want = comparable(await memoryWaist(local, rules));
    const localPq = join(t.dir, 'local.parquet');
    const epochPq = join(t.dir, 'epoch.parquet');
    await withDuckdb(':memory:', async (run) => {
      await run(`COPY (SELECT user_id, CAST("timestamp" AS TIMESTAMP) AS "timestamp", event FROM read_csv('${local}', all_varchar = true, header = true)) TO '${localPq}' (FORMAT parquet)`);
      await run(`COPY (SELECT * FROM (VALUES ${rows.map((r) => `('${r.user}', ${r.ms}, '${r.event}')`).join(', ')}) v(user_id, "timestamp", event)) TO '${epochPq}' (FORMAT parquet)`);
    });
    expect(withoutLines(comparable(await runDuckdb({ files: [localPq] }, rules)))).toEqual(withoutLines(want));
    expect(comparable(await runDuckdb({ files: [localPq] }, rules))).toEqual(comparable(await memoryWaist(localPq, rules)));
    const epochCsv = t.file('epoch.csv', ['user_id,timestamp,event', ...rows.map((r) => `${r.user},${r.ms},${r.event}`)].join('\n') + '\n');
    expect(withoutLines(comparable(await runDuckdb({ files: [epochPq] }, rules)))).toEqual(withoutLines(comparable(await memoryWaist(epochCsv, rules))));
    expect(comparable(await runDuckdb({ files: [epochPq] }, rules))).toEqual(comparable(await memoryWaist(epochPq, rules)));
  }, 60_000);

  it('NDJSON, gzip-compressed NDJSON and CSV, and two files with different columns', async () => {
    const nd = t.file('log.ndjson', rows.map((r) => JSON.stringify({ user_id: r.user, timestamp: new Date(r.ms).toISOString(), event: r.event, plan: r.plan })).join('\n') + '\n');
    const want = comparable(await memoryWaist(nd, rules, { by: 'plan' }));
    const ndgz = join(t.dir, 'log.ndjson.gz');
    writeFileSync(ndgz, gzipSync(readFileSync(nd)));
    expect(comparable(await runDuckdb({ files: [nd] }, rules, { by: 'plan' }))).toEqual(want);
    expect(comparable(await runDuckdb({ files: [ndgz] }, rules, { by: 'plan' }))).toEqual(want);
    const csvgz = join(t.dir, 'log.csv.gz');
    writeFileSync(csvgz, gzipSync(readFileSync(csvFile)));
    expect(comparable(await runDuckdb({ files: [csvgz] }, rules, { by: 'plan' }))).toEqual(comparable(await memoryWaist(csvFile, rules, { by: 'plan' })));
    // the first half with a channel column first, the second without plan: columns are the union, in order of first appearance
    const a = t.file('a.csv', ['channel,user_id,timestamp,event,plan', ...rows.slice(0, 300).map((r, i) => `c${i % 3},${r.user},${new Date(r.ms).toISOString()},${r.event},${r.plan}`)].join('\n') + '\n');
    const b = t.file('b.csv', ['timestamp,user_id,event', ...rows.slice(300).map((r) => `${new Date(r.ms).toISOString()},${r.user},${r.event}`)].join('\n') + '\n');
    const both = async (by: string) => comparable((await createEngine('memory').run(filesSource([a, b]), rules, { by })).waist);
    expect(comparable(await runDuckdb({ files: [a, b] }, rules, { by: 'channel' }))).toEqual(await both('channel'));
  }, 60_000);

  it('a table in a DuckDB database file', async () => {
    const dbFile = join(t.dir, 'events.duckdb');
    await withDuckdb(dbFile, async (run) => {
      await run(`CREATE TABLE bookings AS SELECT * FROM read_csv('${csvFile}', all_varchar = true, header = true)`);
    });
    // a table has no lines: the rows and every count equal the CSV's
    const got = comparable(await runDuckdb({ db: dbFile, table: 'bookings' }, rules, { by: 'plan' }));
    expect(withoutLines(got)).toEqual(withoutLines(comparable(await memoryWaist(csvFile, rules, { by: 'plan' }))));
    expect((got as { manifest: { rows: { lines: unknown } } }).manifest.rows.lines).toEqual({ read: 600, header: 0, blank: 0, records: 600, rejected: 0 });
  }, 60_000);
});

describe('the longest line the duckdb engine reads is the memory engine\'s (1 MiB, ingest/limits.ts)', () => {
  it('a line just under 1 MiB is read; one over it stops the run with the memory reader\'s message, or is a counted bad row with skipBadRows', async () => {
    const head = rows.slice(0, 50).map((r) => `${r.user},${new Date(r.ms).toISOString()},${r.event},${r.plan}`);
    const tail = rows.slice(50, 100).map((r) => `${r.user},${new Date(r.ms).toISOString()},${r.event},${r.plan}`);
    const prefix = 'm1,2026-03-02T10:00:00Z,booking_made,';
    // the longest record the memory reader takes: MAX_RECORD_BYTES bytes without the line break
    const fits = t.file('fits.csv', ['user_id,timestamp,event,plan', ...head, prefix + 'x'.repeat((1 << 20) - prefix.length), ...tail].join('\n') + '\n');
    expect(comparable(await runDuckdb({ files: [fits] }, rules))).toEqual(comparable(await memoryWaist(fits, rules)));
    const over = t.file('over.csv', ['user_id,timestamp,event,plan', ...head, prefix + 'x'.repeat(1_500_000), ...tail].join('\n') + '\n');
    await expect(memoryWaist(over, rules)).rejects.toThrow(/a line longer than 1 MiB/);
    await expect(runDuckdb({ files: [over] }, rules)).rejects.toThrow(/a line longer than 1 MiB/);
    const skipped = await runDuckdb({ files: [over], skipBadRows: true }, rules) as unknown as { manifest: { rows: { lines: { read: number; rejected: number } } } };
    expect(skipped.manifest.rows.lines.read).toBe(102);
    expect(skipped.manifest.rows.lines.rejected).toBe(1);
  }, 60_000);
});

/** Wall-clock text in America/Chicago without an offset (local time, as the rules' zone reads it). */
function localText(ms: number): string {
  const parts = new Intl.DateTimeFormat('en-CA', { timeZone: 'America/Chicago', hourCycle: 'h23', year: 'numeric', month: '2-digit', day: '2-digit', hour: '2-digit', minute: '2-digit', second: '2-digit' }).formatToParts(new Date(ms));
  const p = Object.fromEntries(parts.map((x) => [x.type, x.value]));
  return `${p.year}-${p.month}-${p.day}T${p.hour}:${p.minute}:${p.second}`;
}

describe('the memory limit of the duckdb engine of the commands', () => {
  it('is 1 GB for up to 1 GB of event files, 2 GB beyond and for a database table (README, "Performance")', () => {
    // a sparse file: its size is set, nothing is written or read
    const big = join(t.dir, 'big.parquet');
    writeFileSync(big, '');
    truncateSync(big, 1e9);
    expect(duckdbMemoryLimit(filesSource([big]))).toBe('1GB');
    truncateSync(big, 1e9 + 1);
    expect(duckdbMemoryLimit(filesSource([big]))).toBe('2GB');
    expect(duckdbMemoryLimit(filesSource([csvFile]))).toBe('1GB');
    expect(duckdbMemoryLimit({ kind: 'table', db: 'x.duckdb', table: 'bookings' })).toBe('2GB');
  });
});
