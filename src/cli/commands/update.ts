/**
 * `tidemark update`: apply the week's event files to a store (src/store) and print what changed, in
 * at most eight lines (the digest).
 */
import { Option, type Command } from 'commander';
import { TidemarkError, escapeControls, showValue } from '../../errors.js';
import { DEFAULT_RULES, resolveRules } from '../../rules/resolve.js';
import { rowLine, note } from '../common.js';
import { emit, json, terminalText, toCsv, wrapProse, type Format } from '../format.js';
import type { Io } from '../io.js';

export interface UpdateCliOptions {
  store: string;
  events?: string[];
  rules?: string;
  reclassify?: boolean;
  skipBadRows?: boolean;
  inputFormat?: 'csv' | 'ndjson';
  delimiter?: string;
  userColumn?: string;
  timestampColumn?: string;
  eventColumn?: string;
  format: Format;
  out?: string;
  quiet?: boolean;
}

export async function runUpdate(o: UpdateCliOptions, io: Io): Promise<void> {
  const files = o.events ?? [];
  if (files.length === 0 && !o.reclassify) throw new TidemarkError('USAGE', 'no event file given', { key: '--events' }, 'For example --events week-47.csv');
  const delimiter = o.delimiter === '\\t' || o.delimiter === 'tab' ? '\t' : o.delimiter;
  if (delimiter !== undefined && (delimiter.length !== 1 || delimiter.charCodeAt(0) > 127 || delimiter === '"' || delimiter === '\n' || delimiter === '\r')) {
    throw new TidemarkError('USAGE', `must be one ASCII character other than a quote or a line break, not '${showValue(o.delimiter)}'`, { key: '--delimiter' }, "For example --delimiter ';' or --delimiter '\\t'");
  }
  // the rules file, when given, is read before anything else (its errors name the file)
  const rules = o.rules !== undefined ? resolveRules({ file: o.rules }) : undefined;
  if (o.reclassify && o.rules === undefined) throw new TidemarkError('USAGE', 'rebuilds the store under new rules: give them with --rules', { key: '--reclassify' }, `For example --rules ${DEFAULT_RULES.replace(/.*\//, 'rules/')}`);
  const { updateStore } = await import('../../store/update.js');
  const { digestLines } = await import('../../store/digest.js');
  let result;
  try {
    result = await updateStore({
      dir: o.store,
      files,
      rules,
      columns: { user: o.userColumn, timestamp: o.timestampColumn, event: o.eventColumn },
      reclassify: o.reclassify,
      read: { format: o.inputFormat, delimiter, skipBadRows: o.skipBadRows },
    });
  } catch (e) {
    if (e instanceof TidemarkError && e.where.key === 'rules') throw new TidemarkError(e.code, e.message, { ...e.where, key: '--rules' }, e.hint);
    throw e;
  }
  const f = (n: number) => n.toLocaleString('en-US');
  if (result.created) note(io, o, `note: created a store in ${o.store}`);
  for (const a of result.applied) note(io, o, `applied ${a.path} (${a.firstPeriod ? `${a.firstPeriod} to ${a.lastPeriod}` : 'no used row'}): ${rowLine(a.rows)}`);
  for (const s of result.skipped) {
    io.stderr(`${wrapProse(`note: ${s.path} holds the same bytes as ${s.appliedAs}, applied ${s.appliedAt ? `on ${s.appliedAt}` : 'above'} (SHA-256 ${s.sha256.slice(0, 12)}…): skipped, it changes nothing`)}\n`);
  }
  if (result.mode === 'none') note(io, o, o.reclassify ? 'note: the rules are the store\'s already and no file is new: the store is unchanged' : 'note: nothing new to apply: the store is unchanged');
  const r = result.restated;
  if (r && r.reason === 'late events') {
    const list = r.periods.length <= 6 ? r.periods.join(', ') : `${r.periods.slice(0, 3).join(', ')}, …, ${r.periods[r.periods.length - 1]}`;
    const added = r.added.length ? `, and added ${r.added.length} earlier period${r.added.length > 1 ? 's' : ''} from ${r.added[0]}` : '';
    io.stderr(`${wrapProse(`warning: late events restated ${r.periods.length} stored period${r.periods.length === 1 ? '' : 's'} (${list})${added}: ${f(r.usersChanged ?? 0)} user${r.usersChanged === 1 ? '' : 's'} changed state in them. The store was rebuilt from its events, as a full run over every applied file would count them.`)}\n`);
  }
  if (r && r.reason === 'new rules') note(io, o, `note: reclassified every stored event under the new rules: ${r.periods.length} periods computed again`);
  if (result.waist) {
    const m = result.waist.manifest;
    const p = result.periods;
    note(io, o, `store: ${p.count} ${m.rules.grain}${p.count === 1 ? '' : 's'} from ${p.first} to ${p.last}, ${f(m.users)} users; ${rowLine(m.rows)}`);
    for (const w of m.warnings) io.stderr(`warning: ${escapeControls(w)}\n`);
  } else note(io, o, `note: the warm-up of ${result.warmup} periods leaves no period to analyse yet (${result.periods.count} stored), so there is no digest`);
  const lines = result.digest ? digestLines(result.digest) : [];
  let text: string;
  if (o.format === 'json') {
    const { waist: _waist, ...rest } = result;
    text = json({ ...rest, lines });
  } else if (o.format === 'csv') text = toCsv(['line'], lines.map((l) => [l]));
  else text = lines.length ? terminalText(`${lines.join('\n')}\n`) : ''; // one line a digest line: the terminal wraps, the count stays
  emit(text, o.out, io);
}

export function updateCommand(program: Command, io: Io): void {
  program
    .command('update')
    .description('apply new event files to a store (created when missing) and print what changed since the last update')
    .requiredOption('--store <dir>', 'the store folder: a DuckDB database of per-user state, the waist so far and the applied events')
    .option('--events <files...>', 'new event files, CSV or NDJSON (by extension); a file applied before is skipped')
    .option('--rules <file>', 'rules file (YAML): a new store keeps them; a store refuses others unless --reclassify (default: the store\'s, or the packaged rules/weekly.yaml)')
    .option('--reclassify', 'rebuild the store from its stored events under the --rules given')
    .option('--skip-bad-rows', 'skip and count bad rows instead of stopping at the first')
    .addOption(new Option('--input-format <format>', 'event file format, when the extension does not tell').choices(['csv', 'ndjson']))
    .option('--delimiter <char>', 'CSV field delimiter (default ","; use "\\t" for tab)')
    .option('--user-column <name>', 'column holding the user id (overrides the rules)')
    .option('--timestamp-column <name>', 'column holding the event time (overrides the rules)')
    .option('--event-column <name>', 'column holding the event name (overrides the rules)')
    .addOption(new Option('--format <format>', 'output format of the digest').choices(['table', 'csv', 'json']).default('table'))
    .option('--out <file>', 'write the digest to a file instead of standard output')
    .option('--quiet', 'do not print the row accounting and notes to standard error')
    .action((opts: UpdateCliOptions) => runUpdate(opts, io));
}
