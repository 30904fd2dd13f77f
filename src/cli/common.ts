/** Options shared by the commands that read events or a waist. */
import { readFileSync, statSync } from 'node:fs';
import { Command, Option } from 'commander';
import { TidemarkError, escapeControls, showValue } from '../errors.js';
import { createEngine, ENGINE_NAMES } from '../engines/index.js';
import { filesSource, type ClassifiedSink, type EngineRun, type EventSource, type RangeOptions } from '../engines/types.js';
import type { RowAccount } from '../ingest/eventLog.js';
import { periodKeyOfDate } from '../periods/calendar.js';
import { DEFAULT_RULES, resolveRules as resolveRulesFile } from '../rules/resolve.js';
import type { Rules } from '../rules/schema.js';
import { analysisWaist, partialPeriodSentence, withoutSplit, type DroppedPeriod } from '../waist/derive.js';
import { readWaist } from '../waist/read.js';
import type { Waist } from '../waist/types.js';
import type { Digest } from '../store/digest.js';
import { FORMATS, terminalText, type Format } from './format.js';
import type { Io } from './io.js';
import { dateOption, flagError, wholeNumber } from './options.js';
import { runProgress } from './progress.js';

export { DEFAULT_RULES };


export interface CommonOptions {
  events: string[];
  rules?: string;
  format: Format;
  out?: string;
  from?: string;
  to?: string;
  warmup?: string;
  skipBadRows?: boolean;
  inputFormat?: 'csv' | 'ndjson' | 'parquet';
  delimiter?: string;
  userColumn?: string;
  timestampColumn?: string;
  eventColumn?: string;
  quiet?: boolean;
  /** Keep an incomplete last period (commands with --include-partial). */
  includePartial?: boolean;
  /** A waist folder to read instead of events (analysis commands). */
  waist?: string;
  /** A store folder (tidemark update) to read instead of events (analysis commands). */
  store?: string;
  /** The engine that reads the events. */
  engine?: string;
  /** A DuckDB database file or a postgres:// URL (engines duckdb and postgres). */
  db?: string;
  /** A table or view in --db holding the events. */
  table?: string;
  /** A file holding one SELECT on --db whose rows are the events (engine postgres). */
  query?: string;
}

export function addFormatOptions(cmd: Command, dflt: Format): Command {
  return cmd
    .addOption(new Option('--format <format>', 'output format').choices(FORMATS as string[]).default(dflt))
    .option('--out <file>', 'write the result to a file instead of standard output');
}

/** Add --waist and --store: an analysis reads a waist folder or a store instead of events. */
export function addWaistOption(cmd: Command): Command {
  return cmd
    .option('--waist <dir>', 'read a waist folder (tidemark waist, or the SQL of tidemark sql) instead of --events')
    .option('--store <dir>', 'read a store (tidemark update) instead of --events: the same output as the events it applied');
}

/** Add the options of commands that read events; `withEvents` false when the command declares --events itself. */
export function addEventOptions(cmd: Command, withEvents = true): Command {
  // checked in sourceOf rather than as a required option, so that a misspelt option is reported as such
  if (withEvents) cmd.option('--events <files...>', 'event log(s): CSV, NDJSON (either may be .gz) or Parquet, by extension; required');
  return cmd
    .addOption(new Option('--engine <name>', 'the engine that reads the events').choices(ENGINE_NAMES as unknown as string[]))
    .option('--rules <file>', 'rules file (YAML); default: the packaged rules/weekly.yaml')
    .option('--from <date>', 'first period to output (YYYY-MM-DD inside it); earlier events still shape states')
    .option('--to <date>', 'last period to analyse (YYYY-MM-DD inside it); later events are ignored')
    .option('--warmup <n>', 'leading periods classified but left out of flows and retention (overrides the rules)')
    .option('--db <file|url>', 'read the events from a database instead of --events: a DuckDB file (--engine duckdb) or postgres://… (--engine postgres)')
    .option('--table <name>', 'the table or view in --db holding the events')
    .option('--query <file>', 'a file holding one SELECT on --db whose rows are the events (--engine postgres)')
    .option('--skip-bad-rows', 'skip and count bad rows instead of stopping at the first')
    .addOption(new Option('--input-format <format>', 'event file format, when the extension does not tell (gzip is recognised by itself)').choices(['csv', 'ndjson', 'parquet']))
    .option('--delimiter <char>', 'CSV field delimiter (default ","; use "\\t" for tab)')
    .option('--user-column <name>', 'column holding the user id (overrides the rules)')
    .option('--timestamp-column <name>', 'column holding the event time (overrides the rules)')
    .option('--event-column <name>', 'column holding the event name (overrides the rules)')
    .option('--quiet', 'do not print the row accounting to standard error');
}

/** Rules from --rules (or the default), with column overrides from the command line applied. */
export function resolveRules(o: CommonOptions): Rules {
  return resolveRulesFile({ file: o.rules, columns: { user: o.userColumn, timestamp: o.timestampColumn, event: o.eventColumn } });
}

export function sourceOf(o: Pick<CommonOptions, 'events' | 'inputFormat' | 'skipBadRows' | 'delimiter' | 'engine' | 'db' | 'table' | 'query'>): EventSource {
  if (o.db !== undefined || o.table !== undefined || o.query !== undefined) return databaseSource(o);
  if ((o.engine ?? 'memory') === 'postgres') {
    throw new TidemarkError('USAGE', 'reads a table or a query on a PostgreSQL server, not event files', { key: '--engine' }, 'For example --engine postgres --db postgres://user@host/db --table events');
  }
  if (!o.events || o.events.length === 0) throw new TidemarkError('USAGE', 'no event log given', { key: '--events' }, 'For example --events events.csv');
  const delimiter = o.delimiter === '\\t' || o.delimiter === 'tab' ? '\t' : o.delimiter;
  if (delimiter !== undefined && (delimiter.length !== 1 || delimiter.charCodeAt(0) > 127 || delimiter === '"' || delimiter === '\n' || delimiter === '\r')) {
    throw new TidemarkError('USAGE', `must be one ASCII character other than a quote or a line break, not '${showValue(o.delimiter)}'`, { key: '--delimiter' }, "For example --delimiter ';' or --delimiter '\\t'");
  }
  return filesSource(o.events, { format: o.inputFormat, skipBadRows: o.skipBadRows, delimiter });
}

const POSTGRES_URL = /^postgres(ql)?:\/\//i;

/**
 * A table or query in a database as the source, every option checked before anything is read:
 * --table or --query (one of them) with --db, an engine that reads databases, a URL for postgres and
 * a file for duckdb, no --events beside them.
 */
function databaseSource(o: Pick<CommonOptions, 'events' | 'inputFormat' | 'skipBadRows' | 'delimiter' | 'engine' | 'db' | 'table' | 'query'>): EventSource {
  const engine = o.engine ?? 'memory';
  if (o.table !== undefined && o.query !== undefined) throw new TidemarkError('USAGE', 'give either --table or --query, not both', { key: '--query' });
  const what = o.table !== undefined ? '--table' : o.query !== undefined ? '--query' : undefined;
  if (what === undefined) throw new TidemarkError('USAGE', 'needs --table NAME (or --query FILE with --engine postgres)', { key: '--db' }, 'For example --db events.duckdb --table events --engine duckdb');
  if (o.db === undefined) throw new TidemarkError('USAGE', 'needs --db: the database to read it from', { key: what }, 'For example --db events.duckdb, or --db postgres://user@host/db');
  if (o.events !== undefined) throw new TidemarkError('USAGE', 'give either --events or --db, not both', { key: '--db' });
  const given = ([['inputFormat', '--input-format'], ['delimiter', '--delimiter']] as const).find(([k]) => o[k] !== undefined);
  if (given) throw new TidemarkError('USAGE', 'applies to event files, not a database', { key: given[1] });
  if (engine === 'memory') {
    throw new TidemarkError('USAGE', `${what} needs an engine that reads databases: the memory engine reads event files`, { key: '--engine' }, POSTGRES_URL.test(o.db) ? 'Add --engine postgres' : 'Add --engine duckdb');
  }
  const url = POSTGRES_URL.test(o.db);
  if (engine === 'postgres' && !url) throw new TidemarkError('USAGE', `the postgres engine needs a server URL, not '${showValue(o.db, 60)}'`, { key: '--db' }, 'For example --db postgres://user@host:5432/db');
  if (engine === 'duckdb' && url) throw new TidemarkError('USAGE', 'the duckdb engine reads a DuckDB database file, not a server', { key: '--db' }, 'Use --engine postgres for a PostgreSQL server');
  if (o.query !== undefined) {
    if (engine !== 'postgres') throw new TidemarkError('USAGE', 'needs --engine postgres (with DuckDB, make the query a view and give it as --table)', { key: '--query' });
    let text: string;
    try {
      text = readFileSync(o.query, 'utf8');
    } catch {
      throw new TidemarkError('FILE_NOT_FOUND', 'cannot read the query file', { file: o.query }, 'Give a file holding one SELECT');
    }
    return { kind: 'query', db: o.db, query: text, skipBadRows: o.skipBadRows };
  }
  return { kind: 'table', db: o.db, table: o.table as string, skipBadRows: o.skipBadRows };
}

/**
 * The range options, checked before reading: --from and --to are dates, in order, --warmup a whole
 * number. Commands with --include-partial leave an incomplete last period out unless it is given.
 */
export function rangeOf(o: Pick<CommonOptions, 'from' | 'to' | 'warmup'>, rules?: Pick<Rules, 'grain' | 'weekStart'>): RangeOptions {
  const from = dateOption(o.from, '--from');
  const to = dateOption(o.to, '--to');
  if (from !== undefined && to !== undefined && rules) {
    const scheme = { grain: rules.grain, weekStart: rules.weekStart };
    if ((periodKeyOfDate(from, scheme) as number) > (periodKeyOfDate(to, scheme) as number)) {
      throw new TidemarkError('USAGE', `${from} is after --to ${to}`, { key: '--from' }, 'Put the earlier date in --from');
    }
  }
  const warmup = o.warmup === undefined ? undefined : wholeNumber(o.warmup, '--warmup', 0);
  return { from, to, warmup };
}

export function intOption(text: string, name: string, min: number, max?: number): number {
  return wholeNumber(text, name, min, max);
}

/** Library keys of the engine that the event options set, and their flags. */
export function rangeFlags(o: Pick<CommonOptions, 'warmup'>, extra: Record<string, string | undefined> = {}): Record<string, string | undefined> {
  // a warm-up from the rules file is a data problem (exit 1), one from --warmup a usage one
  return { from: '--from', to: '--to', warmup: o.warmup === undefined ? undefined : '--warmup', ...extra };
}

/** Options of a command that reads events, all checked: the source and the range. */
export interface EventRun {
  source: EventSource;
  range: RangeOptions;
  flags: Record<string, string | undefined>;
}

/** Check every shared event option before any event is read. */
export function eventRun(o: CommonOptions, rules: Rules, by?: string): EventRun {
  const range = { ...rangeOf(o, rules), by, allowPerPersonColumn: (o as { publishPerPersonValues?: boolean }).publishPerPersonValues };
  return { source: sourceOf(o), range, flags: rangeFlags(o, { by: by === undefined ? undefined : '--by', engine: '--engine' }) };
}

/**
 * Run the chosen engine on checked options; a range error that needs the data names its flag. With
 * `io`, progress goes to standard error while it runs, when that is a terminal and the output is not
 * JSON (and not --quiet).
 */
export async function runEngine(o: Pick<CommonOptions, 'engine' | 'format' | 'quiet'>, run: EventRun, rules: Rules, io?: Io): Promise<EngineRun> {
  const hint = io && !o.quiet ? largeInputHint(run.source, o.engine) : undefined;
  if (hint && io) io.stderr(`${hint}\n`);
  const bar = io ? runProgress(io, o.format !== 'json' && !o.quiet) : undefined;
  try {
    return await createEngine(o.engine, { onProgress: bar?.onProgress }).run(run.source, rules, run.range);
  } catch (e) {
    throw flagError(e, run.flags);
  } finally {
    bar?.stop();
  }
}

/** Event text at least this large (bytes; compressed files counted as the text they hold) gets a hint to use the duckdb engine. */
export const LARGE_INPUT_BYTES = 1_000_000_000;
/**
 * How many bytes of CSV text a byte of a compressed file stands for, in the hint: gzip and Parquet both
 * hold about 3.6–3.9 bytes of text a byte on the benchmark's logs (50 MB of CSV: 12.9 MB gzipped, 13.9 MB
 * of Parquet), rounded to 4. Parquet counts 10: the memory engine reads it several times slower than CSV
 * (10M events: 31.6 s from Parquet against 8.1 s from CSV, reports/bench.md of 2026-12-02), so
 * 100 MB of Parquet (about 7M events) already take longer than the duckdb engine needs.
 */
const TEXT_BYTES_PER_BYTE = { text: 1, gzip: 4, parquet: 10 } as const;

/**
 * A one-line note on standard error when the memory engine is about to read event files that hold at
 * least {@link LARGE_INPUT_BYTES} of text in all (compressed ones weighted by {@link TEXT_BYTES_PER_BYTE}):
 * the duckdb engine reads them out of core, and Parquet several times faster. Undefined otherwise (another
 * engine, a database source, smaller files, files that cannot be listed: the run reports those).
 */
export function largeInputHint(source: EventSource, engine: string | undefined): string | undefined {
  if ((engine ?? 'memory') !== 'memory' || source.kind !== 'files') return undefined;
  let bytes = 0, weighted = 0, parquet = 0;
  for (const f of source.files) {
    let size: number;
    try {
      size = statSync(f).size;
    } catch {
      return undefined;
    }
    const lower = f.toLowerCase();
    const kind = source.format === 'parquet' || (!source.format && lower.endsWith('.parquet')) ? 'parquet' : lower.endsWith('.gz') ? 'gzip' : 'text';
    bytes += size;
    weighted += size * TEXT_BYTES_PER_BYTE[kind];
    if (kind === 'parquet') parquet += size;
  }
  if (weighted < LARGE_INPUT_BYTES) return undefined;
  const size = (b: number) => (b >= 1e9 ? `${(b / 1e9).toFixed(1)} GB` : `${Math.round(b / 1e6)} MB`);
  if (parquet > 0) return `note: ${size(parquet)} of Parquet for the memory engine, which reads Parquet several times slower; --engine duckdb reads it faster, out of core, in less memory`;
  return `note: ${size(bytes)} of events${weighted > bytes ? ` (about ${size(weighted)} as text)` : ''} for the memory engine; --engine duckdb reads large logs out of core, in less memory`;
}

/** As {@link runEngine}, streaming the classification to `sink`. */
export async function runClassifyEngine(o: Pick<CommonOptions, 'engine' | 'format' | 'quiet'>, run: EventRun, rules: Rules, sink: ClassifiedSink, io?: Io): Promise<EngineRun> {
  const bar = io ? runProgress(io, o.format !== 'json' && !o.quiet) : undefined;
  try {
    return await createEngine(o.engine, { onProgress: bar?.onProgress }).classify(run.source, rules, run.range, sink);
  } catch (e) {
    throw flagError(e, run.flags);
  } finally {
    bar?.stop();
  }
}

/** The event options that make no sense with --waist (the waist was made with them already). */
const EVENT_ONLY: [keyof CommonOptions, string][] = [
  ['events', '--events'], ['rules', '--rules'], ['from', '--from'], ['to', '--to'], ['warmup', '--warmup'],
  ['skipBadRows', '--skip-bad-rows'], ['inputFormat', '--input-format'], ['delimiter', '--delimiter'],
  ['userColumn', '--user-column'], ['timestampColumn', '--timestamp-column'], ['eventColumn', '--event-column'], ['engine', '--engine'],
  ['db', '--db'], ['table', '--table'], ['query', '--query'],
];

/**
 * The events a store applied, for the commands that need every event rather than its counts
 * (audience, rules diff): exported to temporary files, read with the store's rules. The event options
 * are refused (the store applied its events under its rules already); `keep` names options the
 * command takes for itself; `check` sees the store's rules before any event is exported. Call
 * `cleanup()` when done.
 */
export async function storeEventRun(o: CommonOptions, keep: readonly string[] = [], check?: (rules: Rules) => void): Promise<{ run: EventRun; rules: Rules; cleanup(): void }> {
  if (o.waist !== undefined) throw new TidemarkError('USAGE', 'give either --store or --waist', { key: '--store' });
  const given = EVENT_ONLY.filter(([k, f]) => !keep.includes(f) && o[k] !== undefined && o[k] !== false).map(([, f]) => f);
  if (given.length) throw new TidemarkError('USAGE', `give either --store or ${given.join(', ')}: the store applied its events under its rules already`, { key: given[0] }, 'Drop those options, or give --events instead of --store');
  const { storeEvents } = await import('../store/read.js');
  const { source, rules, cleanup } = await storeEvents(o.store as string, check);
  return { run: { source, range: {}, flags: {} }, rules, cleanup };
}

/** What an analysis command reads: the waist it analyses (the incomplete last period left out or kept), and what was done. */
export interface AnalysisInput {
  waist: Waist;
  /** The incomplete last period that was left out. */
  dropped?: DroppedPeriod;
  /** Library keys of the options, and their flags, for errors found after reading. */
  flags: Record<string, string | undefined>;
}

/**
 * The waist an analysis reads, all options checked before anything is read: from --waist DIR, or
 * made by the engine from --events. `partial`: 'drop' leaves an incomplete last period out unless
 * --include-partial; 'keep' keeps it (flows, classify). `by`: the attribute split the command needs.
 * Prints the row accounting, data warnings and the partial-period note on standard error.
 */
export async function analysisInput(o: CommonOptions, io: Io, spec: { partial: 'drop' | 'keep'; by?: string }): Promise<AnalysisInput> {
  const { waist: full, flags } = await waistInput(o, spec, io);
  const { waist, dropped } = analysisWaist(full, { includePartial: spec.partial === 'keep' || o.includePartial });
  noteRun(io, o, waist.manifest);
  const s = partialPeriodSentence(waist, dropped, { leaveOut: spec.partial === 'drop', asked: Boolean(o.includePartial) });
  if (s) note(io, o, `note: ${s.charAt(0).toLowerCase()}${s.slice(1)}`);
  return { waist, dropped, flags };
}

/**
 * The waist in full form, all options checked before anything is read: from --waist DIR, or made by
 * the chosen engine from --events. `by`: the attribute split the command needs.
 */
export async function waistInput(o: CommonOptions, spec: { by?: string; sections?: boolean } = {}, io?: Io): Promise<{ waist: Waist; flags: Record<string, string | undefined>; digest?: Digest }> {
  if (o.store !== undefined) {
    // ── the store (src/store): its waist so far, as --waist would give it, and its digest ──
    if (o.waist !== undefined) throw new TidemarkError('USAGE', 'give either --store or --waist', { key: '--store' });
    const given = EVENT_ONLY.filter(([k]) => o[k] !== undefined && o[k] !== false).map(([, f]) => f);
    if (given.length) throw new TidemarkError('USAGE', `give either --store or ${given.join(', ')}: the store applied its events under its rules already`, { key: given[0] }, 'Drop those options, or give --events instead of --store');
    if (spec.by !== undefined) {
      throw new TidemarkError('USAGE', `a store holds no split by an attribute, so --by ${showValue(spec.by, 40)} needs events`, { key: '--by' }, 'Give --events');
    }
    const { readStore } = await import('../store/read.js');
    const { waist, digest } = await readStore(o.store, { sections: spec.sections });
    return { waist, flags: {}, digest };
  }
  if (o.waist !== undefined) {
    const given = EVENT_ONLY.filter(([k]) => o[k] !== undefined && o[k] !== false).map(([, f]) => f);
    if (given.length) throw new TidemarkError('USAGE', `give either --waist or ${given.join(', ')}: a waist was made from its events and rules already`, { key: given[0] }, 'Drop those options, or give --events instead of --waist');
    const read = readWaist(o.waist);
    const m = read.manifest;
    if (spec.by !== undefined && m.by !== spec.by) {
      throw new TidemarkError('USAGE', m.by === null ? `the waist holds no split by an attribute, so --by ${showValue(spec.by, 40)} needs events` : `the waist is split by '${showValue(m.by, 40)}', not '${showValue(spec.by, 40)}': another split needs events`,
        { key: '--by' }, `Rebuild it with tidemark waist --by ${showValue(spec.by, 40)}, or give --events`);
    }
    return { waist: spec.by === undefined ? withoutSplit(read) : read, flags: {} };
  }
  if (o.events === undefined && o.db === undefined && o.table === undefined && o.query === undefined) throw new TidemarkError('USAGE', 'no event log, waist or store given', { key: '--events' }, 'For example --events events.csv, --waist DIR or --store DIR');
  const rules = resolveRules(o);
  const run = eventRun(o, rules, spec.by);
  if (spec.sections && (o.engine ?? 'memory') === 'memory') {
    // the report's behaviour sections need every event: read once, with detail
    const { waistWithSections } = await import('../report/sections/fromEvents.js');
    try {
      return { waist: await waistWithSections(run.source, rules, run.range), flags: run.flags };
    } catch (e) {
      throw flagError(e, run.flags);
    }
  }
  return { waist: (await runEngine(o, run, rules, io)).waist, flags: run.flags };
}

/** The incomplete last period, as the JSON outputs report it (absent when the last period is complete). */
export function partialJson(input: Pick<AnalysisInput, 'waist' | 'dropped'>): { lastPeriod?: { label: string; coverage: number; complete: false; leftOut: boolean; rowsLeftOut: number } } {
  const d = input.dropped;
  if (d) return { lastPeriod: { label: d.label, coverage: d.coverage, complete: false, leftOut: true, rowsLeftOut: d.rows } };
  const lp = input.waist.manifest.lastPeriod;
  return lp.complete ? {} : { lastPeriod: { label: lp.label, coverage: lp.coverage, complete: false, leftOut: false, rowsLeftOut: 0 } };
}

/**
 * A hint for a period flag naming the incomplete last period that was left out: say so, and how to
 * keep it. `values`: library key → the flag's value.
 */
export function periodFlagHint(input: Pick<AnalysisInput, 'waist' | 'dropped'>, values: Record<string, string | undefined>): (e: TidemarkError) => string | undefined {
  const d = input.dropped;
  const r = input.waist.manifest.rules;
  const scheme = { grain: r.grain, weekStart: r.weekStart as Rules['weekStart'] };
  return (e) => {
    const v = e.where.key === undefined ? undefined : values[e.where.key.split(/[.[]/)[0]];
    if (!d || v === undefined) return undefined;
    const lastKey = periodKeyOfDate(d.label, scheme);
    const inLast = v.split('..').some((x) => x !== '' && periodKeyOfDate(x, scheme) === lastKey);
    return inLast ? `${d.label} is the incomplete last period, left out; pass --include-partial to keep it` : undefined;
  };
}

/** Add --include-partial to a command that leaves an incomplete last period out. */
export function addPartialOption(cmd: Command): Command {
  return cmd.option('--include-partial', 'keep an incomplete last period (left out by default: its users have not had the whole period to be active)');
}

/**
 * One line of row accounting, e.g. "rows: 1,204 read, 1,190 used, 10 not key events, 4 rejected (bad
 * timestamp 4)", with the physical lines when they differ from the rows ("; lines: 1,212 read = 1 header
 * + 2 blank + 1,200 in rows + 9 in rejected rows").
 */
export function rowLine(r: Omit<RowAccount, 'lines'> & { lines?: RowAccount['lines'] }): string {
  const f = (n: number) => n.toLocaleString('en-US');
  // by count, then reason: the same line whichever engine counted them (the memory engine meets the reasons
  // in file order, SQL in no order)
  const rejected = Object.entries(r.rejected).sort(([a, m], [b, n]) => (n ?? 0) - (m ?? 0) || (a < b ? -1 : a > b ? 1 : 0));
  const nRej = rejected.reduce((a, [, n]) => a + (n ?? 0), 0);
  const parts = [`${f(r.read)} read`, `${f(r.used)} used`];
  if (r.notKeyEvent) parts.push(`${f(r.notKeyEvent)} not key events`);
  if (r.afterRange) parts.push(`${f(r.afterRange)} after --to`);
  if (r.partial) parts.push(`${f(r.partial)} in the incomplete last period`);
  if (nRej) parts.push(`${f(nRej)} rejected (${rejected.map(([k, n]) => `${k} ${f(n ?? 0)}`).join(', ')})`);
  const l = r.lines;
  // lines are shown when they tell more than the rows: blank lines, records over several lines, stray quotes
  const lines = l && l.read !== l.header + r.read
    ? `; lines: ${f(l.read)} read = ${[l.header && `${f(l.header)} header`, l.blank && `${f(l.blank)} blank`, `${f(l.records)} in rows`, l.rejected && `${f(l.rejected)} in rejected rows`].filter(Boolean).join(' + ')}`
    : '';
  return `rows: ${parts.join(', ')}${lines}`;
}

export function note(io: Io, o: { quiet?: boolean }, text: string): void {
  if (!o.quiet) io.stderr(`${terminalText(text)}\n`);
}

/** After an engine run: the row accounting (unless --quiet), then each data warning (always), on standard error. */
export function noteRun(io: Io, o: { quiet?: boolean }, r: { rows: Parameters<typeof rowLine>[0]; warnings: readonly string[] }): void {
  note(io, o, rowLine(r.rows));
  for (const w of r.warnings) io.stderr(`warning: ${escapeControls(w)}\n`);
}

