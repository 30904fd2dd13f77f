/**
 * The curve job: fit the shifted-beta-geometric model to survivors — one vector given by the user, or
 * every acquisition cohort of a waist — and project each curve. Pure.
 */
import { TidemarkError } from '../errors.js';
import type { WaistTables } from '../flows/types.js';
import { fitSbg, MIN_FIT_AGES, type SbgFit } from './sbg.js';
import { cohortSurvivors } from './survivors.js';
import { plural } from '../text/plural.js';

export const CURVE_MODEL = 'shifted-beta-geometric (Fader & Hardie 2007)';

export interface CurveOutput {
  model: string;
  fits: ({ cohort: string; survivors: number[] } & Omit<SbgFit, 'projection'> & { projection: { t: number; survival: number }[] })[];
  skipped: { cohort: string; reason: string }[];
}

/**
 * Fit each cohort's survivors. A given vector (`given`) must fit; a cohort of a waist with fewer than
 * MIN_FIT_AGES ages or fewer than `minSize` members is skipped with the reason.
 * @throws {TidemarkError} NOT_ENOUGH_DATA when nothing could be fitted.
 */
export function fitCurves(inputs: readonly { cohort: string; survivors: number[] }[], o: { horizon: number; minSize: number; given: boolean }): CurveOutput {
  const out: CurveOutput = { model: CURVE_MODEL, fits: [], skipped: [] };
  for (const { cohort, survivors } of inputs) {
    if (!o.given && survivors.length < MIN_FIT_AGES) {
      out.skipped.push({ cohort, reason: `observed over ${plural(survivors.length, 'age')}, too few to fit` });
      continue;
    }
    if (!o.given && survivors[0] < o.minSize) {
      out.skipped.push({ cohort, reason: `${plural(survivors[0], 'user')}, fewer than the minimum size ${o.minSize}` });
      continue;
    }
    try {
      const fit = fitSbg(survivors, { horizon: Math.max(o.horizon, survivors.length - 1) });
      out.fits.push({ cohort, survivors, ...fit });
    } catch (e) {
      if (o.given || !(e instanceof TidemarkError) || e.code !== 'NOT_ENOUGH_DATA') throw e;
      out.skipped.push({ cohort, reason: e.message });
    }
  }
  if (out.fits.length === 0) throw new TidemarkError('NOT_ENOUGH_DATA', 'no cohort could be fitted', {}, out.skipped[0]?.reason);
  return out;
}

/** Every acquisition cohort of a waist, fitted (a member is lost when the quiet run that made them dormant began). */
export function cohortCurves(tables: WaistTables, lapseLimit: number, o: { horizon: number; minSize: number }): CurveOutput {
  return fitCurves(cohortSurvivors(tables, lapseLimit), { ...o, given: false });
}
