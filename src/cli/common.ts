/** Options shared by the commands that read events. */
import { fileURLToPath } from 'node:url';
import { Command, Option } from 'commander';
import { TidemarkError, showValue, suggestion } from '../errors.js';
import type { EventSource, RangeOptions } from '../engines/types.js';
import type { RowAccount } from '../ingest/eventLog.js';
import { loadRulesFile } from '../rules/load.js';
import type { Rules } from '../rules/schema.js';
import { FORMATS, type Format } from './format.js';
import type { Io } from './io.js';

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
  inputFormat?: 'csv' | 'ndjson';
  delimiter?: string;
  userColumn?: string;
  timestampColumn?: string;
  eventColumn?: string;
  quiet?: boolean;
}

export function addFormatOptions(cmd: Command, dflt: Format): Command {
  return cmd
    .addOption(new Option('--format <format>', 'output format').choices(FORMATS as string[]).default(dflt))
    .option('--out <file>', 'write the result to a file instead of standard output');
}

/** Add the options of commands that read events; `withEvents` false when the command declares --events itself. */
export function addEventOptions(cmd: Command, withEvents = true): Command {
  // checked in sourceOf rather than as a required option, so that a misspelt option is reported as such
  if (withEvents) cmd.option('--events <files...>', 'event log(s): CSV or NDJSON (by extension); required');
  return cmd
    .option('--rules <file>', 'rules file (YAML); default: the packaged rules/weekly.yaml')
    .option('--from <date>', 'first period to output (YYYY-MM-DD inside it); earlier events still shape states')
    .option('--to <date>', 'last period to analyse (YYYY-MM-DD inside it); later events are ignored')
    .option('--warmup <n>', 'leading periods classified but left out of flows and retention (overrides the rules)')
    .option('--skip-bad-rows', 'skip and count bad rows instead of stopping at the first')
    .addOption(new Option('--input-format <format>', 'event file format, when the extension does not tell').choices(['csv', 'ndjson']))
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
    throw new TidemarkError('USAGE', `--delimiter must be one ASCII character other than a quote or a line break, not '${showValue(o.delimiter)}'`, { key: '--delimiter' });
  }
  return { files: o.events, format: o.inputFormat, skipBadRows: o.skipBadRows, delimiter };
}

export function rangeOf(o: Pick<CommonOptions, 'from' | 'to' | 'warmup'>): RangeOptions {
  return { from: o.from, to: o.to, warmup: o.warmup === undefined ? undefined : intOption(o.warmup, '--warmup', 0) };
}

export function intOption(text: string, name: string, min: number): number {
  const v = Number(text);
  if (!Number.isInteger(v) || v < min) throw new TidemarkError('USAGE', `${name} must be a whole number ≥ ${min}, not '${text}'`, { key: name });
  return v;
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
  if (nRej) parts.push(`${f(nRej)} rejected (${rejected.map(([k, n]) => `${k} ${f(n ?? 0)}`).join(', ')})`);
  const l = r.lines;
  // lines are shown when they tell more than the rows: blank lines, records over several lines, stray quotes
  const lines = l && l.read !== l.header + r.read
    ? `; lines: ${f(l.read)} read = ${[l.header && `${f(l.header)} header`, l.blank && `${f(l.blank)} blank`, `${f(l.records)} in rows`, l.rejected && `${f(l.rejected)} in rejected rows`].filter(Boolean).join(' + ')}`
    : '';
  return `rows: ${parts.join(', ')}${lines}`;
}

export function note(io: Io, o: { quiet?: boolean }, text: string): void {
  if (!o.quiet) io.stderr(`${text}\n`);
}

