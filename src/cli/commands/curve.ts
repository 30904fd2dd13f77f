/** `tidemark curve`: shifted-beta-geometric fit of a cohort's survivors, and its projection. */
import type { Command } from 'commander';
import { checkSurvivors, MIN_FIT_AGES, type SbgFit } from '../../curve/sbg.js';
import { cohortCurves, fitCurves, type CurveOutput } from '../../curve/run.js';
import { TidemarkError, showValue } from '../../errors.js';
import { addEventOptions, addFormatOptions, addPartialOption, addWaistOption, analysisInput, partialJson, type CommonOptions } from '../common.js';
import { asFlags, wholeNumber } from '../options.js';
import { emit, json, pct, textTable, toCsv, type Format, wrapProse } from '../format.js';
import type { Io } from '../io.js';

export interface CurveCliOptions extends Omit<CommonOptions, 'events'> {
  events?: string[];
  alive?: string;
  horizon: string;
  minSize: string;
}

export type { CurveOutput };

/** Longest projection of a curve, in periods. */
export const MAX_CURVE_HORIZON = 1000;

/** How a fit ended, for the table: '' when it converged inside the search box. */
export function fitFlag(f: Pick<SbgFit, 'converged' | 'boundary'>): string {
  return [f.converged ? '' : 'not converged', f.boundary ? 'on boundary' : ''].filter(Boolean).join(', ');
}

export function formatCurve(c: CurveOutput, format: Format, extra: object = {}): string {
  if (format === 'json') return json(c.fits.length === 1 && c.fits[0].cohort === 'given' ? { ...c.fits[0], model: c.model, ...extra } : { ...c, ...extra });
  const rows = c.fits.flatMap((f) => f.projection.map((p) => [f.cohort, p.t, p.survival, p.t < f.survivors.length ? f.survivors[p.t] / f.survivors[0] : '']));
  if (format === 'csv') return toCsv(['cohort', 't', 'survival', 'observed'], rows);
  const out = [`${c.model}: fitted by maximum likelihood`];
  const flagged = c.fits.some((f) => fitFlag(f) !== '');
  out.push(textTable(['cohort', 'n0', 'alpha', 'beta', 'log-lik', 'S(end)', 'S(horizon)', 'more periods', ...(flagged ? ['fit'] : [])], c.fits.map((f) => [
    f.cohort, f.survivors[0], f.alpha.toFixed(3), f.beta.toFixed(3), f.logLikelihood.toFixed(2), pct(f.projection[f.survivors.length - 1]?.survival), pct(f.projection[f.projection.length - 1].survival), f.expectedRemainingLifetime.toFixed(1),
    ...(flagged ? [fitFlag(f) || 'ok'] : []),
  ])).trimEnd());
  out.push(`"more periods": expected further periods a user still alive at the last observed age stays (summed over the next ${c.fits[0]?.lifetimeCap ?? 100}).`);
  if (c.fits.some((f) => !f.converged)) out.push('not converged: the search stopped before the likelihood settled; alpha and beta are the best values found, not a maximum.');
  if (c.fits.some((f) => f.boundary)) out.push('on boundary: the best fit lies at the edge of the search (ln alpha or ln beta near ±15): the survivors push the model to a limit (say, users who all leave at once mixed with users who never leave), so alpha and beta are bounds, not estimates; read the projection with care.');
  for (const s of c.skipped) out.push(`skipped ${s.cohort}: ${s.reason}`);
  return wrapProse(`${out.join('\n')}\n`);
}

/** --alive: counts by age, checked as a fit needs them (exit 2 naming the flag and the entry). */
export function aliveOption(text: string): number[] {
  const parts = text.split(',').map((x) => x.trim());
  const nums = parts.map((x) => (/^\+?(\d+(\.\d*)?|\.\d+)(e[+-]?\d+)?$/i.test(x) ? Number(x) : NaN));
  const bad = nums.findIndex((x) => !Number.isFinite(x));
  if (bad >= 0) throw new TidemarkError('USAGE', `entry ${bad + 1} ('${showValue(parts[bad])}') is not a count ≥ 0`, { key: '--alive' }, 'Give counts like 1000,631,468,382');
  const rise = nums.findIndex((x, i) => i > 0 && x > nums[i - 1]);
  if (rise > 0) throw new TidemarkError('USAGE', `entry ${rise + 1} (${nums[rise]}) is above entry ${rise} (${nums[rise - 1]}): survivors can only stay level or fall`, { key: '--alive' }, 'Give the users still active at ages 0, 1, 2, …');
  if (nums.length < MIN_FIT_AGES) {
    throw new TidemarkError('USAGE', `${nums.length === 1 ? 'one age' : `${nums.length} ages`} cannot identify the curve: a fit of two parameters needs survivors at ${MIN_FIT_AGES} ages or more`, { key: '--alive' }, 'Give counts at ages 0, 1 and 2 at least');
  }
  try {
    checkSurvivors(nums);
  } catch (e) {
    if (e instanceof TidemarkError) throw new TidemarkError('USAGE', e.message, { key: '--alive' }, e.hint);
    throw e;
  }
  return nums;
}

export async function runCurve(o: CurveCliOptions, io: Io): Promise<void> {
  const horizon = wholeNumber(o.horizon, '--horizon', 0, MAX_CURVE_HORIZON);
  const minSize = wholeNumber(o.minSize, '--min-size', 1);
  let out: CurveOutput;
  let extra: object = {};
  if (o.alive !== undefined) {
    if (o.events || o.db || o.waist || o.store) throw new TidemarkError('USAGE', `give either --alive or ${o.events ? '--events' : o.waist ? '--waist' : '--store'}, not both`, { key: '--alive' });
    out = fitCurves([{ cohort: 'given', survivors: aliveOption(o.alive) }], { horizon, minSize, given: true });
  } else {
    if (!o.events && !o.db && !o.waist && !o.store) throw new TidemarkError('USAGE', 'give --alive n0,n1,…, --events, --waist or --store', { key: '--alive' }, 'See tidemark curve --help');
    const input = await analysisInput(o as CommonOptions, io, { partial: 'drop' });
    extra = partialJson(input);
    out = asFlags(() => cohortCurves(input.waist.tables, input.waist.manifest.rules.lapseLimit, { horizon, minSize }), {});
  }
  emit(formatCurve(out, o.format, extra), o.out, io);
}

export function curveCommand(program: Command, io: Io): void {
  const cmd = program
    .command('curve')
    .description('fit the shifted-beta-geometric model to cohort survivors (not yet dormant) and project the curve')
    .option('--alive <counts>', 'survivors by age, n0,n1,…,nT (e.g. 1000,631,468,382)')
    .option('--events <files...>', 'fit every acquisition cohort from events instead')
    .option('--horizon <n>', `last age to project to (0 to ${MAX_CURVE_HORIZON})`, '12')
    .option('--min-size <n>', 'with --events: skip cohorts smaller than this', '30');
  addPartialOption(addEventOptions(addWaistOption(cmd), false));
  addFormatOptions(cmd, 'table').action((opts: CurveCliOptions) => runCurve(opts, io));
}
