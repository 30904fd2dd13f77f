/** `tidemark survival`: Kaplan–Meier time to dormant, by cohort or attribute, with the log-rank test. */
import { readFileSync } from 'node:fs';
import type { Command } from 'commander';
import { TidemarkError } from '../../errors.js';
import type { DurationRow } from '../../flows/types.js';
import { parseDurationsCsv } from '../../survival/durations.js';
import { mergeCohorts, survivalCurves, type SurvivalOutput } from '../../survival/run.js';
import { addEventOptions, addFormatOptions, addPartialOption, addWaistOption, analysisInput, partialJson, type CommonOptions } from '../common.js';
import { wholeNumber } from '../options.js';
import { emit, json, pct, textTable, toCsv, type Format, wrapProse } from '../format.js';
import type { Io } from '../io.js';
import { addPerPersonOption, type PerPersonOption } from '../perPerson.js';
import { showValue } from '../../errors.js';

export interface SurvivalCliOptions extends Omit<CommonOptions, 'events'>, PerPersonOption {
  events?: string[];
  durations?: string;
  by: string;
  merge: string;
}

export function formatSurvival(s: SurvivalOutput, format: Format, extra: object = {}): string {
  if (format === 'json') return json({ ...s, ...extra });
  const rows = s.groups.flatMap((g) => g.points.map((p) => [g.group, p.t, p.survival, p.atRisk, p.events, p.se, p.lower, p.upper]));
  if (format === 'csv') return toCsv(['group', 't', 'survival', 'at_risk', 'events', 'se', 'lower95', 'upper95'], rows);
  const out = [`Kaplan-Meier: ${s.measure}, by ${showValue(s.groupedBy, 40)} (censored at the end of the data)`];
  out.push(textTable(['group', 'users', 'reached', 'median', 'S(1)', 'S(4)', 'S(8)'], s.groups.map((g) => {
    const at = (t: number) => {
      const p = [...g.points].reverse().find((q) => q.t <= t);
      const lastT = g.points[g.points.length - 1]?.t ?? 0;
      return p && (t <= lastT || g.points.some((q) => q.t >= t)) ? pct(p.survival, 0) : '-';
    };
    return [g.group || 'all', g.users, g.events, g.median === null ? 'not reached' : g.median, at(1), at(4), at(8)];
  })).trimEnd());
  if (s.logRank) out.push(`Log-rank test across groups: chi-square ${s.logRank.chiSquare.toFixed(2)}, df ${s.logRank.df}, p ${s.logRank.pValue < 0.0001 ? s.logRank.pValue.toExponential(2) : s.logRank.pValue.toFixed(4)}`);
  if (s.note) out.push(`note: ${s.note}`);
  return wrapProse(`${out.join('\n')}\n`);
}

export async function runSurvival(o: SurvivalCliOptions, io: Io): Promise<void> {
  let rows: DurationRow[];
  let by = o.by;
  let extra: object = {};
  const merge = wholeNumber(o.merge, '--merge', 1);
  if (merge > 1 && o.by !== 'cohort') throw new TidemarkError('USAGE', 'pools cohorts: use it with --by cohort', { key: '--merge' });
  if (o.durations) {
    if (o.events || o.db || o.waist || o.store) throw new TidemarkError('USAGE', `give either ${o.events ? '--events' : o.waist ? '--waist' : '--store'} or --durations, not both`, { key: '--durations' });
    if (o.by !== 'none') throw new TidemarkError('USAGE', 'applies to --events; a durations file gives its groups in its group column', { key: '--by' });
    let text: string;
    try {
      text = readFileSync(o.durations, 'utf8');
    } catch {
      throw new TidemarkError('FILE_NOT_FOUND', 'cannot read the durations file', { file: o.durations });
    }
    rows = parseDurationsCsv(text, o.durations);
    by = rows.some((r) => r.group !== '') ? 'group' : 'none';
    if (by === 'none') rows = rows.map((r) => ({ ...r, group: 'all' }));
  } else {
    if (!o.events && !o.db && !o.waist && !o.store) throw new TidemarkError('USAGE', 'give --events (with --rules), --waist, --store or --durations', { key: '--events' }, 'See tidemark survival --help');
    const column = o.by === 'none' || o.by === 'cohort' ? undefined : o.by;
    const input = await analysisInput(o as CommonOptions, io, { partial: 'drop', by: column });
    extra = partialJson(input);
    const t = input.waist.tables;
    rows = column ? t.segmentDurations!.rows : t.durations;
    if (o.by === 'none') rows = rows.map((x) => ({ ...x, group: 'all' }));
    if (o.by === 'cohort') rows = mergeCohorts(rows, merge);
  }
  if (rows.length === 0) throw new TidemarkError('NOT_ENOUGH_DATA', 'no users to follow after the warm-up', {}, 'Lower the warm-up or use a longer log');
  emit(formatSurvival(survivalCurves(rows, by), o.format, extra), o.out, io);
}

export function survivalCommand(program: Command, io: Io): void {
  const cmd = program
    .command('survival')
    .description('Kaplan-Meier curves of the time from first active to first dormant, with the log-rank test across groups')
    .option('--events <files...>', 'event log(s): CSV, NDJSON (either may be .gz) or Parquet')
    .option('--durations <file>', 'durations computed elsewhere: CSV with duration, observed (1/0) and an optional group column')
    .option('--by <group>', 'none, cohort, or an attribute column (its value in the user\'s first active period; refused when its values are nearly unique per user)', 'none')
    .option('--merge <k>', 'with --by cohort: pool k consecutive cohorts into one curve', '1');
  addPerPersonOption(cmd);
  addPartialOption(addEventOptions(addWaistOption(cmd), false));
  addFormatOptions(cmd, 'table').action((opts: SurvivalCliOptions) => runSurvival(opts, io));
}
