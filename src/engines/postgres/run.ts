/**
 * The PostgreSQL engine: the rules compiled to SQL (src/sql/compile.ts, dialect postgres) run on a
 * live server, over a table or view (`--table`) or a query (`--query FILE`). Only the waist tables
 * and a few counts come back; never an event row. The per-row and per-active-period stages are
 * stored as temporary tables of the session, dropped when it ends.
 */
import { readFileSync } from 'node:fs';
import pg from 'pg';
import { TidemarkError, showValue } from '../../errors.js';
import { optionKey } from '../../periods/range.js';
import { periodLabel, type PeriodScheme } from '../../periods/calendar.js';
import type { Rules } from '../../rules/schema.js';
import { compile } from '../../sql/compile.js';
import { DIALECT } from '../../sql/dialects.js';
import { manifestOf, waistOf, type SqlFacts, type TableRows } from '../../sql/facts.js';
import { withCtes } from '../../sql/query.js';
import { qualified, tableSource, type ColumnKind } from '../../sql/source.js';
import { WAIST_TABLES, type TableName } from '../../waist/tables.js';
import type { Waist } from '../../waist/types.js';
import type { RangeOptions } from '../types.js';

/** Where the events are: a connection URL and a table or view, or a file holding a SELECT. */
export interface PostgresInput {
  /** postgres://user@host:port/database (libpq's PG* environment variables fill what it leaves out). */
  url: string;
  table?: string;
  /** A file holding one SELECT whose rows are the events. */
  query?: string;
  /** One SELECT whose rows are the events (in place of `query`). */
  queryText?: string;
  skipBadRows?: boolean;
}

/** PostgreSQL type OIDs (pg_type.dat) of the column kinds. */
const OID_KIND: Record<number, ColumnKind> = {
  1184: 'instant', // timestamptz
  1114: 'local', // timestamp
  1082: 'local', // date
  20: 'number', 21: 'number', 23: 'number', 700: 'number', 701: 'number', 1700: 'number', // int8, int2, int4, float4, float8, numeric
};

/** The URL with its password left out, for messages. */
function safeUrl(url: string): string {
  return url.replace(/\/\/([^:@/]*):[^@/]*@/, '//$1:…@');
}

/**
 * Run the rules on a PostgreSQL server and return the waist (full form).
 * @throws TidemarkError FILE_UNREADABLE (no connection), INPUT_INVALID (no such table, a query that
 *   fails), EVENTS_FORMAT (a mapped column missing), EVENTS_BAD_ROW (bad rows and no skipBadRows: the
 *   counts by reason), EVENTS_EMPTY, RANGE_INVALID, INPUT_INVALID (--by)
 */
export async function runPostgres(input: PostgresInput, rules: Rules, range: RangeOptions = {}): Promise<Waist> {
  const scheme: PeriodScheme = { grain: rules.grain, weekStart: rules.weekStart };
  const fromKey = optionKey(range.from, scheme, 'from');
  const toKey = optionKey(range.to, scheme, 'to');
  if (fromKey !== undefined && toKey !== undefined && fromKey > toKey) {
    throw new TidemarkError('RANGE_INVALID', `the range starts in ${periodLabel(fromKey, scheme)}, after its end ${periodLabel(toKey, scheme)}`, { key: 'from' }, 'Put the earlier date first');
  }
  if ((input.table === undefined) === (input.query === undefined && input.queryText === undefined)) {
    throw new TidemarkError('USAGE', 'give either a table or a query', { key: 'table' }, 'For example --table events, or --query events.sql');
  }
  const D = DIALECT.postgres;
  let relation: string, place: string;
  if (input.table !== undefined) {
    relation = qualified(D, input.table);
    place = input.table;
  } else {
    let text: string;
    if (input.queryText !== undefined) text = input.queryText;
    else {
      try {
        text = readFileSync(input.query as string, 'utf8');
      } catch {
        throw new TidemarkError('FILE_NOT_FOUND', 'cannot read the query file', { file: input.query }, 'Give a file holding one SELECT');
      }
    }
    relation = `(${text.trim().replace(/;\s*$/, '')}) AS tm_query`;
    place = input.query ?? 'the query';
  }
  const client = new pg.Client({ connectionString: input.url });
  try {
    await client.connect();
  } catch (e) {
    throw new TidemarkError('FILE_UNREADABLE', `cannot connect to ${showValue(safeUrl(input.url), 80)}: ${showValue((e as Error).message, 120)}`, {}, 'Check the URL given to --db and that the server is running');
  }
  const run = async (sql: string): Promise<pg.QueryResult> => {
    try {
      return await client.query(sql);
    } catch (e) {
      throw new TidemarkError('INPUT_INVALID', `the server refused a query: ${showValue((e as Error).message, 160)}`, { file: place });
    }
  };
  try {
    // the planner overestimates these queries (cross joins with one-row relations) and would spend
    // seconds compiling each with LLVM for a run of milliseconds
    await run('SET jit = off');
    const probe = await run(`SELECT * FROM ${relation} LIMIT 0`);
    const columns = probe.fields.map((f) => ({ name: f.name, kind: OID_KIND[f.dataTypeID] ?? ('text' as ColumnKind) }));
    const source = tableSource(D, relation, columns, rules, range.by, place);
    const compiled = compile({ dialect: D, rules, source, range: { fromKey, toKey, warmup: range.warmup } });
    const stored = new Set<string>();
    for (const name of ['tm_ev', ...(source.has.by ? ['tm_attr'] : []), 'tm_life']) {
      await run(`CREATE TEMP TABLE ${name} AS ${withCtes(compiled.ctes, `SELECT * FROM ${name}`, stored)}`);
      await run(`ANALYZE ${name}`);
      stored.add(name);
    }
    const query = async (final: string) => (await run(withCtes(compiled.ctes, final, stored))).rows as Record<string, string | number | null>[];
    const accounting = (await query(compiled.facts.accounting)).map((r) => ({ status: String(r.status), reason: r.reason === null ? null : String(r.reason), n: Number(r.n) }));
    const bad = accounting.filter((a) => a.status === 'rejected');
    if (bad.length > 0 && !input.skipBadRows) {
      const n = bad.reduce((a, b) => a + b.n, 0);
      throw new TidemarkError('EVENTS_BAD_ROW', `${n.toLocaleString('en-US')} bad row${n === 1 ? '' : 's'} (${bad.map((b) => `${b.reason} ${b.n.toLocaleString('en-US')}`).join(', ')})`, { file: place },
        'Fix the rows, or pass --skip-bad-rows to skip and count such rows');
    }
    const num = (v: unknown) => (v === null || v === undefined ? null : Number(v));
    const [r] = await query(compiled.facts.range);
    const [last] = await query(compiled.facts.lastPeriod);
    const [users] = await query(compiled.facts.users);
    const [attrs] = source.attributes.length > 0 ? await query(compiled.facts.attributes) : [{}];
    const [uniq] = await query(compiled.facts.uniqueness);
    const facts: SqlFacts = {
      range: { start_key: num(r.start_key), end_key: num(r.end_key), out_key: num(r.out_key), flow_key: num(r.flow_key), used_rows: Number(r.used_rows) },
      accounting,
      events: (await query(compiled.facts.events)).map((e) => ({ event: String(e.event), n: Number(e.n) })),
      lastPeriod: { n: Number(last.n), max_wall: num(last.max_wall) },
      users: Number(users.users),
      attributeValues: source.attributes.map((_, i) => Number((attrs as Record<string, unknown>)[`values_${i}`])),
      uniqueness: { with_value: Number(uniq.with_value), with_own: Number(uniq.with_own) },
    };
    const periods = facts.range.used_rows > 0 ? (await query(compiled.facts.periods)).map((p) => String(p.label)) : [];
    const manifest = manifestOf(facts, periods, { rules, engine: 'postgres', attributes: source.attributes, by: range.by, allowPerPersonColumn: range.allowPerPersonColumn, warmup: range.warmup, file: place });
    const tables = {} as Record<TableName, TableRows>;
    for (const name of Object.keys(WAIST_TABLES) as TableName[]) tables[name] = (await query(compiled.tables[name])) as TableRows;
    return waistOf(manifest, tables);
  } finally {
    await client.end().catch(() => {});
  }
}
