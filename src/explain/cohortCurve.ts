/**
 * Grouped retention curves and a reading of a curve's shape.
 *
 * Grouped curve: at each age k, the members of every cohort that observed age k are added:
 * share(k) = Σ active_c(k) / Σ size_c — a weighted average of the cohorts' shares with weights
 * size_c, so large cohorts count more and young cohorts drop out of the later ages.
 *
 * Shape reading (per curve, shares by age, share(0) = 1): the step from age 0 to 1 is the first
 * drop-off and is left out. Slopes are changes of share in points per period from age 1 on. With
 * k' = min(k, ⌊(A − 1)/2⌋) (A the last age), `first` is the mean slope from age 1 to 1 + k' and
 * `last` the mean slope from age A − k' to A. The reading is decided in this order:
 *   last > +rise                                  → 'rising tail'
 *   last ≥ −flat                                  → 'flattening'
 *   first < 0 and last ≥ ratio × first            → 'flattening' (late decline ≤ ratio of the early one)
 *   otherwise                                     → 'still falling'
 * and 'too short' when k' < 1 (fewer than four ages). Defaults: k = 3, flat = rise = 0.5 points a
 * period, ratio = 0.25. The result states the rule that decided it.
 */
import { TidemarkError } from '../errors.js';
import type { CohortRow } from '../flows/types.js';
import { activeOnOrAfter, checkCohortRows, type CohortRowExt } from './cohorts.js';

export interface CurvePoint {
  age: number;
  /** Members of the cohorts that observed this age. */
  n: number;
  active: number;
  /** active / n; null when n = 0. */
  share: number | null;
  /** How many cohorts observed this age. */
  cohorts: number;
}

/**
 * The grouped curve of `rows` for classic (active at age k) or onOrAfter (active at k or later).
 *
 * @throws {TidemarkError} INPUT_INVALID for a bad row, or onOrAfter without per-member tables.
 * @example groupedCurve([{ cohort: 'a', size: 40, active: [40, 22, 18] }, { cohort: 'b', size: 60, active: [60, 30] }])
 *   // [{ age: 0, n: 100, active: 100, share: 1, cohorts: 2 }, { age: 1, n: 100, active: 52, share: 0.52, cohorts: 2 },
 *   //  { age: 2, n: 40, active: 18, share: 0.45, cohorts: 1 }]
 */
export function groupedCurve(rows: readonly CohortRowExt[], measure: 'classic' | 'onOrAfter' = 'classic'): CurvePoint[] {
  checkCohortRows(rows);
  const ages = Math.max(0, ...rows.map((r) => r.active.length));
  const out: CurvePoint[] = Array.from({ length: ages }, (_, age) => ({ age, n: 0, active: 0, share: null, cohorts: 0 }));
  rows.forEach((r, i) => {
    r.active.forEach((a, age) => {
      const p = out[age];
      p.n += r.size;
      p.active += measure === 'classic' ? a : activeOnOrAfter(r, age, i);
      p.cohorts += 1;
    });
  });
  for (const p of out) p.share = p.n > 0 ? p.active / p.n : null;
  return out;
}

/**
 * Grouped curves of cohorts sharing a group label (e.g. the month of the cohort), groups in order
 * of first appearance.
 *
 * @throws {TidemarkError} as {@link groupedCurve}.
 * @example groupedCurves(rows, (r) => r.cohort.slice(0, 7)) // [{ group: '2026-01', curve: [...] }, …]
 */
export function groupedCurves(
  rows: readonly CohortRowExt[],
  groupOf: (row: CohortRowExt) => string,
  measure: 'classic' | 'onOrAfter' = 'classic',
): { group: string; curve: CurvePoint[] }[] {
  const groups = new Map<string, CohortRowExt[]>();
  for (const r of rows) {
    const g = groupOf(r);
    const list = groups.get(g);
    if (list) list.push(r);
    else groups.set(g, [r]);
  }
  return [...groups].map(([group, list]) => ({ group, curve: groupedCurve(list, measure) }));
}

export type CurveReading = 'still falling' | 'flattening' | 'rising tail' | 'too short';

export interface ShapeOptions {
  /** Ages averaged at each end; default 3. */
  k?: number;
  /** A late slope at or above −flat points a period reads as flattening; default 0.5. */
  flat?: number;
  /** A late slope above +rise points a period reads as a rising tail; default 0.5. */
  rise?: number;
  /** A late decline no more than this fraction of the early one reads as flattening; default 0.25. */
  ratio?: number;
}

export interface CurveShape {
  reading: CurveReading;
  /** The comparison that decided the reading, in words. */
  rule: string;
  /** Mean slopes in points per period; null when too short. */
  first: number | null;
  last: number | null;
  /** Ages averaged at each end (k'). */
  k: number;
}

const f1 = (v: number): string => (Math.round(v * 10) / 10).toFixed(1);

/**
 * Reads the shape of one curve given as shares by age (index = age).
 *
 * @throws {TidemarkError} INPUT_INVALID for a non-finite share or bad option.
 * @example curveShape([1, 0.5, 0.4, 0.35, 0.33, 0.32, 0.318]).reading // 'flattening'
 */
export function curveShape(shares: readonly number[], options: ShapeOptions = {}): CurveShape {
  const k = options.k ?? 3;
  const flat = options.flat ?? 0.5;
  const rise = options.rise ?? 0.5;
  const ratio = options.ratio ?? 0.25;
  if (!(Number.isInteger(k) && k >= 1)) throw new TidemarkError('INPUT_INVALID', `k must be an integer ≥ 1, got ${k}`, { key: 'k' });
  for (const [name, v] of [['flat', flat], ['rise', rise], ['ratio', ratio]] as const) {
    if (!(Number.isFinite(v) && v >= 0)) throw new TidemarkError('INPUT_INVALID', `${name} must be a finite number ≥ 0, got ${v}`, { key: name });
  }
  shares.forEach((s, age) => {
    if (!Number.isFinite(s)) throw new TidemarkError('INPUT_INVALID', `share at age ${age} must be a finite number, got ${s}`, { key: `shares[${age}]` });
  });
  const A = shares.length - 1;
  const kk = Math.min(k, Math.floor((A - 1) / 2));
  if (kk < 1) {
    return { reading: 'too short', rule: `${A + 1} ages observed; a reading needs at least 4 (ages 0 to 3)`, first: null, last: null, k: Math.max(0, kk) };
  }
  const first = ((shares[1 + kk] - shares[1]) * 100) / kk;
  const last = ((shares[A] - shares[A - kk]) * 100) / kk;
  const said = `mean change ${f1(last)} points a period from age ${A - kk} to ${A}, against ${f1(first)} from age 1 to ${1 + kk}`;
  if (last > rise) return { reading: 'rising tail', rule: `${said}; ${f1(last)} > +${f1(rise)} ⇒ rising tail`, first, last, k: kk };
  if (last >= -flat) return { reading: 'flattening', rule: `${said}; ${f1(last)} ≥ ${f1(-flat)} ⇒ flattening`, first, last, k: kk };
  if (first < 0 && last >= ratio * first) {
    return { reading: 'flattening', rule: `${said}; the late decline is at most ${ratio} of the early one ⇒ flattening`, first, last, k: kk };
  }
  return { reading: 'still falling', rule: `${said}; below ${f1(-flat)} and steeper than ${ratio} of the early decline ⇒ still falling`, first, last, k: kk };
}

export interface CohortShape extends CurveShape {
  cohort: string;
  size: number;
  /** size < minN: the reading rests on few members. */
  small: boolean;
}

/**
 * The shape reading of every cohort's classic curve.
 *
 * @throws {TidemarkError} INPUT_INVALID for a bad row or option.
 * @example cohortShapes([{ cohort: 'a', size: 40, active: [40, 22, 18] }])[0].reading // 'too short' (an empty cohort reads 'too short' too)
 */
export function cohortShapes(rows: readonly CohortRow[], options: ShapeOptions & { minN?: number } = {}): CohortShape[] {
  checkCohortRows(rows);
  const minN = options.minN ?? 30;
  return rows.map((r) => {
    const base = { cohort: r.cohort, size: r.size, small: r.size < minN };
    if (r.size === 0) return { ...base, reading: 'too short' as const, rule: 'the cohort has no members', first: null, last: null, k: 0 };
    return { ...base, ...curveShape(r.active.map((a) => a / r.size), options) };
  });
}
