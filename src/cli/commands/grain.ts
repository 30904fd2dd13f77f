/** `tidemark grain`: the grain advisor — return gaps between active days, and the grain and lapse limit they suggest. */
import type { Command } from 'commander';
import { adviseGrain, type GrainAdvice } from '../../grain/advise.js';
import { leftOutJson, noteBehaviour, readBehaviour } from '../behaviour.js';
import { addEventOptions, addFormatOptions, addPartialOption, resolveRules, type CommonOptions } from '../common.js';
import { emit, json, pct, textTable, toCsv, wrapProse, type Format } from '../format.js';
import type { Io } from '../io.js';

const bucket = (b: GrainAdvice['distribution'][number]) => (b.to === null ? `${b.from}+` : b.from === b.to ? String(b.from) : `${b.from}-${b.to}`);

export function formatGrain(a: GrainAdvice, format: Format, extra: object = {}): string {
  if (format === 'json') return json({ ...a, ...extra });
  if (format === 'csv') return toCsv(['gap_days', 'gaps', 'share', 'cumulative'], a.distribution.map((b) => [bucket(b), b.gaps, b.share, b.cumulative]));
  const out = ['Return gaps: days between two consecutive active days of a user', textTable(['gap (days)', 'gaps', 'share', 'cumulative'], a.distribution.map((b) => [bucket(b), b.gaps, pct(b.share), pct(b.cumulative)])).trimEnd()];
  if (a.percentiles) out.push('', `Percentiles (days): 50th ${a.percentiles.p50}, 80th ${a.percentiles.p80}, 90th ${a.percentiles.p90}, 95th ${a.percentiles.p95}.`);
  out.push('', a.reading, '', `Rule: ${a.rule}`);
  return wrapProse(`${out.join('\n')}\n`);
}

export async function runGrain(o: CommonOptions, io: Io): Promise<void> {
  const rules = resolveRules(o);
  const r = await readBehaviour(o, rules);
  noteBehaviour(io, o, r);
  emit(formatGrain(adviseGrain(r.log, r.timelines), o.format, { rules: { grain: rules.grain, lapseLimit: rules.lapseLimit } }), o.out, io);
}

export function grainCommand(program: Command, io: Io): void {
  const cmd = program.command('grain').description('grain advisor: the days between a user\'s active days, and the grain (day, week, month) and lapse limit they suggest');
  addFormatOptions(addPartialOption(addEventOptions(cmd)), 'table').action((opts: CommonOptions) => runGrain(opts, io));
}
