/**
 * From what the SQL counted to a waist: the range checks the memory engine makes, the row
 * accounting, the last period's completeness, and the manifest; then the tables, read back through
 * the waist reader (so an engine's waist passes every check a waist folder does).
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { TidemarkError } from '../errors.js';
import type { RowAccount } from '../ingest/eventLog.js';
import { checkUniqueness, uniquenessOf } from '../lifecycle/perPerson.js';
import { periodEndDay, periodLabel, periodStartDay, type PeriodScheme } from '../periods/calendar.js';
import type { Rules } from '../rules/schema.js';
import { makeManifest } from '../waist/build.js';
import { waistCsv } from '../waist/csv.js';
import type { WaistManifest } from '../waist/manifest.js';
import { readWaist } from '../waist/read.js';
import { WAIST_TABLES, type TableName } from '../waist/tables.js';
import type { Waist } from '../waist/types.js';
import { EVENT_NAMES_KEPT } from './compile.js';

const DAY = 86_400_000;

/** A reader's mark for a blank line in `reason`: counted as a blank line, not a row. */
export const BLANK_REASON = '(blank line)';

/** The facts an engine fetched with the queries of `Compiled.facts`, numbers as numbers. */
export interface SqlFacts {
  range: { start_key: number | null; end_key: number | null; out_key: number | null; flow_key: number | null; used_rows: number };
  accounting: { status: string; reason: string | null; n: number }[];
  events: { event: string; n: number }[];
  lastPeriod: { n: number; max_wall: number | null };
  users: number;
  /** Distinct values of each attribute, in the order of `attributes`. */
  attributeValues: number[];
  uniqueness: { with_value: number; with_own: number };
  /** Rows a reader rejected before SQL saw them (CSV structure), by reason. */
  readerRejects?: Record<string, number>;
  /** Header lines the reader skipped (one a CSV file; none for NDJSON, Parquet or a table). */
  headerLines?: number;
}

export interface FactsContext {
  rules: Rules;
  engine: string;
  attributes: string[];
  by?: string;
  allowPerPersonColumn?: boolean;
  /** Rules keys the range came from, for messages ('warmup' from the rules or an override). */
  warmup?: number;
  /** Source names, for the "nothing to analyse" message. */
  file?: string;
}

/**
 * The row accounting (read = used + notKeyEvent + afterRange + Σ rejected) and the line accounting.
 * SQL sees records, not physical lines: it counts one line a record (a quoted line break inside a
 * field is not seen), the header lines the reader skipped, and the blank lines a reader marked.
 */
export function rowAccount(f: SqlFacts): RowAccount {
  const lines = { read: 0, header: f.headerLines ?? 0, blank: 0, records: 0, rejected: 0 };
  const rows: RowAccount = { read: 0, used: 0, notKeyEvent: 0, afterRange: 0, partial: 0, rejected: {}, lines };
  const rejected = rows.rejected as Record<string, number>;
  for (const a of f.accounting) {
    if (a.reason !== BLANK_REASON) rows.read += a.n;
    if (a.status === 'used') rows.used += a.n;
    else if (a.status === 'notkey') rows.notKeyEvent += a.n;
    else if (a.status === 'after') rows.afterRange += a.n;
    else if (a.reason === BLANK_REASON) lines.blank += a.n;
    else rejected[a.reason as string] = (rejected[a.reason as string] ?? 0) + a.n;
  }
  for (const [reason, n] of Object.entries(f.readerRejects ?? {})) {
    if (n <= 0) continue;
    rows.read += n;
    rejected[reason] = (rejected[reason] ?? 0) + n;
  }
  lines.rejected = Object.values(rejected).reduce((a, b) => a + (b ?? 0), 0);
  lines.records = rows.read - lines.rejected;
  lines.read = lines.header + lines.blank + lines.records + lines.rejected;
  return rows;
}

/**
 * Check the range as the memory engine does (src/periods/range.ts, engines/memory.ts) and build the
 * manifest.
 * @throws TidemarkError EVENTS_EMPTY (no usable row), RANGE_INVALID (--from after the data, a warm-up
 *   that leaves nothing), INPUT_INVALID (a per-person --by column not allowed)
 */
export function manifestOf(f: SqlFacts, periods: string[], ctx: FactsContext): WaistManifest {
  const { rules } = ctx;
  const scheme: PeriodScheme = { grain: rules.grain, weekStart: rules.weekStart };
  const rows = rowAccount(f);
  const r = f.range;
  if (r.used_rows === 0 || r.start_key === null || r.end_key === null || r.out_key === null) {
    const why = rows.read === 0 ? 'it holds no event rows' : rows.notKeyEvent === rows.read ? 'no row is a key event' : 'no row could be used';
    throw new TidemarkError('EVENTS_EMPTY', `nothing to analyse: ${why}`, { file: ctx.file },
      rows.notKeyEvent > 0 ? 'Check activity.keyEvents against the event names in the file' : 'Check the file and the column mapping');
  }
  let byPerPerson = false;
  if (ctx.by !== undefined) byPerPerson = checkUniqueness(uniquenessOf(ctx.by, f.uniqueness.with_value, f.uniqueness.with_own), ctx.allowPerPersonColumn).perPerson;
  const label = (k: number) => periodLabel(k, scheme);
  if (r.out_key > r.end_key) {
    throw new TidemarkError('RANGE_INVALID', `the range starts in ${label(r.out_key)}, after the last period of the data, ${label(r.end_key)}`, { key: 'from' }, `The data run from ${label(r.start_key)} to ${label(r.end_key)}`);
  }
  const warmup = ctx.warmup ?? rules.warmup;
  const outPeriods = r.end_key - r.out_key + 1;
  if (warmup >= outPeriods) {
    throw new TidemarkError('RANGE_INVALID', `a warm-up of ${warmup} periods leaves no period to analyse (the range has ${outPeriods})`, { key: 'warmup' }, 'Lower the warm-up or widen the range');
  }
  // the last period: how far through it the data run (memory.ts, lastPeriodOf)
  const startMs = periodStartDay(r.end_key, scheme) * DAY;
  const endMs = periodEndDay(r.end_key, scheme) * DAY;
  const later = rows.afterRange > 0;
  const maxWall = f.lastPeriod.max_wall ?? -Infinity;
  const coverage = later ? 1 : Math.max(0, Math.min(1, (maxWall - startMs) / (endMs - startMs)));
  const keySet = rules.activity.keyEvents ? new Set(rules.activity.keyEvents) : undefined;
  const events = [...f.events]
    .sort((a, b) => b.n - a.n || (a.event < b.event ? -1 : a.event > b.event ? 1 : 0))
    .slice(0, EVENT_NAMES_KEPT)
    .map((e) => ({ name: e.event, rows: e.n, key: !keySet || keySet.has(e.event) }));
  return makeManifest({
    rules,
    warmup,
    periods,
    engine: ctx.engine,
    rows,
    rowsInLastPeriod: f.lastPeriod.n,
    lastPeriod: { label: label(r.end_key), coverage, complete: later || maxWall >= endMs - (endMs - startMs) / 7 },
    users: f.users,
    events,
    attributes: ctx.attributes.map((name, i) => ({ name, values: f.attributeValues[i] ?? 0 })),
    by: ctx.by ?? null,
    byPerPerson,
    warnings: [],
  });
}

/** One table's rows as the SQL returned them (columns as in WAIST_TABLES). */
export type TableRows = Record<string, string | number>[];

/**
 * The waist of a manifest and the tables' rows, read back through {@link readWaist} from a
 * temporary folder, so that it is checked against every identity of the format and has the very
 * form the reader gives.
 */
export function waistOf(manifest: WaistManifest, tables: Record<TableName, TableRows>): Waist {
  const dir = mkdtempSync(join(tmpdir(), 'tidemark-waist-'));
  try {
    writeFileSync(join(dir, 'manifest.json'), JSON.stringify(manifest));
    for (const name of Object.keys(WAIST_TABLES) as TableName[]) {
      const spec = WAIST_TABLES[name];
      writeFileSync(join(dir, spec.file), waistCsv(spec.columns, tables[name].map((row) => spec.columns.map((c) => row[c] ?? ''))));
    }
    return readWaist(dir);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}
