/** `tidemark cohorts`: the acquisition-cohort triangle and the classic retention measures. */
import type { Command } from 'commander';
import { Option } from 'commander';
import { TidemarkError, showValue } from '../../errors.js';
import { cohortReport, type CohortsOutput } from '../../explain/cohortReport.js';
import { addEventOptions, addFormatOptions, addPartialOption, addWaistOption, analysisInput, partialJson, type CommonOptions } from '../common.js';
import { emit, json, pct, textTable, toCsv, type Format, wrapProse } from '../format.js';
import type { Io } from '../io.js';

export interface CohortsCliOptions extends CommonOptions {
  ages: string;
  window: string;
  group: 'month' | 'all' | 'cohort';
}

/** Oldest age the options may ask for (a cohort older than this is beyond any real log's periods). */
export const MAX_AGE = 10_000;

function ages(text: string): number[] {
  const parts = text.split(',').map((x) => x.trim());
  const v = parts.map((x) => (/^\d+$/.test(x) ? Number(x) : NaN));
  if (v.some((x) => !(x >= 1 && x <= MAX_AGE))) throw new TidemarkError('USAGE', `'${showValue(text)}' must be whole numbers from 1 to ${MAX_AGE.toLocaleString('en-US')}, comma-separated`, { key: '--ages' }, 'For example --ages 1,4,12');
  return v;
}

function windowOf(text: string): [number, number] {
  const m = /^(\d+)\.\.(\d+)$/.exec(text.trim());
  if (!m || +m[1] < 1 || +m[1] > +m[2] || +m[2] > MAX_AGE) throw new TidemarkError('USAGE', `'${showValue(text)}' must be A..B with 1 ≤ A ≤ B ≤ ${MAX_AGE.toLocaleString('en-US')}`, { key: '--window' }, 'For example --window 4..8');
  return [+m[1], +m[2]];
}

export function formatCohorts(c: CohortsOutput, format: Format, extra: object = {}): string {
  if (format === 'json') return json({ ...c, ...extra });
  const cells = c.triangle.flatMap((r) => r.cells.map((x) => [r.cohort, x.age, x.n, x.active, x.share]));
  if (format === 'csv') return toCsv(['cohort', 'age', 'users', 'active', 'share'], cells);
  const show = [1, 2, 4, 8, 12];
  const out = ['Cohort triangle: share of each acquisition cohort active N periods after its first'];
  out.push(textTable(['cohort', 'n', ...show.map((a) => `+${a}`), 'shape'], c.triangle.map((r, i) => [
    r.cohort, r.size, ...show.map((a) => (r.cells[a] ? pct(r.cells[a].share, 0) : '')), c.shapes[i]?.reading ?? '',
  ])).trimEnd());
  out.push('', 'Pooled over the cohorts that reached each age (Wilson 95%):');
  const row = (r: CohortsOutput['classic'][number], label: string) => [label, r.pooled.n, pct(r.pooled.rate), r.pooled.lower === null ? '-' : `${pct(r.pooled.lower)}-${pct(r.pooled.upper)}`, r.cohorts.length];
  out.push(textTable(['measure', 'users', 'rate', '95% interval', 'cohorts'], [
    ...c.classic.map((r) => row(r, `active at +${r.from}`)),
    ...c.onOrAfter.map((r) => row(r, `active at +${r.from} or later`)),
    ...(c.window ? [row(c.window, `active in +${c.window.from}..+${c.window.to}`)] : []),
  ]).trimEnd());
  if (c.windowNote) out.push(`note: ${c.windowNote}`);
  const rules = [...new Set(c.shapes.filter((s) => s.reading !== 'too short').map((s) => s.reading))];
  out.push('', `Shape readings (${rules.join(', ') || 'none'}): decided per cohort from the mean slope of its last ages against its first; the rule is in the JSON output (shapes[].rule).`);
  out.push('Note: a habit that goes with staying in these curves is a correlation, not a cause; test it with an experiment.');
  return wrapProse(`${out.join('\n')}\n`);
}

export async function runCohorts(o: CohortsCliOptions, io: Io): Promise<void> {
  const measure = { ages: ages(o.ages), window: windowOf(o.window), groupBy: o.group };
  const input = await analysisInput(o, io, { partial: 'drop' });
  const c = cohortReport(input.waist.tables.cohorts, { ...measure, minN: input.waist.manifest.rules.minCell });
  emit(formatCohorts(c, o.format, partialJson(input)), o.out, io);
}

export function cohortsCommand(program: Command, io: Io): void {
  const cmd = program
    .command('cohorts')
    .description('acquisition cohorts: the retention triangle, N-period, on-or-after and window retention, grouped curves and shape readings')
    .option('--ages <list>', 'ages N for N-period and on-or-after retention', '1,4,12')
    .option('--window <a..b>', 'ages for window retention (active at least once in them)', '4..8')
    .addOption(new Option('--group <by>', 'group cohorts for the grouped curves').choices(['month', 'all', 'cohort']).default('month'));
  addFormatOptions(addPartialOption(addEventOptions(addWaistOption(cmd))), 'table').action((opts: CohortsCliOptions) => runCohorts(opts, io));
}
