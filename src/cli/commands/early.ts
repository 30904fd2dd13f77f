/** `tidemark early`: early signals — events in a newcomer's first periods that go with staying. */
import type { Command } from 'commander';
import { TidemarkError, showValue } from '../../errors.js';
import { earlySignals, type EarlyOutput } from '../../signals/early.js';
import { leftOutJson, noteBehaviour, readBehaviour } from '../behaviour.js';
import { addEventOptions, addFormatOptions, addPartialOption, resolveRules, type CommonOptions } from '../common.js';
import { emit, json, pct, textTable, toCsv, wrapProse, type Format } from '../format.js';
import type { Io } from '../io.js';
import { asFlags, wholeNumber } from '../options.js';

export interface EarlyCliOptions extends CommonOptions {
  early: string;
  horizon: string;
  thresholds: string;
}

/** Largest early window, horizon and threshold the options take. */
export const EARLY_MAX = 1000;

function thresholds(text: string): number[] {
  const v = String(text).split(',').map((x) => x.trim());
  if (v.length > 50 || v.some((x) => !/^\d+$/.test(x) || +x < 1 || +x > EARLY_MAX)) {
    throw new TidemarkError('USAGE', `'${showValue(text)}' must be up to 50 whole numbers from 1 to ${EARLY_MAX}, comma-separated`, { key: '--thresholds' }, 'For example --thresholds 1,2,3,5');
  }
  return v.map(Number);
}

const ev = (e: string | null) => (e === null ? '(any event)' : e);

export function formatEarly(r: EarlyOutput, format: Format, extra: object = {}): string {
  if (format === 'json') return json({ ...r, ...extra });
  const header = ['event', 'k', 'newcomers_at_least_k', 'retained_at_least_k', 'rate_at_least_k', 'newcomers_below_k', 'retained_below_k', 'rate_below_k', 'coverage', 'lift', 'difference', 'difference_lower', 'difference_upper', 'p', 'p_adjusted', 'significant', 'youden', 'small'];
  if (format === 'csv') return toCsv(header, r.rows.map((x) => [ev(x.event), x.k, x.atLeast.n, x.atLeast.retained, x.atLeast.rate, x.below.n, x.below.retained, x.below.rate, x.coverage, x.lift, x.difference.value, x.difference.lower, x.difference.upper, x.p, x.pAdjusted, x.significant, x.youden, x.small]));
  const o = r.options;
  const out = [`Early signals: events in a newcomer's first ${o.early} period(s), against being active ${o.early + o.horizon - 1} period(s) after the first`,
    `${r.newcomers.toLocaleString('en-US')} newcomers (${pct(r.retained / r.newcomers)} retained); ${r.leftOut.toLocaleString('en-US')} left out as the data end before their ${o.early + o.horizon} periods; ${r.before.toLocaleString('en-US')} first active before the range.`, ''];
  out.push(textTable(['event', 'k', 'at least k', 'rate', 'below k', 'rate', 'difference (95%)', 'lift', 'coverage', 'p adj.', "Youden's J"], r.rows.map((x) => [
    ev(x.event), x.k, x.atLeast.n, pct(x.atLeast.rate), x.below.n, pct(x.below.rate),
    `${(x.difference.value * 100).toFixed(1)} (${(x.difference.lower * 100).toFixed(1)} to ${(x.difference.upper * 100).toFixed(1)})`,
    x.lift === null ? '-' : x.lift.toFixed(2), pct(x.coverage), `${x.pAdjusted < 0.001 ? '<0.001' : x.pAdjusted.toFixed(3)}${x.significant ? '*' : ''}${x.small ? ' small' : ''}`, x.youden === null ? '-' : x.youden.toFixed(2),
  ])).trimEnd());
  out.push('', '* significant after Benjamini–Hochberg; rates with Wilson 95% intervals in the JSON; difference in points, Newcombe 95%.');
  out.push('', `Best thresholds: ${r.best.length ? r.best.map((b) => `${ev(b.event)} ≥ ${b.k} (J ${b.youden.toFixed(2)})`).join('; ') : 'none'}.`, r.criterion, '', r.reading, '', `Caution: ${r.caution}`);
  return wrapProse(`${out.join('\n')}\n`);
}

export async function runEarly(o: EarlyCliOptions, io: Io): Promise<void> {
  const rules = resolveRules(o);
  const opts = { early: wholeNumber(o.early, '--early', 1, EARLY_MAX), horizon: wholeNumber(o.horizon, '--horizon', 1, EARLY_MAX), thresholds: thresholds(o.thresholds), minCell: rules.minCell };
  const r = await readBehaviour(o, rules);
  noteBehaviour(io, o, r);
  const out = asFlags(() => earlySignals(r.log, r.timelines, r.range, opts), { horizon: '--horizon', early: '--early' });
  emit(formatEarly(out, o.format, leftOutJson(r)), o.out, io);
}

export function earlyCommand(program: Command, io: Io): void {
  const cmd = program
    .command('early')
    .description('early signals: events in a newcomer\'s first periods that go with being retained later (lift, Wilson and Newcombe intervals, Benjamini–Hochberg)')
    .option('--early <n>', 'periods from the first active one in which events are counted', '1')
    .option('--horizon <n>', 'retention is read in period early + horizon − 1 after the first', '4')
    .option('--thresholds <list>', 'thresholds k: at least k events of a name in the early periods', '1,2,3,5,10');
  addFormatOptions(addPartialOption(addEventOptions(cmd)), 'table').action((opts: EarlyCliOptions) => runEarly(opts, io));
}
