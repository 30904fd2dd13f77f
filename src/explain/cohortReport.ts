/**
 * The cohorts job: the triangle by acquisition period, classic N-period, on-or-after and window
 * retention, grouped curves and a per-cohort reading of the curve's shape, with the rule that decided
 * it. Pure: reads the waist's cohort rows only.
 */
import type { CohortRow } from '../flows/types.js';
import { classicRetention, cohortTriangle, onOrAfterRetention, windowRetention, type CohortRetention, type TriangleRow } from './cohorts.js';
import { cohortShapes, groupedCurves, type CohortShape, type CurvePoint } from './cohortCurve.js';

export interface CohortsOptions {
  /** Ages N for classic and on-or-after retention. */
  ages: number[];
  /** Window [a, b] of ages for window retention. */
  window: [number, number];
  /** Group cohorts for the grouped curves: 'month' (YYYY-MM of the cohort label), 'all', or 'cohort'. */
  groupBy: 'month' | 'all' | 'cohort';
  minN: number;
}

export interface CohortsOutput {
  triangle: TriangleRow[];
  classic: CohortRetention[];
  onOrAfter: CohortRetention[];
  window: CohortRetention | null;
  /** Why window retention is missing (cohorts observed beyond the window tables' ages). */
  windowNote?: string;
  curves: { group: string; curve: CurvePoint[] }[];
  shapes: CohortShape[];
}

export function cohortReport(rows: readonly CohortRow[], o: CohortsOptions): CohortsOutput {
  const groupOf = o.groupBy === 'month' ? (r: CohortRow) => r.cohort.slice(0, 7) : o.groupBy === 'all' ? () => 'all' : (r: CohortRow) => r.cohort;
  const haveWindow = rows.every((r) => r.windowActive);
  return {
    triangle: cohortTriangle(rows),
    classic: o.ages.map((a) => classicRetention(rows, a, { minN: o.minN })),
    onOrAfter: o.ages.map((a) => onOrAfterRetention(rows, a, { minN: o.minN })),
    window: haveWindow ? windowRetention(rows, o.window[0], o.window[1], { minN: o.minN }) : null,
    windowNote: haveWindow ? undefined : 'window retention needs cohorts observed over at most 60 periods; narrow the range with --from or use a coarser grain',
    curves: groupedCurves(rows, groupOf),
    shapes: cohortShapes(rows, { minN: o.minN }),
  };
}
