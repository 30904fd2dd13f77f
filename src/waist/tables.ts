/**
 * The waist tables as files: each table's name, columns and meaning, and the conversion between the
 * in-memory {@link WaistTables} and long, tidy CSV rows. Rows whose count is 0 are not written; a
 * reader fills zeros. See README, "The waist".
 */
import type { CohortRow, DurationRow, RetentionCell, WaistTables } from '../flows/types.js';

export interface TableSpec {
  file: string;
  columns: readonly string[];
  /** One sentence: what a row counts. */
  meaning: string;
}

/** Every table of the format, in the order they are written. */
export const WAIST_TABLES = {
  transitions: {
    file: 'transitions.csv',
    columns: ['period_from', 'period_to', 'state_from', 'state_to', 'users'],
    meaning: 'users in state_from in period_from and in state_to in period_to, the next period (pairs past the warm-up)',
  },
  arrivals: {
    file: 'arrivals.csv',
    columns: ['period', 'users'],
    meaning: 'users whose first active period is period',
  },
  stateCounts: {
    file: 'state_counts.csv',
    columns: ['period', 'state', 'users'],
    meaning: 'users in state in period',
  },
  retentionCells: {
    file: 'retention_cells.csv',
    columns: ['period_to', 'state_from', 'split', 'segment', 'users', 'retained'],
    meaning: 'users in the active state_from in the period before period_to, by tenure band (split tenure) or attribute value (split attribute) in that period, and how many of them are active in period_to',
  },
  cohortActivity: {
    file: 'cohort_activity.csv',
    columns: ['cohort', 'age', 'active', 'last_active', 'last_active_before_final'],
    meaning: 'members of the cohort (first active period) active at age periods after it; whose last active age is age; and whose last active age before the final observed age is age',
  },
  cohortWindows: {
    file: 'cohort_windows.csv',
    columns: ['cohort', 'age_from', 'age_to', 'users'],
    meaning: 'members of the cohort active at least once at ages age_from to age_to',
  },
  segmentStateCounts: {
    file: 'segment_state_counts.csv',
    columns: ['segment', 'period', 'state', 'users'],
    meaning: "users whose value of the manifest's by in their first active period is segment, in state in period",
  },
  segmentTransitions: {
    file: 'segment_transitions.csv',
    columns: ['segment', 'period_from', 'period_to', 'state_from', 'state_to', 'users'],
    meaning: 'as transitions, for the users of one segment (split as in segment_state_counts)',
  },
  durations: {
    file: 'durations.csv',
    columns: ['split', 'group', 'cohort', 'duration', 'observed', 'users'],
    meaning: 'users first active in cohort whose time from first active to first dormant is duration periods (observed 1) or who were still not dormant after duration periods at the end of the data (observed 0)',
  },
} as const satisfies Record<string, TableSpec>;

export type TableName = keyof typeof WAIST_TABLES;
export type Row = (string | number)[];

/** The rows of every table, in canonical order, zero counts left out. */
export function tablesToRows(t: WaistTables, arrivalStates: readonly string[]): Record<TableName, Row[]> {
  const transitions: Row[] = [];
  for (const tr of t.transitions) {
    tr.counts.forEach((row, i) => row.forEach((n, j) => {
      if (n > 0) transitions.push([tr.from, tr.to, t.states[i], t.states[j], n]);
    }));
  }
  const arrivalIdx = arrivalStates.map((s) => t.states.indexOf(s));
  const arrivals: Row[] = [];
  const stateCounts: Row[] = [];
  t.periods.forEach((p, k) => {
    const a = arrivalIdx.reduce((acc, i) => acc + (t.stateCounts[k][i] ?? 0), 0);
    if (a > 0) arrivals.push([p, a]);
    t.stateCounts[k].forEach((n, s) => {
      if (n > 0) stateCounts.push([p, t.states[s], n]);
    });
  });
  const cell = (split: string) => (c: RetentionCell): Row => [c.to, c.state, split, c.segment, c.n, c.retained];
  const retentionCells: Row[] = [...t.tenureCells.map(cell('tenure')), ...(t.segmentCells?.cells ?? []).map(cell('attribute'))];
  const cohortActivity: Row[] = [];
  const cohortWindows: Row[] = [];
  for (const c of t.cohorts) {
    c.active.forEach((n, age) => {
      const last = c.lastActiveAge?.[age] ?? 0;
      const before = c.lastActiveAgeBeforeFinal?.[age] ?? 0;
      if (n > 0 || last > 0 || before > 0) cohortActivity.push([c.cohort, age, n, last, before]);
    });
    c.windowActive?.forEach((row, a) => row.forEach((n, j) => {
      if (n > 0) cohortWindows.push([c.cohort, a, a + j, n]);
    }));
  }
  const dur = (split: string) => (d: DurationRow): Row => [split, d.group, d.cohort ?? d.group, d.duration, d.observed, d.users];
  const durations: Row[] = [...t.durations.map(dur('cohort')), ...(t.segmentDurations?.rows ?? []).map(dur('attribute'))];
  const segmentStateCounts: Row[] = [];
  const segmentTransitions: Row[] = [];
  for (const g of t.segmentTransitions?.segments ?? []) {
    g.stateCounts.forEach((row, k) => row.forEach((n, s) => {
      if (n > 0) segmentStateCounts.push([g.segment, t.periods[k], t.states[s], n]);
    }));
    for (const tr of g.transitions) {
      tr.counts.forEach((row, i) => row.forEach((n, j) => {
        if (n > 0) segmentTransitions.push([g.segment, tr.from, tr.to, t.states[i], t.states[j], n]);
      }));
    }
  }
  return { transitions, arrivals, stateCounts, retentionCells, cohortActivity, cohortWindows, segmentStateCounts, segmentTransitions, durations };
}

/** Cohort rows from the activity and window tables; `periods` gives each cohort's observed ages. */
export function cohortRowsFrom(activity: { cohort: string; age: number; active: number; last: number; before: number }[],
  windows: { cohort: string; from: number; to: number; users: number }[], periods: readonly string[], windowMaxAge: number): CohortRow[] {
  const index = new Map(periods.map((p, i) => [p, i]));
  const byCohort = new Map<string, CohortRow>();
  const lastIndex = periods.length - 1;
  const rowOf = (cohort: string): CohortRow => {
    let r = byCohort.get(cohort);
    if (!r) {
      const A = lastIndex - (index.get(cohort) as number);
      r = { cohort, size: 0, active: new Array(A + 1).fill(0), lastActiveAge: new Array(A + 1).fill(0), lastActiveAgeBeforeFinal: new Array(A).fill(0) };
      if (A <= windowMaxAge) r.windowActive = Array.from({ length: A + 1 }, (_, a) => new Array(A - a + 1).fill(0));
      byCohort.set(cohort, r);
    }
    return r;
  };
  for (const a of activity) {
    const r = rowOf(a.cohort);
    r.active[a.age] = a.active;
    r.lastActiveAge![a.age] = a.last;
    if (a.age < r.active.length - 1) r.lastActiveAgeBeforeFinal![a.age] = a.before;
  }
  for (const w of windows) {
    const r = rowOf(w.cohort);
    if (r.windowActive) r.windowActive[w.from][w.to - w.from] = w.users;
  }
  const rows = [...byCohort.values()].sort((a, b) => (index.get(a.cohort) as number) - (index.get(b.cohort) as number));
  for (const r of rows) r.size = r.active[0];
  return rows;
}
