/**
 * Cohort retention: the triangle, classic N-period retention, on-or-after retention and window
 * retention, per cohort and pooled.
 *
 * Ages count periods since a member's first active period (age 0; active[0] = size). A cohort
 * observed through age A = active.length − 1.
 *   classic(N)     members active exactly at age N                       — from `active` alone
 *   onOrAfter(N)   members active at age N or at any later observed age  — needs per-member data
 *   window(a, b)   members active at least once at ages a … b            — needs per-member data
 * Counts per age cannot give the last two (two members active at ages 1 and 2 look like one member
 * active at both), so the engine fills {@link CohortRowExt}: `lastActiveAge` suffices for
 * onOrAfter; `windowActive`, the triangle of all window counts, answers every window and is the
 * smallest table that does (its A(A+1)/2 entries above age 0 are free of each other in general).
 * `cohortRowFromUsers` in `cohortExt.ts` builds both from per-member active ages.
 *
 * onOrAfter(N) runs to each cohort's own last observed age, so older cohorts have more chances to
 * return: compare it across cohorts of equal observation only. Pooled values add members of every
 * cohort that observed the ages asked for.
 *
 * Policy: see `kitagawa.ts` (rate null for n = 0; `small` when n < minN; missing tables throw
 * INPUT_INVALID naming the field to fill).
 */
import { TidemarkError } from '../errors.js';
import type { CohortRow } from '../flows/types.js';
import { wilsonInterval } from '../stats/wilson.js';
import { rateOptions, type RateOptions } from './options.js';

/** A cohort row with the per-member summaries an engine adds for onOrAfter and window retention. */
export interface CohortRowExt extends CohortRow {
  /**
   * lastActiveAge[k]: members whose last active age within the observed ages is k.
   * Same length as `active`; sums to `size`. onOrAfter(N) = Σ_{k ≥ N} lastActiveAge[k].
   */
  lastActiveAge?: number[];
  /**
   * windowActive[a][j]: members active at least once at ages a … a + j, for 0 ≤ a ≤ A and
   * 0 ≤ j ≤ A − a. Row a has A − a + 1 entries, non-decreasing in j; windowActive[a][0] = active[a]
   * and row 0 is all `size`. window(a, b) = windowActive[a][b − a]; onOrAfter(N) = windowActive[N][A − N].
   */
  windowActive?: number[][];
}

export interface TriangleCell {
  age: number;
  /** Members of the cohort (the denominator). */
  n: number;
  active: number;
  /** active / n; null when n = 0. */
  share: number | null;
}

export interface TriangleRow {
  cohort: string;
  size: number;
  cells: TriangleCell[];
}

export interface CohortRate {
  cohort: string;
  n: number;
  retained: number;
  rate: number | null;
  small: boolean;
}

export interface PooledRate {
  n: number;
  retained: number;
  rate: number | null;
  /** Wilson interval; null when n = 0. */
  lower: number | null;
  upper: number | null;
  small: boolean;
}

export interface CohortRetention {
  measure: 'classic' | 'onOrAfter' | 'window';
  /** First age of the measure. */
  from: number;
  /** Last age; null for onOrAfter (each cohort's last observed age). */
  to: number | null;
  /** Cohorts that observed the ages asked for. */
  cohorts: CohortRate[];
  /** Cohorts too young for the measure. */
  notObserved: string[];
  pooled: PooledRate;
}

const close = (a: number, b: number): boolean => Math.abs(a - b) <= 1e-9 * Math.max(1, Math.abs(a), Math.abs(b));

/**
 * Checks cohort rows: unique labels, size ≥ 0, active[0] = size, 0 ≤ active[k] ≤ size, and the
 * shapes and sums of the extended tables where present.
 *
 * @throws {TidemarkError} INPUT_INVALID with key `cohorts[i].field`.
 */
export function checkCohortRows(rows: readonly CohortRowExt[]): void {
  const seen = new Set<string>();
  rows.forEach((r, i) => {
    const bad = (field: string, message: string): never => {
      throw new TidemarkError('INPUT_INVALID', `cohort '${r.cohort}': ${message}`, { key: `cohorts[${i}].${field}` });
    };
    if (seen.has(r.cohort)) bad('cohort', 'appears twice');
    seen.add(r.cohort);
    if (!(Number.isFinite(r.size) && r.size >= 0)) bad('size', `size must be a finite number ≥ 0, got ${r.size}`);
    if (r.active.length === 0 || r.active[0] !== r.size) bad('active', 'active[0] must equal size');
    r.active.forEach((v, k) => {
      if (!(v >= 0 && v <= r.size)) bad(`active[${k}]`, `must be between 0 and size ${r.size}, got ${v}`);
    });
    const A = r.active.length - 1;
    if (r.lastActiveAge) {
      if (r.lastActiveAge.length !== r.active.length) bad('lastActiveAge', `must have ${r.active.length} entries like active, got ${r.lastActiveAge.length}`);
      if (r.lastActiveAge.some((v) => !(v >= 0))) bad('lastActiveAge', 'entries must be numbers ≥ 0');
      if (!close(r.lastActiveAge.reduce((s, v) => s + v, 0), r.size)) bad('lastActiveAge', 'must sum to size');
    }
    if (r.windowActive) {
      const W = r.windowActive;
      if (W.length !== A + 1) bad('windowActive', `must have ${A + 1} rows (ages 0…${A}), got ${W.length}`);
      W.forEach((row, a) => {
        if (row.length !== A - a + 1) bad(`windowActive[${a}]`, `must have ${A - a + 1} entries, got ${row.length}`);
        if (row[0] !== r.active[a]) bad(`windowActive[${a}][0]`, `must equal active[${a}] = ${r.active[a]}`);
        row.forEach((v, j) => {
          if (!(v <= r.size) || (j > 0 && !(v >= row[j - 1]))) bad(`windowActive[${a}][${j}]`, 'rows must be non-decreasing and at most size');
        });
      });
      if (r.lastActiveAge) {
        for (let k = 0; k <= A; k++) {
          const fromW = W[k][A - k] - (k < A ? W[k + 1][A - k - 1] : 0);
          if (!close(fromW, r.lastActiveAge[k])) bad(`lastActiveAge[${k}]`, 'disagrees with windowActive');
        }
      }
    }
  });
}

/**
 * The cohort triangle: for each cohort and observed age, the cohort size, the active members and
 * their share.
 *
 * @throws {TidemarkError} INPUT_INVALID for a bad row.
 * @example cohortTriangle([{ cohort: '2026-01-05', size: 40, active: [40, 22, 18] }])[0].cells[1] // { age: 1, n: 40, active: 22, share: 0.55 }
 */
export function cohortTriangle(rows: readonly CohortRow[]): TriangleRow[] {
  checkCohortRows(rows);
  return rows.map((r) => ({
    cohort: r.cohort,
    size: r.size,
    cells: r.active.map((active, age) => ({ age, n: r.size, active, share: r.size > 0 ? active / r.size : null })),
  }));
}

/**
 * Members of one cohort active at `age` or any later observed age (the age must be observed):
 * Σ_{k ≥ age} lastActiveAge[k], else windowActive[age][A − age]; at the last age it is active[A].
 *
 * @param index the row's position, for the error location
 * @throws {TidemarkError} INPUT_INVALID when the row has neither per-member table and age < A.
 * @example activeOnOrAfter({ cohort: 'a', size: 4, active: [4, 1, 2], lastActiveAge: [1, 1, 2] }, 1) // 3
 */
export function activeOnOrAfter(row: CohortRowExt, age: number, index = 0): number {
  const A = row.active.length - 1;
  if (age === A) return row.active[A];
  if (row.lastActiveAge) return row.lastActiveAge.slice(age).reduce((s, v) => s + v, 0);
  if (row.windowActive) return row.windowActive[age][A - age];
  throw new TidemarkError(
    'INPUT_INVALID',
    `cohort '${row.cohort}': on-or-after retention needs per-member data`,
    { key: `cohorts[${index}].lastActiveAge` },
    'the engine must fill lastActiveAge (or windowActive) in each cohort row',
  );
}

/** Members of one cohort active at least once at ages from … to (both observed). */
function activeInWindow(row: CohortRowExt, from: number, to: number, index: number): number {
  if (from === to) return row.active[from];
  if (row.windowActive) return row.windowActive[from][to - from];
  if (to === row.active.length - 1 && row.lastActiveAge) return activeOnOrAfter(row, from, index);
  throw new TidemarkError(
    'INPUT_INVALID',
    `cohort '${row.cohort}': window retention needs per-member data`,
    { key: `cohorts[${index}].windowActive` },
    'the engine must fill windowActive in each cohort row',
  );
}

function checkAge(age: number, name: string): void {
  if (!(Number.isInteger(age) && age >= 0)) throw new TidemarkError('INPUT_INVALID', `${name} must be an integer ≥ 0, got ${age}`, { key: name });
}

function measureOf(
  rows: readonly CohortRowExt[],
  measure: CohortRetention['measure'],
  from: number,
  to: number | null,
  count: (row: CohortRowExt, index: number) => number,
  options: RateOptions,
): CohortRetention {
  checkCohortRows(rows);
  const { confidence, minN } = rateOptions(options);
  const cohorts: CohortRate[] = [];
  const notObserved: string[] = [];
  rows.forEach((r, i) => {
    if (r.active.length - 1 < (to ?? from)) {
      notObserved.push(r.cohort);
      return;
    }
    const retained = count(r, i);
    cohorts.push({ cohort: r.cohort, n: r.size, retained, rate: r.size > 0 ? retained / r.size : null, small: r.size < minN });
  });
  const n = cohorts.reduce((s, c) => s + c.n, 0);
  const retained = cohorts.reduce((s, c) => s + c.retained, 0);
  const w = n > 0 ? wilsonInterval(retained, n, confidence) : null;
  return {
    measure, from, to, cohorts, notObserved,
    pooled: { n, retained, rate: w ? w.estimate : null, lower: w ? w.lower : null, upper: w ? w.upper : null, small: n < minN },
  };
}

/**
 * Classic N-period retention: share of each cohort active exactly at age N.
 *
 * @throws {TidemarkError} INPUT_INVALID for a bad row or age.
 * @example classicRetention([{ cohort: 'a', size: 40, active: [40, 22, 18] }, { cohort: 'b', size: 60, active: [60, 30] }], 1).pooled.rate // 0.52
 */
export function classicRetention(rows: readonly CohortRow[], age: number, options: RateOptions = {}): CohortRetention {
  checkAge(age, 'age');
  return measureOf(rows, 'classic', age, age, (r) => r.active[age], options);
}

/**
 * On-or-after retention: share of each cohort active at age N or any later observed age.
 *
 * @throws {TidemarkError} INPUT_INVALID for a bad row or age, or when a cohort that observed age N
 *   (and more) lacks both `lastActiveAge` and `windowActive`.
 * @example onOrAfterRetention([{ cohort: 'a', size: 4, active: [4, 1, 2], lastActiveAge: [1, 1, 2] }], 1).pooled.rate // 0.75
 */
export function onOrAfterRetention(rows: readonly CohortRowExt[], age: number, options: RateOptions = {}): CohortRetention {
  checkAge(age, 'age');
  return measureOf(rows, 'onOrAfter', age, null, (r, i) => activeOnOrAfter(r, age, i), options);
}

/**
 * Window retention: share of each cohort active at least once at ages from … to.
 *
 * @throws {TidemarkError} INPUT_INVALID for a bad row, ages with from > to, or a cohort lacking
 *   `windowActive` when the window is wider than one age and does not run to its last observed age.
 * @example windowRetention([{ cohort: 'a', size: 4, active: [4, 1, 2, 0], windowActive: [[4, 4, 4, 4], [1, 3, 3], [2, 2], [0]] }], 1, 2).pooled.rate // 0.75
 */
export function windowRetention(rows: readonly CohortRowExt[], from: number, to: number, options: RateOptions = {}): CohortRetention {
  checkAge(from, 'from');
  checkAge(to, 'to');
  if (from > to) throw new TidemarkError('INPUT_INVALID', `window from age ${from} is after to age ${to}`, { key: 'from' });
  return measureOf(rows, 'window', from, to, (r, i) => activeInWindow(r, from, to, i), options);
}
