/**
 * Classified user-periods → the waist tables, as an arquero pipeline.
 *
 * Each table is one group-by on a single combined integer key (fast in arquero: a few thousand groups
 * at most), then a small reshape into matrices. Period offsets here are relative to the range start;
 * the tables are indexed from `outStart` (the first output period).
 */
import * as aq from 'arquero';
import type { Classified } from '../../lifecycle/classify.js';
import { cohortRowFromUsers } from './cohortExt.js';
import { canonicalDurations } from '../../waist/canonical.js';
import { bandLabels } from '../../flows/tenure.js';
import { WINDOW_MAX_AGE, type CohortRow, type DurationRow, type RetentionCell, type TransitionCounts, type WaistTables } from '../../flows/types.js';

export interface AggregateOptions {
  states: readonly string[];
  /** Number of leading states that are active (states are ordered active first). */
  activeCount: number;
  /** The state new users arrive in, and the one of users gone quiet beyond the lapse limit. */
  arrivalState: string;
  exitState: string;
  /** Labels of all range periods, by offset. */
  labels: string[];
  /** First output period offset. */
  outStart: number;
  warmup: number;
  /** Lower edges of tenure bands, starting at 0. */
  tenureBands: number[];
}

function groupCount(table: aq.ColumnTable, key: string): Map<number, number> {
  const g = table.groupby(key).count({ as: 'n' });
  const keys = g.array(key) as ArrayLike<number>;
  const ns = g.array('n') as ArrayLike<number>;
  const m = new Map<number, number>();
  for (let i = 0; i < keys.length; i++) m.set(keys[i], ns[i]);
  return m;
}

export function aggregate(c: Classified, o: AggregateOptions): WaistTables {
  const S = o.states.length;
  const span = o.labels.length;
  const P = span - o.outStart;
  const firstFlow = o.outStart + o.warmup; // earliest "from" period of a counted pair
  // band of each tenure up to the last band's edge; every tenure beyond it is in the last band
  const lastEdge = o.tenureBands[o.tenureBands.length - 1];
  const bandOf = new Uint8Array(lastEdge + 1);
  for (let t = 0, b = 0; t <= lastEdge; t++) {
    while (b + 1 < o.tenureBands.length && t >= o.tenureBands[b + 1]) b++;
    bandOf[t] = b;
  }
  const B = o.tenureBands.length;
  // tenure band of each row's previous period (the period retained from)
  const bandPrev = new Uint8Array(c.size);
  for (let r = 0; r < c.size; r++) bandPrev[r] = c.tenure[r] > 0 ? bandOf[Math.min(c.tenure[r] - 1, lastEdge)] : 0;
  const base = aq
    .table({ p: c.period, s: c.state, prev: c.prev, tenure: c.tenure, cohort: c.cohort, bandPrev })
    .params({ S, B, A: o.activeCount, span, firstFlow, outStart: o.outStart });

  // state counts per period
  const byState = groupCount(base.derive({ k: (d: any, $: any) => (d.p - $.outStart) * $.S + d.s }), 'k');
  const stateCounts = Array.from({ length: P }, (_, p) => Array.from({ length: S }, (_, s) => byState.get(p * S + s) ?? 0));

  // transitions between consecutive periods, past the warm-up
  const flowRows = base.filter((d: any, $: any) => d.prev >= 0 && d.p - 1 >= $.firstFlow);
  const byPair = groupCount(flowRows.derive({ k: (d: any, $: any) => (d.p * $.S + d.prev) * $.S + d.s }), 'k');
  const transitions: TransitionCounts[] = [];
  const freshCode = o.states.indexOf(o.arrivalState);
  const firstTo = Math.max(firstFlow + 1, o.outStart + 1); // offset of the first transition's later period
  for (let p = firstTo; p < span; p++) {
    const counts = Array.from({ length: S }, (_, i) => Array.from({ length: S }, (_, j) => byPair.get((p * S + i) * S + j) ?? 0));
    transitions.push({ from: o.labels[p - 1], to: o.labels[p], counts, fresh: stateCounts[p - o.outStart][freshCode] ?? 0 });
  }

  // retention cells: users in an active state at p − 1, by tenure band at p − 1, active at p or not
  const cellRows = flowRows.filter((d: any, $: any) => d.prev < $.A);
  const byCell = groupCount(cellRows.derive({ k: (d: any, $: any) => ((d.p * $.S + d.prev) * $.B + d.bandPrev) * 2 + (d.s < $.A ? 1 : 0) }), 'k');
  const labelsB = bandLabels(o.tenureBands);
  const tenureCells: RetentionCell[] = [];
  for (let ti = 0; ti < transitions.length; ti++) {
    const t = transitions[ti];
    const p = firstTo + ti;
    for (let s = 0; s < o.activeCount; s++) {
      for (let b = 0; b < B; b++) {
        const kept = byCell.get(((p * S + s) * B + b) * 2 + 1) ?? 0;
        const lost = byCell.get(((p * S + s) * B + b) * 2) ?? 0;
        if (kept + lost > 0) tenureCells.push({ to: t.to, state: o.states[s], segment: labelsB[b], n: kept + lost, retained: kept });
      }
    }
  }

  // cohort triangle: cohorts first active after the warm-up
  const cohortRows = base.filter((d: any, $: any) => d.cohort >= $.firstFlow);
  const byAge = groupCount(cohortRows.filter((d: any, $: any) => d.s < $.A).derive({ k: (d: any, $: any) => d.cohort * $.span + d.tenure }), 'k');
  const cohorts: CohortRow[] = [];
  for (let k = firstFlow; k < span; k++) {
    const size = byAge.get(k * span) ?? 0;
    if (size === 0) continue;
    cohorts.push({ cohort: o.labels[k], size, active: Array.from({ length: span - k }, (_, a) => byAge.get(k * span + a) ?? 0) });
  }
  extendCohorts(c, cohorts, o, firstFlow, span);

  return {
    states: [...o.states],
    activeStates: o.states.slice(0, o.activeCount),
    arrivalState: o.arrivalState,
    exitState: o.exitState,
    periods: o.labels.slice(o.outStart),
    warmup: o.warmup,
    stateCounts,
    transitions,
    tenureCells,
    cohorts,
    durations: durationRows(c, firstFlow, span, (_u, first) => o.labels[first], o.labels),
  };
}

/**
 * Periods from first active to first dormant per user, censored at the range end, for users first
 * active from `firstFlow` on, grouped by `groupOf(user, firstActiveOffset)`.
 */
export function durationRows(c: Classified, firstFlow: number, span: number, groupOf: (user: number, first: number) => string, labels: readonly string[]): DurationRow[] {
  const m = new Map<string, DurationRow>();
  for (let u = 0; u < c.firstActive.length; u++) {
    const first = c.firstActive[u];
    if (first < firstFlow) continue;
    const d = c.firstDormant[u];
    const observed: 0 | 1 = d >= 0 ? 1 : 0;
    const duration = observed ? d - first : span - 1 - first;
    const group = groupOf(u, first);
    const key = `${group}\u0000${first}|${duration}|${observed}`;
    const row = m.get(key);
    if (row) row.users++;
    else m.set(key, { group, cohort: labels[first], duration, observed, users: 1 });
  }
  return canonicalDurations([...m.values()]);
}

/**
 * Add the per-member cohort summaries (lastActiveAge; windowActive up to WINDOW_MAX_AGE ages) that
 * on-or-after and window retention need. Each user's rows are contiguous in the classified table, so
 * the members of a cohort are a list of row blocks.
 */
function extendCohorts(c: Classified, cohorts: CohortRow[], o: AggregateOptions, firstFlow: number, span: number): void {
  const blocks = new Map<number, number[]>();
  for (let r = 0; r < c.size; r++) {
    if (r > 0 && c.user[r] === c.user[r - 1]) continue;
    const k = c.cohort[r];
    if (k < firstFlow) continue;
    let list = blocks.get(k);
    if (!list) blocks.set(k, (list = []));
    list.push(r);
  }
  const offsetOf = new Map<string, number>();
  for (let k = firstFlow; k < span; k++) offsetOf.set(o.labels[k], k);
  for (const row of cohorts) {
    const k = offsetOf.get(row.cohort)!;
    const A = span - 1 - k;
    const starts = blocks.get(k) ?? [];
    function* members(): Generator<number[]> {
      for (const r0 of starts) {
        const ages: number[] = [];
        for (let r = r0; r < c.size && c.user[r] === c.user[r0]; r++) if (c.state[r] < o.activeCount) ages.push(c.tenure[r]);
        yield ages;
      }
    }
    // windows one age further than the analyses use, so that leaving out the last period stays exact
    if (A <= WINDOW_MAX_AGE + 1) {
      const ext = cohortRowFromUsers(row.cohort, A, members());
      row.lastActiveAge = ext.lastActiveAge;
      row.windowActive = ext.windowActive;
    } else {
      const last = new Array<number>(A + 1).fill(0);
      for (const ages of members()) last[ages[ages.length - 1]]++;
      row.lastActiveAge = last;
    }
    const before = new Array<number>(A).fill(0);
    if (A > 0) for (const ages of members()) before[ages[ages.length - 1] < A ? ages[ages.length - 1] : ages[ages.length - 2]]++;
    row.lastActiveAgeBeforeFinal = before;
  }
}
