/** `tidemark explain`: why retention moved between two periods — mix versus rate, with intervals. */
import type { Command } from 'commander';
import { explainRetention, type Decomposition, type ExplainOutput } from '../../explain/run.js';
import type { RetentionChange } from '../../explain/retention.js';
import { addEventOptions, addFormatOptions, addPartialOption, addWaistOption, analysisInput, partialJson, periodFlagHint, type CommonOptions } from '../common.js';
import { asFlags, dateOption } from '../options.js';
import { emit, json, pct, textTable, toCsv, type Format, wrapProse } from '../format.js';
import type { Io } from '../io.js';
import { addPerPersonOption, type PerPersonOption } from '../perPerson.js';
import { showValue } from '../../errors.js';
import { GRAIN_NOUN } from '../../periods/calendar.js';
import { stateLabelsOf } from '../../waist/manifest.js';

export interface ExplainCliOptions extends CommonOptions, PerPersonOption {
  base?: string;
  compare?: string;
  by?: string;
}

const pts = (x: number | null) => (x === null ? '-' : `${x >= 0 ? '+' : ''}${(x * 100).toFixed(2)}`);

function groupTable(d: Decomposition, label: string): string {
  const rows = d.groups.map((g) => [g.group, g.nBase, pct(g.weightBase), pct(g.rateBase), g.nCompare, pct(g.weightCompare), pct(g.rateCompare), pts(g.rateEffect), pts(g.mixEffect)]);
  rows.push(['total', d.groups.reduce((a, g) => a + g.nBase, 0), '', pct(d.overall.base), d.groups.reduce((a, g) => a + g.nCompare, 0), '', pct(d.overall.compare), pts(d.rateEffect), pts(d.mixEffect)]);
  return textTable([label, 'n0', 'mix0', 'ret0', 'n1', 'mix1', 'ret1', 'rate pt', 'mix pt'], rows).trimEnd();
}

function changeTable(cs: RetentionChange[], label: string, key: 'state' | 'segment'): string {
  const rows = cs.map((c) => [c[key] || c.state, pct(c.base.rate), pct(c.compare.rate), pts(c.change), c.lower === null ? '-' : `${pts(c.lower)}..${pts(c.upper)}`, c.pAdjusted === null ? '-' : c.pAdjusted < 0.001 ? '<0.001' : c.pAdjusted.toFixed(3), `${c.significant ? 'yes' : 'no'}${c.small ? ' (small)' : ''}`]);
  return textTable([label, 'ret0', 'ret1', 'change pt', '95% interval', 'p (BH)', 'signif.'], rows).trimEnd();
}

export function formatExplain(e: ExplainOutput, format: Format): string {
  if (format === 'json') return json(e);
  if (format === 'csv') {
    const rows = e.byState.map((g) => [e.base, e.compare, g.state, g.nBase, g.nCompare, g.weightBase, g.weightCompare, g.rateBase, g.rateCompare, g.rateEffect, g.mixEffect]);
    return toCsv(['base', 'compare', 'state', 'n_base', 'n_compare', 'weight_base', 'weight_compare', 'rate_base', 'rate_compare', 'rate_effect', 'mix_effect'], rows);
  }
  const out = [
    `Retention into ${e.compare} against ${e.base}`,
    e.sentence,
    e.simpson ? "Note: overall retention moved against every group's own retention (Simpson's paradox): the mix shift drives it." : '',
    '',
    `Mix-versus-rate decomposition by prior state (Kitagawa; rate + mix = change, in points):`,
    groupTable({ ...e, groups: e.byState.map((g) => ({ group: g.state, ...g })), sentence: e.sentence }, 'state'),
    '',
    'Change of each state\'s retention (Newcombe interval, z-test, Benjamini-Hochberg at 5%):',
    changeTable(e.changes, 'state', 'state'),
    '',
    `By tenure band: ${e.byTenure.sentence}`,
    groupTable(e.byTenure, 'tenure'),
  ];
  if (e.bySegment) {
    const by = showValue(e.bySegment.by, 40);
    out.push('', `By ${by}: ${e.bySegment.sentence}`, groupTable(e.bySegment, by), '', changeTable(e.bySegment.changes, by, 'segment'), `Caution: ${e.bySegment.caution}`);
  }
  return wrapProse(`${out.filter((l, i) => l !== '' || out[i - 1] !== '').join('\n')}\n`);
}

export async function runExplain(o: ExplainCliOptions, io: Io): Promise<void> {
  const base = dateOption(o.base, '--base');
  const compare = dateOption(o.compare, '--compare');
  const input = await analysisInput(o, io, { partial: 'drop', by: o.by });
  const m = input.waist.manifest;
  const e = asFlags(() => explainRetention(input.waist.tables, { base, compare, grainWord: `one-${GRAIN_NOUN[m.rules.grain]}`, minCell: m.rules.minCell, stateLabels: stateLabelsOf(m.states) }), { base: '--base', compare: '--compare' }, periodFlagHint(input, { base, compare }));
  emit(formatExplain({ ...e, ...partialJson(input) }, o.format), o.out, io);
}

export function explainCommand(program: Command, io: Io): void {
  const cmd = program
    .command('explain')
    .description('why overall retention moved between two periods: rate versus mix effects by prior state, tenure and attribute')
    .option('--base <period>', 'base period, by the label of the period retained into (default: the one before --compare)')
    .option('--compare <period>', 'compared period (default: the latest)')
    .option('--by <column>', 'also decompose over an attribute column (plan, region, channel…), by the user\'s value in the earlier period (refused when its values are nearly unique per user)');
  addPerPersonOption(cmd);
  addFormatOptions(addPartialOption(addEventOptions(addWaistOption(cmd))), 'table').action((opts: ExplainCliOptions) => runExplain(opts, io));
}
