/**
 * The DuckDB engine: the rules compiled to SQL (src/sql/compile.ts) run on embedded DuckDB over
 * event files or a database table, out of core. Only the waist tables and a few counts come back to
 * JavaScript; never an event row.
 *
 * The per-row stage (parsing, each row's fate) and the per-active-period stage (tm_life; without
 * --by its counts, tm_lifepass) are stored as temporary tables once; every table and count is then a
 * small query on them.
 */
import { performance } from 'node:perf_hooks';
import { createRequire } from 'node:module';
import type { DuckDBConnection } from '@duckdb/node-api';
import { TidemarkError, showValue } from '../../errors.js';
import { optionKey } from '../../periods/range.js';
import { periodLabel, type PeriodScheme } from '../../periods/calendar.js';
import type { Rules } from '../../rules/schema.js';
import { compile, FULL_PARSE_REASON, type Compiled } from '../../sql/compile.js';
import { DIALECT } from '../../sql/dialects.js';
import { BLANK_REASON, manifestOf, waistOf, type SqlFacts, type TableRows } from '../../sql/facts.js';
import { withCtes } from '../../sql/query.js';
import { WAIST_TABLES, type TableName } from '../../waist/tables.js';
import type { Waist } from '../../waist/types.js';
import type { RangeOptions } from '../types.js';
import { fileFormat, prepareSource, type ColumnType, type DuckdbInput } from './source.js';

export type { DuckdbInput } from './source.js';

// DuckDB's Node package is CommonJS: required, not imported. An ESM import of it makes Node scan the
// source of each of its modules for export names (cjs-module-lexer), about 0.1–0.2 s of every run.
const { DuckDBInstance } = createRequire(import.meta.url)('@duckdb/node-api') as typeof import('@duckdb/node-api');

/** Limits of the embedded database. */
export interface DuckdbOptions {
  /** DuckDB's memory limit, e.g. '1GB' (default: DuckDB's, 80% of the machine's memory). */
  memoryLimit?: string;
  /** Worker threads (default: DuckDB's, one a core). */
  threads?: number;
  /** Where DuckDB spills what does not fit in memory (default: DuckDB's, beside the database or in the temp folder). */
  tempDirectory?: string;
  /**
   * Read tm_life once, into the small counts of `tm_lifepass`, rather than storing it for a dozen
   * queries (compile.ts, CompileInput.lifePass; without --by). Default true; false stores tm_life
   * (the tests compare the two).
   */
  lifePass?: boolean;
  /** Called after each stage with its name and wall seconds (for the benchmark). */
  onStage?(stage: string, seconds: number): void;
}

/** Rows of a query as objects, BIGINT and HUGEINT as numbers. */
async function rowsOf(c: DuckDBConnection, sql: string): Promise<Record<string, string | number | null>[]> {
  const reader = await c.runAndReadAll(sql);
  return reader.getRowObjectsJS().map((r) => {
    const o: Record<string, string | number | null> = {};
    for (const [k, v] of Object.entries(r)) o[k] = typeof v === 'bigint' ? Number(v) : (v as string | number | null);
    return o;
  });
}

/**
 * Run the rules on embedded DuckDB and return the waist (full form: an incomplete last period kept;
 * src/waist/derive.ts leaves it out for the analyses).
 * @throws TidemarkError as the memory engine: FILE_NOT_FOUND, EVENTS_FORMAT, EVENTS_BAD_ROW (a bad row
 *   and no skipBadRows: the same message, naming file, line and column), EVENTS_EMPTY, RANGE_INVALID,
 *   INPUT_INVALID (--by)
 */
export async function runDuckdb(input: DuckdbInput, rules: Rules, range: RangeOptions = {}, options: DuckdbOptions = {}): Promise<Waist> {
  const scheme: PeriodScheme = { grain: rules.grain, weekStart: rules.weekStart };
  const fromKey = optionKey(range.from, scheme, 'from');
  const toKey = optionKey(range.to, scheme, 'to');
  if (fromKey !== undefined && toKey !== undefined && fromKey > toKey) {
    throw new TidemarkError('RANGE_INVALID', `the range starts in ${periodLabel(fromKey, scheme)}, after its end ${periodLabel(toKey, scheme)}`, { key: 'from' }, 'Put the earlier date first');
  }
  const instance = await DuckDBInstance.create(':memory:');
  const c = await instance.connect();
  try {
    await c.run("SET TimeZone = 'UTC'");
    await c.run('SET preserve_insertion_order = false');
    if (options.memoryLimit) await c.run(`SET memory_limit = '${options.memoryLimit.replace(/'/g, '')}'`);
    if (options.threads) await c.run(`SET threads = ${Math.max(1, Math.floor(options.threads))}`);
    if (options.tempDirectory) await c.run(`SET temp_directory = '${options.tempDirectory.replace(/'/g, "''")}'`);
    const prepared = await prepareSource(input, rules, {
      exec: async (sql) => void (await c.run(sql)),
      describe: async (rel): Promise<ColumnType[]> =>
        (await rowsOf(c, `DESCRIBE SELECT * FROM ${rel}`)).map((r) => ({ name: String(r.column_name), type: String(r.column_type) })),
    }, range.by);
    const compileWith = (fastTimestamps: boolean) => compile({ dialect: DIALECT.duckdb, rules, source: prepared.source, range: { fromKey, toKey, warmup: range.warmup }, fastTimestamps, lifePass: options.lifePass ?? true });
    let compiled = compileWith(prepared.fastTimestamps);
    let t0 = performance.now();
    const stage = (name: string) => {
      const t = performance.now();
      options.onStage?.(name, (t - t0) / 1000);
      t0 = t;
    };
    const stored = new Set<string>();
    const store = async (name: string, select = `SELECT * FROM ${name}`) => {
      await c.run(`CREATE TEMP TABLE ${name} AS ${withCtes(compiled.ctes, select, stored)}`);
      stored.add(name);
      if (name !== compiled.rowPass.name) stage(name);
    };
    // the rows are read once, into small aggregates (compile.ts, rowPass), and never stored
    const rowPass = async (stageName: string) => {
      await store(compiled.rowPass.name, compiled.rowPass.select);
      // its parts as views: a filtered read of the stored aggregate costs less than a copy
      for (const [name, select] of Object.entries(compiled.rowPass.split)) {
        await c.run(`CREATE TEMP VIEW ${name} AS ${select}`);
        stored.add(name);
      }
      stage(stageName);
    };
    await rowPass('tm_rowpass');
    if (compiled.fastTimestamps) {
      // the sample of the files showed only the fast timestamp form: a row in any other form sends
      // the whole pass to the full steps, so every row is parsed as the memory engine parses it
      const [odd] = await rowsOf(c, `SELECT count(*) AS n FROM tm_fates WHERE reason = '${FULL_PARSE_REASON}'`);
      if (Number(odd.n) > 0) {
        for (const name of Object.keys(compiled.rowPass.split)) await c.run(`DROP VIEW ${name}`);
        await c.run(`DROP TABLE ${compiled.rowPass.name}`);
        for (const t of prepared.rejects) await c.run(`DROP TABLE IF EXISTS ${t}; DROP TABLE IF EXISTS ${t}_scan`);
        stored.clear();
        compiled = compileWith(false);
        await rowPass('tm_rowpass (full parse)');
      }
    }
    // the small steps that many queries read are stored too: computed once, not once a query
    for (const name of [...(prepared.source.has.by ? ['tm_uk', 'tm_attr'] : []), 'tm_bounds', compiled.lifePass ? 'tm_lifepass' : 'tm_life', 'tm_periods', 'tm_span_counts']) await store(name);
    const query = (final: string) => rowsOf(c, withCtes(compiled.ctes, final, stored));
    const readerRejects = await countRejects(c, prepared.rejects, input);
    const accounting = (await query(compiled.facts.accounting)).map((r) => ({ status: String(r.status), reason: r.reason === null ? null : String(r.reason), n: Number(r.n) }));
    const skip = input.skipBadRows ?? false;
    const bad = Object.values(readerRejects).reduce((a, b) => a + b, 0) + accounting.filter((a) => a.status === 'rejected' && a.reason !== BLANK_REASON).reduce((a, b) => a + b.n, 0);
    if (bad > 0 && !skip) await throwFirstBadRow(input, rules, toKey, readerRejects, accounting);
    const facts = await factsOf(query, compiled, accounting, readerRejects, prepared.source.attributes.length);
    // one header line a CSV file, as the memory engine counts them
    facts.headerLines = 'db' in input ? 0 : input.files.filter((f) => fileFormat(f, input.format) === 'csv').length;
    const periods = facts.range.used_rows > 0 ? (await query(compiled.facts.periods)).map((r) => String(r.label)) : [];
    const manifest = manifestOf(facts, periods, {
      rules,
      engine: 'duckdb',
      attributes: prepared.source.attributes,
      by: range.by,
      allowPerPersonColumn: range.allowPerPersonColumn,
      warmup: range.warmup,
      file: prepared.files.join(', '),
    });
    const tables = {} as Record<TableName, TableRows>;
    stage('facts');
    // without --by the segment tables are empty by construction (compile.ts): not asked for
    const noRows = new Set<TableName>(prepared.source.has.by ? [] : ['segmentStateCounts', 'segmentTransitions']);
    for (const name of Object.keys(WAIST_TABLES) as TableName[]) {
      tables[name] = noRows.has(name) ? [] : (await query(compiled.tables[name])) as TableRows;
      stage(name);
    }
    return waistOf(manifest, tables);
  } catch (e) {
    if (e instanceof TidemarkError) throw e;
    // DuckDB's own refusal (a file it cannot read, a type it cannot cast): one line, naming the source
    const where = 'db' in input ? input.db : input.files.join(', ');
    const text = String((e as Error).message).split('\n')[0];
    if (/out of memory/i.test(text)) {
      throw new TidemarkError('INPUT_INVALID', `DuckDB ran out of its memory limit (${showValue(options.memoryLimit ?? 'its default', 20)}): ${text}`, { file: where }, 'Narrow the range with --from/--to, or run the library with a larger memoryLimit');
    }
    throw new TidemarkError('FILE_UNREADABLE', `DuckDB could not read the events: ${text}`, { file: where }, 'Check the files, or run the memory engine to find the row');
  } finally {
    c.closeSync();
    instance.closeSync();
  }
}

async function factsOf(query: (sql: string) => Promise<Record<string, string | number | null>[]>, compiled: Compiled, accounting: SqlFacts['accounting'], readerRejects: Record<string, number>, attributes: number): Promise<SqlFacts> {
  const [range] = await query(compiled.facts.range);
  const [last] = await query(compiled.facts.lastPeriod);
  const [users] = await query(compiled.facts.users);
  const [attrs] = attributes > 0 ? await query(compiled.facts.attributes) : [{}];
  const [uniq] = await query(compiled.facts.uniqueness);
  const num = (v: unknown) => (v === null || v === undefined ? null : Number(v));
  return {
    range: { start_key: num(range.start_key), end_key: num(range.end_key), out_key: num(range.out_key), flow_key: num(range.flow_key), used_rows: Number(range.used_rows) },
    accounting,
    events: (await query(compiled.facts.events)).map((r) => ({ event: String(r.event), n: Number(r.n) })),
    lastPeriod: { n: Number(last.n), max_wall: num(last.max_wall) },
    users: Number(users.users),
    attributeValues: Array.from({ length: attributes }, (_, i) => Number((attrs as Record<string, unknown>)[`values_${i}`])),
    uniqueness: { with_value: Number(uniq.with_value), with_own: Number(uniq.with_own) },
    readerRejects,
  };
}

/** Rows DuckDB's reader refused, by the memory engine's reason where one matches (one count a row). */
async function countRejects(c: DuckDBConnection, tables: string[], input: DuckdbInput): Promise<Record<string, number>> {
  const out: Record<string, number> = {};
  for (const t of tables) {
    const i = Number(t.slice('tm_rejects_'.length));
    const ndjson = !('db' in input) && fileFormat(input.files[i], input.format) === 'ndjson';
    let rows: Record<string, string | number | null>[];
    try {
      rows = await rowsOf(c, `SELECT error_type, count(*) AS n FROM (SELECT scan_id, file_id, line, min(CAST(error_type AS VARCHAR)) AS error_type FROM ${t} GROUP BY scan_id, file_id, line) x GROUP BY error_type`);
    } catch {
      continue; // no row was refused: DuckDB made no table
    }
    for (const r of rows) {
      const type = String(r.error_type);
      const reason = ndjson ? 'not valid JSON'
        : type === 'TOO MANY COLUMNS' || type === 'MISSING COLUMNS' ? 'wrong number of fields'
          : type === 'UNQUOTED VALUE' ? 'unclosed quote'
            : `unreadable row (${type.toLowerCase()})`;
      out[reason] = (out[reason] ?? 0) + Number(r.n);
    }
  }
  return out;
}

/**
 * Stop at the first bad row as the memory engine does. For plain CSV and NDJSON files the memory
 * reader reads up to that row and gives its exact message (file, line, column, value); otherwise
 * the message gives the counts by reason and one bad value.
 */
async function throwFirstBadRow(input: DuckdbInput, rules: Rules, toKey: number | undefined,
  readerRejects: Record<string, number>, accounting: SqlFacts['accounting']): Promise<never> {
  if (!('db' in input) && input.files.every((f) => !f.toLowerCase().endsWith('.gz') && fileFormat(f, input.format) !== 'parquet')) {
    // the memory engine's reader, loaded only here: a run with no bad row never needs it
    const { readEvents } = await import('../../ingest/read.js');
    await readEvents(input.files, { rules, format: input.format as 'csv' | 'ndjson' | undefined, skipBadRows: false, toKey, delimiter: input.delimiter });
  }
  const counts: Record<string, number> = { ...readerRejects };
  for (const a of accounting) if (a.status === 'rejected' && a.reason !== BLANK_REASON) counts[a.reason as string] = (counts[a.reason as string] ?? 0) + a.n;
  const list = Object.entries(counts).map(([k, n]) => `${k} ${n.toLocaleString('en-US')}`).join(', ');
  const files = 'db' in input ? input.db : input.files.join(', ');
  throw new TidemarkError('EVENTS_BAD_ROW', `${bad(counts)} bad row${bad(counts) === 1 ? '' : 's'} (${list})`, { file: files }, 'Fix the rows, or pass --skip-bad-rows to skip and count such rows');
}

function bad(counts: Record<string, number>): number {
  return Object.values(counts).reduce((a, b) => a + b, 0);
}
