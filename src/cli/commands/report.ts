/** `tidemark report`: the Monday report — one self-contained HTML page, Markdown, and data files. */
import type { Command } from 'commander';
import { MemoryEngine } from '../../engines/memory.js';
import type { EngineResult } from '../../engines/types.js';
import { buildReport, type ReportModel } from '../../report/build.js';
import { writeReport } from '../../report/write.js';
import { ansiState } from '../../report/palette.js';
import { STATES } from '../../lifecycle/states.js';
import type { Rules } from '../../rules/schema.js';
import { addEventOptions, intOption, note, noteRun, rangeOf, resolveRules, sourceOf, type CommonOptions } from '../common.js';
import { emit, json, toCsv, type Format, wrapProse } from '../format.js';
import { Option } from 'commander';
import type { Io } from '../io.js';
import { progress } from '../progress.js';

export interface ReportCliOptions extends Omit<CommonOptions, 'out'> {
  out: string;
  base?: string;
  compare?: string;
  by?: string;
  horizon: string;
  seed: string;
  includePartial?: boolean;
  generatedAt?: string;
}

/** What a report run reads: the event source and range options, an attribute to split by, and whether to keep a partial last period. */
export type ReportRunOptions = Pick<CommonOptions, 'events' | 'from' | 'to' | 'warmup' | 'skipBadRows' | 'inputFormat'> & { by?: string; includePartial?: boolean };

/** The engine run the report reads: the last period left out when the data stop partway through it. */
export async function reportRun(o: ReportRunOptions, rules: Rules, onStage?: (label: string) => void): Promise<{ result: EngineResult; dropped?: string }> {
  const engine = new MemoryEngine();
  const range = { ...rangeOf(o), by: o.by };
  onStage?.('reading and classifying');
  const result = await engine.run(sourceOf(o), rules, range);
  const lp = result.lastPeriod;
  const periods = result.waist.periods;
  if (lp.complete || o.includePartial || periods.length < 3) return { result };
  onStage?.('leaving out the incomplete last period');
  const again = await engine.run(sourceOf(o), rules, { ...range, to: periods[periods.length - 2] });
  return {
    result: { ...again, rows: result.rows },
    dropped: `The last period, ${lp.label}, looks incomplete (the data stop ${(lp.coverage * 100).toFixed(0)}% of the way through it), so it is left out of every rate and chart; pass --include-partial to keep it.`,
  };
}

/** Headline findings for the terminal, with state names in their report colours on a colour terminal. */
export function headline(m: ReportModel, colour: boolean): string {
  const paint = (t: string) => (colour ? STATES.reduce((acc, s) => acc.replace(new RegExp(`\\b${s}\\b`, 'g'), ansiState(s, s, true)), t) : t);
  const lines = [m.title, m.subtitle, '', ...m.findings.map((f) => `* ${paint(f.text)}`)];
  if (m.warnings.length) lines.push('', ...m.warnings.map((w) => `! ${w}`));
  return wrapProse(`${lines.join('\n')}\n`);
}

export function formatHeadline(m: ReportModel, format: Format, colour: boolean, files: string[], dir: string): string {
  if (format === 'json') return json({ title: m.title, subtitle: m.subtitle, findings: m.findings, warnings: m.warnings, out: dir, files });
  if (format === 'csv') return toCsv(['kind', 'text'], [...m.findings.map((f) => [f.kind, f.text]), ...m.warnings.map((w) => ['warning', w])]);
  return headline(m, colour);
}

export async function runReport(o: ReportCliOptions & { format: Format }, io: Io & { stdoutIsTTY?: boolean }): Promise<void> {
  const rules = resolveRules(o as CommonOptions);
  const bar = progress(io, o.format !== 'json', 4);
  let stage = 0;
  try {
    const { result, dropped } = await reportRun(o, rules, (label) => bar.step(label, stage++));
    bar.step('analysing', 2);
    const model = buildReport(result, rules, { base: o.base, compare: o.compare, horizon: intOption(o.horizon, '--horizon', 1), seed: intOption(o.seed, '--seed', 0), droppedPartial: dropped });
    bar.step('drawing charts', 3);
    const files = await writeReport(model, o.out, o.generatedAt ?? new Date().toISOString());
    bar.stop();
    noteRun(io, o, result);
    note(io, o, `report: ${files.length} files in ${o.out} (open ${o.out}/index.html)`);
    io.stdout(formatHeadline(model, o.format, Boolean(io.stdoutIsTTY) && o.format === 'table', files, o.out));
  } finally {
    bar.stop();
  }
}

export function reportCommand(program: Command, io: Io): void {
  const cmd = program
    .command('report')
    .description('write the lifecycle report: a self-contained HTML page, summary.md and the data behind every chart')
    .requiredOption('--out <dir>', 'folder to write the report into')
    .option('--base <period>', 'base period of the chosen comparison, a period retained into (default: four periods before --compare)')
    .option('--compare <period>', 'compared period of the chosen comparison (default: the latest)')
    .option('--by <column>', 'also split retention by this attribute column')
    .option('--horizon <n>', 'periods to project ahead', '12')
    .option('--seed <n>', 'random seed of the projection bands and backtest', '1')
    .option('--include-partial', 'keep an incomplete last period in the rates')
    .addOption(new Option('--format <format>', 'format of the headline findings on standard output').choices(['table', 'csv', 'json']).default('table'));
  addEventOptions(cmd).action((opts: ReportCliOptions & { format: Format }) => runReport(opts, io));
}
