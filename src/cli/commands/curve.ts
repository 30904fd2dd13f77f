/** `tidemark curve`: shifted-beta-geometric fit of a cohort's survivors, and its projection. */
import type { Command } from 'commander';
import { fitSbg, type SbgFit } from '../../curve/sbg.js';
import { TidemarkError } from '../../errors.js';
import { MemoryEngine } from '../../engines/memory.js';
import { cohortSurvivors } from '../../curve/survivors.js';
import { addEventOptions, addFormatOptions, intOption, note, noteRun, rangeOf, resolveRules, sourceOf, type CommonOptions } from '../common.js';
import { emit, json, pct, textTable, toCsv, type Format, wrapProse } from '../format.js';
import type { Io } from '../io.js';

export interface CurveCliOptions extends Omit<CommonOptions, 'events'> {
  events?: string[];
  alive?: string;
  horizon: string;
  minSize: string;
}

export interface CurveOutput {
  model: string;
  fits: ({ cohort: string; survivors: number[] } & Omit<SbgFit, 'projection'> & { projection: { t: number; survival: number }[] })[];
  skipped: { cohort: string; reason: string }[];
}

export function formatCurve(c: CurveOutput, format: Format): string {
  if (format === 'json') return json(c.fits.length === 1 && c.fits[0].cohort === 'given' ? { ...c.fits[0], model: c.model } : c);
  const rows = c.fits.flatMap((f) => f.projection.map((p) => [f.cohort, p.t, p.survival, p.t < f.survivors.length ? f.survivors[p.t] / f.survivors[0] : '']));
  if (format === 'csv') return toCsv(['cohort', 't', 'survival', 'observed'], rows);
  const out = [`${c.model}: fitted by maximum likelihood`];
  out.push(textTable(['cohort', 'n0', 'alpha', 'beta', 'log-lik', 'S(end)', 'S(horizon)', 'more periods'], c.fits.map((f) => [
    f.cohort, f.survivors[0], f.alpha.toFixed(3), f.beta.toFixed(3), f.logLikelihood.toFixed(2), pct(f.projection[f.survivors.length - 1]?.survival), pct(f.projection[f.projection.length - 1].survival), f.expectedRemainingLifetime.toFixed(1),
  ])).trimEnd());
  out.push(`"more periods": expected further periods a member still alive at the last observed age stays (summed over the next ${c.fits[0]?.lifetimeCap ?? 100}).`);
  for (const s of c.skipped) out.push(`skipped ${s.cohort}: ${s.reason}`);
  return wrapProse(`${out.join('\n')}\n`);
}

export async function runCurve(o: CurveCliOptions, io: Io): Promise<void> {
  const horizon = intOption(o.horizon, '--horizon', 0);
  const model = 'shifted-beta-geometric (Fader & Hardie 2007)';
  let inputs: { cohort: string; survivors: number[] }[];
  if (o.alive) {
    if (o.events) throw new TidemarkError('USAGE', 'give either --alive or --events, not both', { key: '--alive' });
    const parts = o.alive.split(',').map((x) => x.trim());
    const nums = parts.map(Number);
    const bad = parts.findIndex((x, i) => x === '' || !Number.isFinite(nums[i]));
    if (bad >= 0) throw new TidemarkError('USAGE', `--alive entry ${bad + 1} ('${parts[bad]}') is not a number`, { key: '--alive' }, 'Give counts like 1000,631,468,382');
    inputs = [{ cohort: 'given', survivors: nums }];
  } else {
    if (!o.events) throw new TidemarkError('USAGE', 'give --alive n0,n1,… or --events', { key: '--alive' }, 'See tidemark curve --help');
    const rules = resolveRules(o as CommonOptions);
    const r = await new MemoryEngine().run(sourceOf(o as CommonOptions), rules, rangeOf(o as CommonOptions));
    noteRun(io, o, r);
    inputs = cohortSurvivors(r.waist, rules.lapseLimit);
  }
  const out: CurveOutput = { model, fits: [], skipped: [] };
  const minSize = intOption(o.minSize, '--min-size', 1);
  for (const { cohort, survivors } of inputs) {
    if (!o.alive && survivors.length < 3) {
      out.skipped.push({ cohort, reason: `observed over ${survivors.length} ages, too few to fit` });
      continue;
    }
    if (!o.alive && survivors[0] < minSize) {
      out.skipped.push({ cohort, reason: `${survivors[0]} members, fewer than --min-size ${minSize}` });
      continue;
    }
    try {
      const fit = fitSbg(survivors, { horizon: Math.max(horizon, survivors.length - 1) });
      out.fits.push({ cohort, survivors, ...fit });
    } catch (e) {
      if (o.alive || !(e instanceof TidemarkError) || e.code !== 'NOT_ENOUGH_DATA') throw e;
      out.skipped.push({ cohort, reason: e.message });
    }
  }
  if (out.fits.length === 0) throw new TidemarkError('NOT_ENOUGH_DATA', 'no cohort could be fitted', {}, out.skipped[0]?.reason);
  emit(formatCurve(out, o.format), o.out, io);
}

export function curveCommand(program: Command, io: Io): void {
  const cmd = program
    .command('curve')
    .description('fit the shifted-beta-geometric model to cohort survivors (not yet dormant) and project the curve')
    .option('--alive <counts>', 'survivors by age, n0,n1,…,nT (e.g. 1000,631,468,382)')
    .option('--events <files...>', 'fit every acquisition cohort from events instead')
    .option('--horizon <n>', 'last age to project to', '12')
    .option('--min-size <n>', 'with --events: skip cohorts smaller than this', '30');
  addEventOptions(cmd, false);
  addFormatOptions(cmd, 'table').action((opts: CurveCliOptions) => runCurve(opts, io));
}
