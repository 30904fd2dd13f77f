/** `tidemark classify`: one lifecycle state per user and period. */
import type { Command } from 'commander';
import type { ClassifiedRow } from '../../engines/types.js';
import { addEventOptions, addFormatOptions, eventRun, note, noteRun, resolveRules, rowLine, runClassifyEngine, type CommonOptions } from '../common.js';
import { emit, json, textTable, toCsv, type Format } from '../format.js';
import type { Io } from '../io.js';

export function formatClassified(rows: ClassifiedRow[], format: Format): string {
  if (format === 'json') return json(rows.map((r) => ({ user_id: r.user, period: r.period, state: r.state })));
  const body = rows.map((r) => [r.user, r.period, r.state]);
  return format === 'csv' ? toCsv(['user_id', 'period', 'state'], body) : textTable(['user_id', 'period', 'state'], body);
}

export async function runClassify(o: CommonOptions, io: Io): Promise<void> {
  const rules = resolveRules(o);
  const { rows, result } = await runClassifyEngine(eventRun(o, rules, false), rules, { io, o });
  noteRun(io, o, result);
  const lp = result.lastPeriod;
  if (!lp.complete) note(io, o, `note: the last period, ${lp.label}, looks incomplete (the data stop ${(lp.coverage * 100).toFixed(0)}% of the way through it): its states may still change as more events arrive`);
  note(io, o, 'note: this output holds user ids: it is personal data; share it only as your privacy rules allow');
  emit(formatClassified(rows, o.format), o.out, io);
}

export function classifyCommand(program: Command, io: Io): void {
  const cmd = program.command('classify').description('the lifecycle state of every user in every period (CSV: user_id,period,state)');
  addFormatOptions(addEventOptions(cmd), 'csv').action((opts: CommonOptions) => runClassify(opts, io));
}
