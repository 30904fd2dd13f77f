/** `tidemark inspect`: the data check before any analysis — each finding with what to do. */
import type { Command } from 'commander';
import { inspectLog, type InspectOutput } from '../../inspect/check.js';
import { noteBehaviour, readBehaviour } from '../behaviour.js';
import { addEventOptions, addFormatOptions, resolveRules, type CommonOptions } from '../common.js';
import { emit, json, toCsv, wrapProse, type Format } from '../format.js';
import type { Io } from '../io.js';

export function formatInspect(r: InspectOutput, format: Format): string {
  if (format === 'json') return json(r);
  if (format === 'csv') return toCsv(['id', 'kind', 'text', 'action'], r.findings.map((x) => [x.id, x.kind, x.text, x.action]));
  const out = [`Data check: ${r.warnings} warning${r.warnings === 1 ? '' : 's'}`, ''];
  for (const x of r.findings) out.push(`${x.kind === 'warning' ? '!' : '-'} ${x.text}`, `  What to do: ${x.action}`, '');
  return wrapProse(`${out.join('\n').trimEnd()}\n`);
}

export async function runInspect(o: CommonOptions, io: Io): Promise<void> {
  const rules = resolveRules(o);
  const r = await readBehaviour({ ...o, includePartial: true }, rules);
  noteBehaviour(io, o, r);
  emit(formatInspect(inspectLog(r.log, r.timelines, rules), o.format), o.out, io);
}

export function inspectCommand(program: Command, io: Io): void {
  const cmd = program
    .command('inspect')
    .description('check the data before any analysis: span and stray timestamps, missing days, duplicates, heavy users, per-person columns, time zones, event names, grain');
  addFormatOptions(addEventOptions(cmd), 'table').action((opts: CommonOptions) => runInspect(opts, io));
}
