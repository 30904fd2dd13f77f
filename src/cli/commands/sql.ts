/** `tidemark sql`: write the rules compiled to SQL for a warehouse, with the manifest and a README. */
import { join } from 'node:path';
import { Command, Option } from 'commander';
import { TidemarkError } from '../../errors.js';
import { writeFileAtomic } from '../../output/atomic.js';
import { DIALECTS, type DialectName } from '../../sql/dialects.js';
import { printSql } from '../../sql/print.js';
import { TIMESTAMP_KINDS, type ColumnKind } from '../../sql/source.js';
import { rangeOf, resolveRules } from '../common.js';
import type { Io } from '../io.js';
import { asFlags } from '../options.js';
import { terminalText } from '../format.js';

interface SqlOptions {
  rules?: string;
  dialect: DialectName;
  eventsTable?: string;
  out?: string;
  timestampType: ColumnKind;
  from?: string;
  to?: string;
  warmup?: string;
  by?: string;
  userColumn?: string;
  timestampColumn?: string;
  eventColumn?: string;
  quiet?: boolean;
}

export function runSql(o: SqlOptions, io: Io): void {
  if (!o.eventsTable) throw new TidemarkError('USAGE', 'no events table given', { key: '--events-table' }, 'For example --events-table analytics.events');
  if (!o.out) throw new TidemarkError('USAGE', 'no output folder given', { key: '--out' }, 'For example --out waist-sql');
  const rules = resolveRules({ ...o, events: [], format: 'table' });
  const range = rangeOf(o, rules);
  const files = asFlags(() => printSql({ dialect: o.dialect, rules, table: o.eventsTable as string, timestamp: o.timestampType, from: range.from, to: range.to, warmup: range.warmup, by: o.by }),
    { from: '--from', to: '--to', by: '--by', table: '--events-table' });
  for (const [name, text] of files) writeFileAtomic(join(o.out, name), text);
  if (!o.quiet) io.stderr(terminalText(`wrote ${files.size} files to ${o.out}: run each query in ${o.dialect} and export its result there (see ${join(o.out, 'README.md')})\n`));
}

export function sqlCommand(program: Command, io: Io): void {
  program
    .command('sql')
    .description('write the rules as SQL for a warehouse: one query a waist table, the manifest, and a README on exporting the results for --waist')
    .addOption(new Option('--dialect <dialect>', 'SQL dialect').choices(DIALECTS as unknown as string[]).makeOptionMandatory())
    .option('--events-table <name>', 'the events table or view (schema.name allowed); required')
    .option('--out <dir>', 'folder to write the queries, manifest.json and README.md into; required')
    .option('--rules <file>', 'rules file (YAML); default: the packaged rules/weekly.yaml')
    .addOption(new Option('--timestamp-type <type>', 'how the timestamp column is typed: text (parsed as tidemark reads files), instant (with a time zone), local (without), number (epoch)').choices(TIMESTAMP_KINDS as unknown as string[]).default('text'))
    .option('--from <date>', 'first period to output (YYYY-MM-DD inside it); earlier events still shape states')
    .option('--to <date>', 'last period to analyse (YYYY-MM-DD inside it); later events are ignored')
    .option('--warmup <n>', 'leading periods classified but left out of flows and retention (overrides the rules)')
    .option('--by <column>', 'an attribute column to split retention and durations by')
    .option('--user-column <name>', 'column holding the user id (overrides the rules)')
    .option('--timestamp-column <name>', 'column holding the event time (overrides the rules)')
    .option('--event-column <name>', 'column holding the event name (overrides the rules)')
    .option('--quiet', 'do not print what was written')
    .action((opts: SqlOptions) => runSql(opts, io));
}
