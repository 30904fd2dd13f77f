/**
 * Kaplan–Meier product-limit estimate of the survival function (Kaplan & Meier 1958, JASA
 * 53:457–481) from aggregated durations, with Greenwood's (1926) variance
 *   Var Ŝ(t) = Ŝ(t)² Σ_{tᵢ ≤ t} dᵢ / (nᵢ(nᵢ − dᵢ)).
 *
 * Intervals: `lower`/`upper` are the log-log ("complementary log-log") transformed interval
 * (Kalbfleisch & Prentice, The Statistical Analysis of Failure Time Data, 1980; Collett, Modelling
 * Survival Data in Medical Research, ch. 2),
 * Ŝ^exp(∓z·s/ln Ŝ) with s = √Σ dᵢ/(nᵢ(nᵢ − dᵢ)); it always lies inside [0, 1]. `plainLower` /
 * `plainUpper` are Ŝ ± z·SE clipped to [0, 1]. Where Ŝ is 1 (no event yet) or 0 (everyone at risk
 * ended) the standard error is reported as 0 and both intervals collapse to the point.
 *
 * Points: one at t = 0 and one at every event time. `censored` counts users censored at or after
 * that point's time and before the next point, so atRisk(next) = atRisk − events − censored.
 * When events happen at t = 0 the t = 0 point carries them (its survival is then below 1).
 * Policy: see `riskTable.ts` (no users ⇒ NOT_ENOUGH_DATA).
 *
 * Median: the time where Ŝ first falls to 0.5 or below, and when Ŝ sits exactly at 0.5 over a stretch
 * (from the event time tⱼ to the next event time tⱼ₊₁) the midpoint (tⱼ + tⱼ₊₁)/2 of that stretch.
 * This is the convention of SAS/STAT PROC LIFETEST ("Product-Limit Method": a percentile on a flat
 * stretch is the midpoint of the stretch) and of the R survival package's quantile.survfit (Therneau),
 * which notes that it gives the usual sample median when nobody is censored. A curve that stays at
 * 0.5 to the end of the data takes the midpoint of tⱼ and the last observed time, as R does. The other
 * convention found in the literature, the smallest t with Ŝ(t) ≤ 0.5, gives tⱼ instead; the two agree
 * whenever Ŝ steps over 0.5 rather than onto it. "Exactly" allows 1e-12 for rounding in the product.
 */
import { TidemarkError } from '../errors.js';
import type { DurationRow } from '../flows/types.js';
import { zForConfidence } from '../stats/normal.js';
import { checkDurationRows, riskTable } from './riskTable.js';

export interface KaplanMeierPoint {
  t: number;
  survival: number;
  atRisk: number;
  events: number;
  censored: number;
  /** Greenwood standard error of the survival. */
  se: number;
  /** Log-log transformed interval. */
  lower: number;
  upper: number;
  /** Plain interval survival ± z·se, clipped to [0, 1]. */
  plainLower: number;
  plainUpper: number;
}

export interface KaplanMeierCurve {
  points: KaplanMeierPoint[];
  /** Where the curve falls to 0.5 (midpoint of a flat stretch at exactly 0.5, see the module comment); null when it never gets there. */
  median: number | null;
  users: number;
  events: number;
  confidence: number;
}

function point(t: number, survival: number, atRisk: number, events: number, greenwood: number, z: number): KaplanMeierPoint {
  if (survival === 0 || survival === 1 || !Number.isFinite(greenwood)) {
    return { t, survival, atRisk, events, censored: 0, se: 0, lower: survival, upper: survival, plainLower: survival, plainUpper: survival };
  }
  const se = survival * Math.sqrt(greenwood);
  const spread = (z * Math.sqrt(greenwood)) / Math.log(survival); // negative
  return {
    t, survival, atRisk, events, censored: 0, se,
    lower: Math.pow(survival, Math.exp(-spread)),
    upper: Math.pow(survival, Math.exp(spread)),
    plainLower: Math.max(0, survival - z * se),
    plainUpper: Math.min(1, survival + z * se),
  };
}

/**
 * Kaplan–Meier curve of all `rows` pooled (filter by group first, or use {@link kaplanMeierByGroup}).
 *
 * @throws {TidemarkError} INPUT_INVALID for a bad row or level; NOT_ENOUGH_DATA when no row has users.
 * @example kaplanMeier(sixMp).points[1] // { t: 6, atRisk: 21, events: 3, survival: 0.857142…, se: 0.0763604…, … } (Freireich et al. 1963)
 * @example kaplanMeier(durations 1, 2, 3, 4, all observed).median // 2.5: Ŝ = 0.5 from t = 2 to t = 3
 */
export function kaplanMeier(rows: readonly DurationRow[], confidence = 0.95): KaplanMeierCurve {
  const z = zForConfidence(confidence);
  const table = riskTable(rows);
  if (table.length === 0) throw new TidemarkError('NOT_ENOUGH_DATA', 'kaplanMeier: no users in the durations');
  const users = table[0].atRisk;
  const points: KaplanMeierPoint[] = [];
  let survival = 1;
  let greenwood = 0;
  let events = 0;
  if (table[0].t > 0 || table[0].events === 0) points.push(point(0, 1, users, 0, 0, z));
  for (const row of table) {
    if (row.events > 0) {
      events += row.events;
      survival *= 1 - row.events / row.atRisk;
      greenwood += row.atRisk > row.events ? row.events / (row.atRisk * (row.atRisk - row.events)) : Infinity;
      points.push(point(row.t, survival, row.atRisk, row.events, greenwood, z));
    }
    points[points.length - 1].censored += row.censored;
  }
  return { points, median: medianTime(points, table[table.length - 1].t), users, events, confidence };
}

/** Rounding allowed when deciding that Ŝ sits exactly at 0.5. */
const HALF_TOLERANCE = 1e-12;

/** The median of the curve's points (see the module comment); `lastTime` is the last observed time. */
function medianTime(points: readonly KaplanMeierPoint[], lastTime: number): number | null {
  const i = points.findIndex((p) => p.survival <= 0.5 + HALF_TOLERANCE);
  if (i < 0) return null;
  const at = points[i];
  if (Math.abs(at.survival - 0.5) > HALF_TOLERANCE) return at.t;
  const end = i + 1 < points.length ? points[i + 1].t : lastTime;
  return (at.t + end) / 2;
}

/**
 * One Kaplan–Meier curve per group label, in the order groups first appear; groups whose rows all
 * have users = 0 are left out.
 *
 * @throws {TidemarkError} as {@link kaplanMeier}; NOT_ENOUGH_DATA when no group has users.
 * @example kaplanMeierByGroup(freireich).map((g) => g.curve.median) // [23, 8]
 */
export function kaplanMeierByGroup(rows: readonly DurationRow[], confidence = 0.95): { group: string; curve: KaplanMeierCurve }[] {
  checkDurationRows(rows);
  const groups = new Map<string, DurationRow[]>();
  for (const r of rows) {
    const list = groups.get(r.group) ?? [];
    list.push(r);
    groups.set(r.group, list);
  }
  const out = [...groups]
    .filter(([, list]) => list.some((r) => r.users > 0))
    .map(([group, list]) => ({ group, curve: kaplanMeier(list, confidence) }));
  if (out.length === 0) throw new TidemarkError('NOT_ENOUGH_DATA', 'kaplanMeierByGroup: no users in the durations');
  return out;
}
