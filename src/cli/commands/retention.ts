/** `tidemark retention`: status-split retention per period, by prior state (and tenure band), with Wilson intervals. */
import type { Command } from 'commander';
import { collapseCells } from '../../explain/run.js';
import { retentionRates, type RetentionRate } from '../../explain/retention.js';
import { addEventOptions, addFormatOptions, addPartialOption, addWaistOption, analysisInput, partialJson, type CommonOptions } from '../common.js';
import { emit, json, pct, textTable, toCsv, wrapProse, type Format } from '../format.js';
import type { Io } from '../io.js';

export interface RetentionCliOptions extends CommonOptions {
  tenure?: boolean;
}

export function formatRetention(rows: RetentionRate[], format: Format, split: boolean, minCell: number, extra: object = {}): string {
  if (format === 'json') return json({ definition: 'share of users in each active state in the period before who are active in the period (Wilson 95% intervals)', minCell, rows, ...extra });
  const body = rows.map((r) => [r.to, r.state, ...(split ? [r.segment] : []), r.n, r.retained, r.rate, r.lower, r.upper, r.small]);
  const head = ['period_to', 'state', ...(split ? ['tenure'] : []), 'users', 'retained', 'rate', 'lower95', 'upper95', 'small'];
  if (format === 'csv') return toCsv(head, body);
  const cellText = (r: RetentionRate | undefined) => (!r || r.rate === null ? '-' : `${pct(r.rate, 0)} (${pct(r.lower, 0)}-${pct(r.upper, 0)})${r.small ? '*' : ''}`);
  let table: string;
  if (split) {
    table = textTable(['into', 'state', 'tenure', 'users', 'retained (95%)'], rows.map((r) => [r.to, r.state, r.segment, r.n, cellText(r)]));
  } else {
    const states = [...new Set(rows.map((r) => r.state))];
    const periods = [...new Set(rows.map((r) => r.to))];
    table = textTable(['into', ...states], periods.map((p) => [p, ...states.map((s) => cellText(rows.find((r) => r.to === p && r.state === s)))]));
  }
  return wrapProse(`Retention by prior state: share of users in each active state who are active the next period (Wilson 95% interval)\n${table}* fewer than ${minCell} users: read with care\n`);
}

export async function runRetention(o: RetentionCliOptions, io: Io): Promise<void> {
  const input = await analysisInput(o, io, { partial: 'drop' });
  const t = input.waist.tables;
  const minCell = input.waist.manifest.rules.minCell;
  const cells = o.tenure ? t.tenureCells : collapseCells(t.tenureCells, 'state');
  emit(formatRetention(retentionRates(cells, { minN: minCell }), o.format, Boolean(o.tenure), minCell, partialJson(input)), o.out, io);
}

export function retentionCommand(program: Command, io: Io): void {
  const cmd = program
    .command('retention')
    .description('retention per period by prior state (and tenure band), with Wilson 95% intervals and small-cell flags')
    .option('--tenure', 'split by the tenure bands of the rules too');
  addFormatOptions(addPartialOption(addEventOptions(addWaistOption(cmd))), 'table').action((opts: RetentionCliOptions) => runRetention(opts, io));
}
