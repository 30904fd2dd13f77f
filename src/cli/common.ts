/** Options shared by the commands that read events. */
import { fileURLToPath } from 'node:url';
import { Command, Option } from 'commander';
import { TidemarkError, escapeControls, showValue } from '../errors.js';
import { MemoryEngine } from '../engines/memory.js';
import type { ClassifiedRow, EngineResult, EventSource, LastPeriod, RangeOptions } from '../engines/types.js';
import type { RowAccount } from '../ingest/eventLog.js';
import { periodKeyOfDate } from '../periods/calendar.js';
import { loadRulesFile } from '../rules/load.js';
import type { Rules } from '../rules/schema.js';
import { FORMATS, terminalText, type Format } from './format.js';
import type { Io } from './io.js';
import { dateOption, flagError, wholeNumber } from './options.js';
import { runProgress } from './progress.js';

/** The packaged weekly rules, used when --rules is not given. */
export const DEFAULT_RULES = fileURLToPath(new URL('../../rules/weekly.yaml', import.meta.url));

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
}

export function addFormatOptions(cmd: Command, dflt: Format): Command {
  return cmd
    .addOption(new Option('--format <format>', 'output format').choices(FORMATS as string[]).default(dflt))
    .option('--out <file>', 'write the result to a file instead of standard output');
}

/** Add the options of commands that read events; `withEvents` false when the command declares --events itself. */
export function addEventOptions(cmd: Command, withEvents = true): Command {
  // checked in sourceOf rather than as a required option, so that a misspelt option is reported as such
  if (withEvents) cmd.option('--events <files...>', 'event log(s): CSV, NDJSON (either may be .gz) or Parquet, by extension; required');
  return cmd
    .option('--rules <file>', 'rules file (YAML); default: the packaged rules/weekly.yaml')
    .option('--from <date>', 'first period to output (YYYY-MM-DD inside it); earlier events still shape states')
    .option('--to <date>', 'last period to analyse (YYYY-MM-DD inside it); later events are ignored')
    .option('--warmup <n>', 'leading periods classified but left out of flows and retention (overrides the rules)')
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
  const rules = loadRulesFile(o.rules ?? DEFAULT_RULES);
  return {
    ...rules,
    columns: {
      user: o.userColumn ?? rules.columns.user,
      timestamp: o.timestampColumn ?? rules.columns.timestamp,
      event: o.eventColumn ?? rules.columns.event,
    },
  };
}

export function sourceOf(o: Pick<CommonOptions, 'events' | 'inputFormat' | 'skipBadRows' | 'delimiter'>): EventSource {
  if (!o.events || o.events.length === 0) throw new TidemarkError('USAGE', 'no event log given', { key: '--events' }, 'For example --events events.csv');
  const delimiter = o.delimiter === '\\t' || o.delimiter === 'tab' ? '\t' : o.delimiter;
  if (delimiter !== undefined && (delimiter.length !== 1 || delimiter.charCodeAt(0) > 127 || delimiter === '"' || delimiter === '\n' || delimiter === '\r')) {
    throw new TidemarkError('USAGE', `must be one ASCII character other than a quote or a line break, not '${showValue(o.delimiter)}'`, { key: '--delimiter' }, "For example --delimiter ';' or --delimiter '\\t'");
  }
  return { files: o.events, format: o.inputFormat, skipBadRows: o.skipBadRows, delimiter };
}

/**
 * The range options, checked before reading: --from and --to are dates, in order, --warmup a whole
 * number. Commands with --include-partial leave an incomplete last period out unless it is given.
 */
export function rangeOf(o: Pick<CommonOptions, 'from' | 'to' | 'warmup' | 'includePartial'>, rules?: Pick<Rules, 'grain' | 'weekStart'>, leaveOutPartial = false): RangeOptions {
  const from = dateOption(o.from, '--from');
  const to = dateOption(o.to, '--to');
  if (from !== undefined && to !== undefined && rules) {
    const scheme = { grain: rules.grain, weekStart: rules.weekStart };
    if ((periodKeyOfDate(from, scheme) as number) > (periodKeyOfDate(to, scheme) as number)) {
      throw new TidemarkError('USAGE', `${from} is after --to ${to}`, { key: '--from' }, 'Put the earlier date in --from');
    }
  }
  const warmup = o.warmup === undefined ? undefined : wholeNumber(o.warmup, '--warmup', 0);
  return { from, to, warmup, partial: leaveOutPartial && !o.includePartial ? 'drop' : 'keep' };
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

/**
 * Check every shared event option before any event is read. `leaveOutPartial`: the command leaves an
 * incomplete last period out unless --include-partial is given.
 */
export function eventRun(o: CommonOptions, rules: Rules, leaveOutPartial: boolean, by?: string): EventRun {
  const range = { ...rangeOf(o, rules, leaveOutPartial), by, allowPerPersonColumn: (o as { publishPerPersonValues?: boolean }).publishPerPersonValues };
  return { source: sourceOf(o), range, flags: rangeFlags(o, { by: by === undefined ? undefined : '--by' }) };
}

/**
 * Run the in-memory engine on checked options; a range error that needs the data names its flag.
 * With `show`, progress goes to standard error while it runs, when that is a terminal and the output
 * is not JSON (and not --quiet).
 */
export async function runEngine(run: EventRun, rules: Rules, show?: { io: Io; o: Pick<CommonOptions, 'format' | 'quiet'> }): Promise<EngineResult> {
  const bar = show ? runProgress(show.io, show.o.format !== 'json' && !show.o.quiet) : undefined;
  try {
    return await new MemoryEngine({ onProgress: bar?.onProgress }).run(run.source, rules, run.range);
  } catch (e) {
    throw flagError(e, run.flags);
  } finally {
    bar?.stop();
  }
}

/** As {@link runEngine}, with the classified rows. */
export async function runClassifyEngine(run: EventRun, rules: Rules, show?: { io: Io; o: Pick<CommonOptions, 'format' | 'quiet'> }): Promise<{ rows: ClassifiedRow[]; result: EngineResult }> {
  const bar = show ? runProgress(show.io, show.o.format !== 'json' && !show.o.quiet) : undefined;
  try {
    return await new MemoryEngine({ onProgress: bar?.onProgress }).classify(run.source, rules, run.range);
  } catch (e) {
    throw flagError(e, run.flags);
  } finally {
    bar?.stop();
  }
}

/** The incomplete last period, as the JSON outputs report it (absent when the last period is complete). */
export function partialJson(result: Pick<EngineResult, 'lastPeriod' | 'rows'>): { lastPeriod?: LastPeriod & { rowsLeftOut: number } } {
  const lp = result.lastPeriod;
  return lp.complete ? {} : { lastPeriod: { ...lp, rowsLeftOut: result.rows.partial } };
}

/**
 * One sentence on an incomplete last period: left out (with its rows), or kept and why, and how to
 * change that. `range` is what the command asked the engine for.
 */
export function partialSentence(result: Pick<EngineResult, 'lastPeriod' | 'rows'>, range: Pick<RangeOptions, 'partial'>): string | undefined {
  const lp = result.lastPeriod;
  if (lp.complete) return undefined;
  const f = (n: number) => n.toLocaleString('en-US');
  const looks = `The last period, ${lp.label}, looks incomplete (the data stop ${(lp.coverage * 100).toFixed(0)}% of the way through it)`;
  if (lp.leftOut) return `${looks}, so it is left out of every rate (${f(result.rows.partial)} rows); pass --include-partial to keep it.`;
  const why = range.partial === 'drop' ? 'as too few periods would remain without it' : 'as asked';
  return `${looks}; it is kept, ${why}, so its rates miss users who may still be active later in it.`;
}

/** The note on stderr about an incomplete last period. */
export function notePartial(io: Io, o: { quiet?: boolean }, result: Pick<EngineResult, 'lastPeriod' | 'rows'>, range: Pick<RangeOptions, 'partial'>): void {
  const s = partialSentence(result, range);
  if (s) note(io, o, `note: ${s.charAt(0).toLowerCase()}${s.slice(1)}`);
}

/**
 * A hint for a period flag naming the incomplete last period that was left out: say so, and how to
 * keep it. `values`: library key → the flag's value.
 */
export function periodFlagHint(result: Pick<EngineResult, 'lastPeriod'>, rules: Pick<Rules, 'grain' | 'weekStart'>, values: Record<string, string | undefined>): (e: TidemarkError) => string | undefined {
  const lp = result.lastPeriod;
  const scheme = { grain: rules.grain, weekStart: rules.weekStart };
  const lastKey = periodKeyOfDate(lp.label, scheme);
  return (e) => {
    const v = e.where.key === undefined ? undefined : values[e.where.key.split(/[.[]/)[0]];
    if (!lp.leftOut || v === undefined) return undefined;
    const inLast = v.split('..').some((d) => d !== '' && periodKeyOfDate(d, scheme) === lastKey);
    return inLast ? `${lp.label} is the incomplete last period, left out; pass --include-partial to keep it` : undefined;
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
export function rowLine(r: RowAccount): string {
  const f = (n: number) => n.toLocaleString('en-US');
  const rejected = Object.entries(r.rejected);
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
export function noteRun(io: Io, o: { quiet?: boolean }, r: Pick<EngineResult, 'rows' | 'warnings'>): void {
  note(io, o, rowLine(r.rows));
  for (const w of r.warnings) io.stderr(`warning: ${escapeControls(w)}\n`);
}

