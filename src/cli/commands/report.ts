/** `tidemark report`: the Monday report — one self-contained HTML page, Markdown, and data files. */
import type { Command } from 'commander';
import type { ReportModel } from '../../report/build.js';
import { reportOf } from '../../report/run.js';
import { comparisonText, lineText } from '../../report/story.js';
import { digestSection } from '../../store/digest.js';
import { analysisWaist } from '../../waist/derive.js';
import { writeReport } from '../../report/write.js';
import { ansiState } from '../../report/palette.js';
import { addEventOptions, addPartialOption, addWaistOption, note, noteRun, periodFlagHint, resolveRules, waistInput, type CommonOptions } from '../common.js';
import { asFlags, dateOption, scenarioOption, seedOption, wholeNumber } from '../options.js';
import { lifecycleMoves } from '../../lifecycle/moves.js';
import { stateNames } from '../../lifecycle/states.js';
import { MAX_HORIZON } from './project.js';
import { json, terminalText, toCsv, type Format, wrapProse } from '../format.js';
import { Option } from 'commander';
import type { Io } from '../io.js';
import { progress } from '../progress.js';
import { addPerPersonOption, type PerPersonOption } from '../perPerson.js';

export interface ReportCliOptions extends Omit<CommonOptions, 'out'>, PerPersonOption {
  out: string;
  base?: string;
  compare?: string;
  by?: string;
  horizon: string;
  seed: string;
  /** Named scenarios for the projection, `NAME=edits` (see `project --scenario`). */
  scenario?: string[];
  includePartial?: boolean;
  generatedAt?: string;
}

/** The story for the terminal (the comparison, the story's lines, the warnings), with state names in their report colours on a colour terminal. */
export function headline(m: ReportModel, colour: boolean): string {
  const paint = (t: string) => (colour ? m.states.reduce((acc, s) => acc.replace(new RegExp(`\\b${s.name}\\b`, 'g'), ansiState(s.name, s.name, true, m.states)), t) : t);
  const lines = [m.title, m.subtitle, '', comparisonText(m.comparison, m.grainWord), ...m.story.map((l) => `* ${lineText(l)}`)];
  if (m.warnings.length) lines.push('', ...m.warnings.map((w) => `! ${w}`));
  // escape and wrap first (data never drives the terminal), then colour the state names
  return paint(wrapProse(`${lines.join('\n')}\n`));
}

export function formatHeadline(m: ReportModel, format: Format, colour: boolean, files: string[], dir: string): string {
  if (format === 'json') return json({ title: m.title, subtitle: m.subtitle, comparison: m.comparison, story: m.story.map((l) => ({ kind: l.kind, periods: l.periods, text: lineText(l) })), findings: m.findings, warnings: m.warnings, out: dir, files });
  if (format === 'csv') return toCsv(['kind', 'text'], [...m.story.map((l) => [l.kind, lineText(l)]), ...m.findings.map((f) => [f.kind, f.text]), ...m.warnings.map((w) => ['warning', w])]);
  return headline(m, colour);
}

export async function runReport(o: ReportCliOptions & { format: Format }, io: Io & { stdoutIsTTY?: boolean }): Promise<void> {
  const base = dateOption(o.base, '--base');
  const compare = dateOption(o.compare, '--compare');
  const horizon = wholeNumber(o.horizon, '--horizon', 1, MAX_HORIZON);
  const seed = seedOption(o.seed);
  // scenarios name states and moves: checked against the rules file before any event is read
  const early = o.events || o.db ? (() => {
    const r = resolveRules(o as CommonOptions);
    return scenarioOption(o.scenario ?? [], '--scenario', stateNames(r), horizon, lifecycleMoves(r));
  })() : undefined;
  const bar = progress(io, o.format !== 'json', 4);
  try {
    bar.step('reading and classifying', 0);
    const { waist: full, flags, digest } = await waistInput(o as CommonOptions, { by: o.by, sections: true });
    bar.step('analysing', 2);
    const hint = periodFlagHint(analysisWaist(full, { includePartial: o.includePartial }), { base, compare });
    // with --waist the states and moves a scenario may name come from its manifest
    const scenarios = early ?? scenarioOption(o.scenario ?? [], '--scenario', full.tables.states, horizon, lifecycleMoves(full.manifest.rules));
    const { model, waist } = asFlags(() => reportOf(full, { base, compare, horizon, seed, includePartial: o.includePartial, scenarios, ...(digest ? { digest: digestSection(digest) } : {}) }), { ...flags, base: '--base', compare: '--compare', scenarios: '--scenario' }, hint);
    bar.step('drawing charts', 3);
    const files = await writeReport(model, o.out, o.generatedAt ?? new Date().toISOString());
    bar.stop();
    noteRun(io, o, waist.manifest);
    note(io, o, `report: ${files.length} files in ${o.out} (open ${o.out}/index.html)`);
    const text = formatHeadline(model, o.format, Boolean(io.stdoutIsTTY) && o.format === 'table', files, o.out);
    // table text is escaped before it is coloured; CSV and JSON are escaped only on a terminal
    io.stdout(o.format !== 'table' && io.stdoutIsTTY ? terminalText(text) : text);
  } finally {
    bar.stop();
  }
}

export function reportCommand(program: Command, io: Io): void {
  const cmd = program
    .command('report')
    .description('write the lifecycle report: a self-contained HTML page, summary.md, digest.txt and the data behind every chart')
    .requiredOption('--out <dir>', 'folder to write the report into')
    .option('--base <period>', 'base period of the comparison every finding uses, a period retained into (default: the one before --compare)')
    .option('--compare <period>', 'compared period of that comparison (default: the latest)')
    .option('--by <column>', 'also split retention by this attribute column (refused when its values are nearly unique per user)')
    .option('--horizon <n>', `periods to project ahead (1 to ${MAX_HORIZON})`, '12')
    .option('--seed <n>', 'random seed of the projection bands and backtest', '1')
    .option('--generated-at <text>', 'the time written on the report (default: now), for reproducible output')
    .option('--scenario <name=edits>', 'a named scenario for the projection and the scenario chart, repeatable (as project --scenario)', (v: string, acc: string[]) => [...acc, v], [] as string[])
    .addOption(new Option('--format <format>', 'format of the headline findings on standard output').choices(['table', 'csv', 'json']).default('table'));
  addPerPersonOption(cmd);
  addPartialOption(addEventOptions(addWaistOption(cmd))).action((opts: ReportCliOptions & { format: Format }) => runReport(opts, io));
}
