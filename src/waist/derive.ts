/**
 * From a waist in full form to the tables the analyses read, leaving out an incomplete last period
 * unless asked to keep it. Pure, and exact: every count of the shortened waist equals what an engine
 * would have counted on the data up to the period before (the waist carries the two extra counts
 * this needs: `lastActiveAgeBeforeFinal` and the cohort of each duration row).
 */
import { WINDOW_MAX_AGE, type CohortRow, type DurationRow, type WaistTables } from '../flows/types.js';
import type { Waist } from './types.js';

/** What was left out. */
export interface DroppedPeriod {
  label: string;
  /** How far through the period the data stop, 0–1. */
  coverage: number;
  /** Used rows in it. */
  rows: number;
}

/** Fewer periods than this and an incomplete last period is kept (nothing would be left to compare). */
export const MIN_PERIODS_TO_DROP = 3;

/**
 * The waist the analyses read.
 * @param includePartial keep an incomplete last period
 */
export function analysisWaist(w: Waist, o: { includePartial?: boolean } = {}): { waist: Waist; dropped?: DroppedPeriod } {
  const m = w.manifest;
  // kept anyway when leaving it out would leave fewer than two periods, or none past the warm-up
  const drop = !m.lastPeriod.complete && !o.includePartial && m.periods.length >= MIN_PERIODS_TO_DROP && m.periods.length - 1 > m.rules.warmup;
  if (!drop) return { waist: { manifest: m, tables: analysisForm(w.tables), ...(w.sections ? { sections: w.sections } : {}) } };
  const t = w.tables;
  const L = t.periods.length - 1;
  const last = t.periods[L];
  const arrivalsLast = m.states.reduce((a, s, i) => a + (s.role === 'arrival' ? t.stateCounts[L][i] : 0), 0);
  const cohorts: CohortRow[] = t.cohorts.filter((c) => c.cohort !== last).map((c) => {
    const A = c.active.length - 1;
    const row: CohortRow = { cohort: c.cohort, size: c.size, active: c.active.slice(0, A) };
    if (c.lastActiveAgeBeforeFinal) row.lastActiveAge = [...c.lastActiveAgeBeforeFinal];
    if (c.windowActive) row.windowActive = c.windowActive.slice(0, A).map((r) => r.slice(0, r.length - 1));
    return row;
  });
  const shorten = (rows: DurationRow[]): DurationRow[] => {
    const index = new Map(t.periods.map((p, i) => [p, i]));
    const out: DurationRow[] = [];
    for (const d of rows) {
      const k = index.get(d.cohort ?? d.group) as number;
      if (k === L) continue;
      if (d.observed === 0 || k + d.duration === L) out.push({ ...d, duration: d.duration - 1, observed: 0 });
      else out.push({ ...d });
    }
    return out;
  };
  const tables: WaistTables = {
    states: t.states,
    activeStates: t.activeStates,
    arrivalState: t.arrivalState,
    exitState: t.exitState,
    periods: t.periods.slice(0, L),
    warmup: t.warmup,
    stateCounts: t.stateCounts.slice(0, L),
    transitions: t.transitions.filter((tr) => tr.to !== last),
    tenureCells: t.tenureCells.filter((c) => c.to !== last),
    cohorts,
    durations: shorten(t.durations),
  };
  if (t.segmentCells) tables.segmentCells = { ...t.segmentCells, cells: t.segmentCells.cells.filter((c) => c.to !== last) };
  if (t.segmentDurations) tables.segmentDurations = { ...t.segmentDurations, rows: shorten(t.segmentDurations.rows) };
  if (t.segmentTransitions) {
    tables.segmentTransitions = {
      ...t.segmentTransitions,
      // a segment whose users all arrived in the last period has none left
      segments: t.segmentTransitions.segments
        .map((g) => ({ segment: g.segment, stateCounts: g.stateCounts.slice(0, L), transitions: g.transitions.filter((tr) => tr.to !== last) }))
        .filter((g) => g.stateCounts.some((row) => row.some((n) => n > 0))),
    };
  }
  const rows = { ...m.rows, used: m.rows.used - m.rowsInLastPeriod, partial: m.rowsInLastPeriod };
  const manifest = {
    ...m,
    periods: tables.periods,
    rows,
    rowsInLastPeriod: 0,
    users: m.users - arrivalsLast,
    lastPeriod: { label: tables.periods[L - 1], coverage: 1, complete: true },
  };
  return { waist: { manifest, tables: analysisForm(tables), ...(w.sections ? { sections: w.sections } : {}) }, dropped: { label: last, coverage: m.lastPeriod.coverage, rows: m.rowsInLastPeriod } };
}

/**
 * The waist without its attribute split (retention cells, durations and flows by `by`): what an
 * analysis that was not asked to split reads, so that it gives the same output from a waist built
 * with `--by` as from the events without it.
 */
export function withoutSplit(w: Waist): Waist {
  const { segmentCells: _c, segmentDurations: _d, segmentTransitions: _t, ...tables } = w.tables;
  return { ...w, tables };
}

/** Duration rows merged over cohorts, cohort rows without the extra counts, windows up to WINDOW_MAX_AGE. */
function analysisForm(t: WaistTables): WaistTables {
  const out: WaistTables = {
    ...t,
    cohorts: t.cohorts.map((c) => {
      const row: CohortRow = { cohort: c.cohort, size: c.size, active: c.active };
      if (c.lastActiveAge) row.lastActiveAge = c.lastActiveAge;
      if (c.windowActive && c.active.length - 1 <= WINDOW_MAX_AGE) row.windowActive = c.windowActive;
      return row;
    }),
    durations: mergeCohorts(t.durations),
  };
  if (t.segmentDurations) out.segmentDurations = { ...t.segmentDurations, rows: mergeCohorts(t.segmentDurations.rows) };
  return out;
}

function mergeCohorts(rows: readonly DurationRow[]): DurationRow[] {
  const m = new Map<string, DurationRow>();
  for (const d of rows) {
    const k = `${d.group}\u0000${d.duration}\u0000${d.observed}`;
    const r = m.get(k);
    if (r) r.users += d.users;
    else m.set(k, { group: d.group, duration: d.duration, observed: d.observed, users: d.users });
  }
  const cmp = (a: string, b: string) => (a < b ? -1 : a > b ? 1 : 0);
  return [...m.values()].sort((a, b) => cmp(a.group, b.group) || a.duration - b.duration || a.observed - b.observed);
}

/**
 * One sentence on an incomplete last period: left out (with its rows), or kept and why.
 * `leaveOut`: the analysis leaves it out by default; `asked`: the user asked to keep it.
 */
export function partialPeriodSentence(waist: Waist, dropped: DroppedPeriod | undefined, o: { leaveOut: boolean; asked: boolean }): string | undefined {
  const f = (n: number) => n.toLocaleString('en-US');
  const looks = (label: string, coverage: number) => `The last period, ${label}, looks incomplete (the data stop ${(coverage * 100).toFixed(0)}% of the way through it)`;
  if (dropped) return `${looks(dropped.label, dropped.coverage)}, so it is left out of every rate (${f(dropped.rows)} rows); pass --include-partial to keep it.`;
  const lp = waist.manifest.lastPeriod;
  if (lp.complete) return undefined;
  if (!o.leaveOut && !o.asked) return `${looks(lp.label, lp.coverage)}: its states may still change as more events arrive.`;
  const why = o.leaveOut && !o.asked ? 'as too few periods would remain without it' : 'as asked';
  return `${looks(lp.label, lp.coverage)}; it is kept, ${why}, so its rates miss users who may still be active later in it.`;
}
