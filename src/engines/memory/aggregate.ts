/**
 * Classified user-periods → the waist tables: one counting pass over the typed columns
 * ({@link countTables}), then a small reshape into matrices. Period offsets here are relative to the range start;
 * the tables are indexed from `outStart` (the first output period).
 */
import type { Classified } from '../../lifecycle/classify.js';
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

/**
 * The four count tables of the waist in one pass over the classified rows, into typed arrays: state
 * counts by period, transitions by (period, from, to), retention cells by (period, prior state, tenure
 * band, kept) and cohort activity by (cohort, age). Each was an arquero group-by on a combined integer
 * key; the pass is several times faster (see DEVELOPERS.md) and allocates nothing per row.
 */
function countTables(c: Classified, o: AggregateOptions, firstFlow: number): TableCounts {
  const S = o.states.length;
  const span = o.labels.length;
  const P = span - o.outStart;
  const A = o.activeCount;
  // band of each tenure up to the last band's edge; every tenure beyond it is in the last band
  const lastEdge = o.tenureBands[o.tenureBands.length - 1];
  const bandOf = new Uint8Array(lastEdge + 1);
  for (let t = 0, b = 0; t <= lastEdge; t++) {
    while (b + 1 < o.tenureBands.length && t >= o.tenureBands[b + 1]) b++;
    bandOf[t] = b;
  }
  const B = o.tenureBands.length;
  const byState = new Float64Array(P * S);
  const byPair = new Float64Array(span * S * S);
  const byCell = new Float64Array(span * S * B * 2);
  // cohort k's ages 0 … span − 1 − k, cohorts from firstFlow on, laid out one after the other when that
  // triangle is not much larger than the rows (else a Map of the cells that occur)
  const m = Math.max(0, span - firstFlow);
  const dense = (m * (m + 1)) / 2 <= Math.max(4 * c.size, 1 << 20);
  const triStart = new Float64Array(dense ? m + 1 : 0);
  for (let k = 0; k < triStart.length - 1; k++) triStart[k + 1] = triStart[k] + (span - firstFlow - k);
  const tri = new Float64Array(dense ? triStart[m] : 0);
  const triMap = new Map<number, number>();
  const { period, state, prev: prevs, tenure, cohort } = c;
  for (let r = 0; r < c.size; r++) {
    const p = period[r], s = state[r], prev = prevs[r];
    byState[(p - o.outStart) * S + s]++;
    if (prev >= 0 && p - 1 >= firstFlow) {
      byPair[(p * S + prev) * S + s]++;
      if (prev < A) {
        const t = tenure[r];
        const band = t > 0 ? bandOf[t - 1 < lastEdge ? t - 1 : lastEdge] : 0;
        byCell[((p * S + prev) * B + band) * 2 + (s < A ? 1 : 0)]++;
      }
    }
    const k = cohort[r];
    if (k >= firstFlow && s < A) {
      if (dense) tri[triStart[k - firstFlow] + tenure[r]]++;
      else {
        const key = k * span + tenure[r];
        triMap.set(key, (triMap.get(key) ?? 0) + 1);
      }
    }
  }
  const age = (k: number, a: number): number => (dense ? tri[triStart[k - firstFlow] + a] : triMap.get(k * span + a) ?? 0);
  return { byState, byPair, byCell, age, B };
}

export function aggregate(c: Classified, o: AggregateOptions): WaistTables {
  const firstFlow = o.outStart + o.warmup; // earliest "from" period of a counted pair
  const counts = countTables(c, o, firstFlow);
  return waistTables(counts, o, (cohorts) => extendCohorts(c, cohorts, o, firstFlow, o.labels.length), c.firstActive, c.firstDormant);
}

/** The counts {@link countTables} gives (and the fused walk, walkAggregate.ts). */
export interface TableCounts {
  byState: Float64Array;
  byPair: Float64Array;
  byCell: Float64Array;
  age: (k: number, a: number) => number;
  B: number;
}

/**
 * The waist tables from the counts: `extend` adds the cohort rows' per-member summaries; durations
 * come from each user's first active and first dormant period offsets.
 */
export function waistTables(counts: TableCounts, o: AggregateOptions, extend: (cohorts: CohortRow[]) => void, firstActive: Int32Array, firstDormant: Int32Array): WaistTables {
  const S = o.states.length;
  const span = o.labels.length;
  const P = span - o.outStart;
  const firstFlow = o.outStart + o.warmup; // earliest "from" period of a counted pair
  const { byState, byPair, byCell, age, B } = counts;

  // state counts per period
  const stateCounts = Array.from({ length: P }, (_, p) => Array.from({ length: S }, (_, s) => byState[p * S + s]));

  // transitions between consecutive periods, past the warm-up
  const transitions: TransitionCounts[] = [];
  const freshCode = o.states.indexOf(o.arrivalState);
  const firstTo = Math.max(firstFlow + 1, o.outStart + 1); // offset of the first transition's later period
  for (let p = firstTo; p < span; p++) {
    const counts = Array.from({ length: S }, (_, i) => Array.from({ length: S }, (_, j) => byPair[(p * S + i) * S + j]));
    transitions.push({ from: o.labels[p - 1], to: o.labels[p], counts, fresh: stateCounts[p - o.outStart][freshCode] ?? 0 });
  }

  // retention cells: users in an active state at p − 1, by tenure band at p − 1, active at p or not
  const labelsB = bandLabels(o.tenureBands);
  const tenureCells: RetentionCell[] = [];
  for (let ti = 0; ti < transitions.length; ti++) {
    const t = transitions[ti];
    const p = firstTo + ti;
    for (let s = 0; s < o.activeCount; s++) {
      for (let b = 0; b < B; b++) {
        const kept = byCell[((p * S + s) * B + b) * 2 + 1];
        const lost = byCell[((p * S + s) * B + b) * 2];
        if (kept + lost > 0) tenureCells.push({ to: t.to, state: o.states[s], segment: labelsB[b], n: kept + lost, retained: kept });
      }
    }
  }

  // cohort triangle: cohorts first active after the warm-up
  const cohorts: CohortRow[] = [];
  for (let k = firstFlow; k < span; k++) {
    const size = age(k, 0);
    if (size === 0) continue;
    cohorts.push({ cohort: o.labels[k], size, active: Array.from({ length: span - k }, (_, a) => age(k, a)) });
  }
  extend(cohorts);

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
    durations: durationRows({ firstActive, firstDormant }, firstFlow, span, (_u, first) => o.labels[first], o.labels),
  };
}

/**
 * Periods from first active to first dormant per user, censored at the range end, for users first
 * active from `firstFlow` on, grouped by `groupOf(user, firstActiveOffset)`.
 */
export function durationRows(c: Pick<Classified, 'firstActive' | 'firstDormant'>, firstFlow: number, span: number, groupOf: (user: number, first: number) => string, labels: readonly string[]): DurationRow[] {
  // rows by a numeric key (group index, first, duration, observed): no string made per user
  const groups = new Map<string, number>();
  const m = new Map<number, DurationRow>();
  for (let u = 0; u < c.firstActive.length; u++) {
    const first = c.firstActive[u];
    if (first < firstFlow) continue;
    const d = c.firstDormant[u];
    const observed: 0 | 1 = d >= 0 ? 1 : 0;
    const duration = observed ? d - first : span - 1 - first;
    const group = groupOf(u, first);
    let g = groups.get(group);
    if (g === undefined) groups.set(group, (g = groups.size));
    const key = ((g * span + first) * span + duration) * 2 + observed;
    const row = m.get(key);
    if (row) row.users++;
    else m.set(key, { group, cohort: labels[first], duration, observed, users: 1 });
  }
  return canonicalDurations([...m.values()]);
}

/**
 * Add the per-member cohort summaries (lastActiveAge; lastActiveAgeBeforeFinal; windowActive up to
 * WINDOW_MAX_AGE + 1 ages, one more than the analyses use, so that leaving out the last period of a
 * waist stays exact) that on-or-after and window retention need. Each user's rows are contiguous in the classified table and,
 * for a cohort past the warm-up, start at age 0, so a member is a block of rows read backwards once:
 * the same histograms as {@link cohortRowFromUsers} (./cohortExt.ts, which defines them), built
 * in typed arrays with nothing allocated per member (8 times faster at 500,000 members).
 */
function extendCohorts(c: Classified, cohorts: CohortRow[], o: AggregateOptions, firstFlow: number, span: number): void {
  const accs = new CohortAccumulators(span, firstFlow);
  const { user, cohort, state } = c;
  const active = o.activeCount;
  for (let r0 = 0; r0 < c.size; ) {
    const u = user[r0];
    let r1 = r0 + 1;
    while (r1 < c.size && user[r1] === u) r1++;
    // rows r0 … r1 − 1 are ages 0 … r1 − 1 − r0
    if (cohort[r0] >= firstFlow) accs.addMember(cohort[r0], state, r0, r1 - r0, active);
    r0 = r1;
  }
  accs.finish(cohorts, o.labels);
}

interface CohortAcc {
  last: Float64Array;
  before: Float64Array;
  gap?: Float64Array;
  gapStart?: Int32Array;
}

/** The per-cohort histograms of {@link extendCohorts}, made on a cohort's first member. */
export class CohortAccumulators {
  private readonly accs: (CohortAcc | undefined)[];
  constructor(private readonly span: number, private readonly firstFlow: number) {
    this.accs = new Array<CohortAcc | undefined>(Math.max(0, span - firstFlow)).fill(undefined);
  }

  private accOf(k: number): CohortAcc {
    let acc = this.accs[k - this.firstFlow];
    if (acc) return acc;
    const A = this.span - 1 - k;
    if (A <= WINDOW_MAX_AGE + 1) {
      // gap[a][d] for d = 0 … A − a, rows laid one after another
      const gapStart = new Int32Array(A + 2);
      for (let a = 0; a <= A; a++) gapStart[a + 1] = gapStart[a] + (A - a + 1);
      acc = { last: new Float64Array(A + 1), before: new Float64Array(A), gap: new Float64Array(gapStart[A + 1]), gapStart };
    } else acc = { last: new Float64Array(A + 1), before: new Float64Array(A) };
    this.accs[k - this.firstFlow] = acc;
    return acc;
  }

  /** A member of cohort `k` (≥ firstFlow) whose states at ages 0 … n − 1 are `state[r0 …]`: read backwards once. */
  addMember(k: number, state: ArrayLike<number>, r0: number, n: number, active: number): void {
    const { last, before, gap, gapStart } = this.accOf(k);
    const A = before.length;
    let next = -1;
    let beforeFound = false;
    for (let a = n - 1; a >= 0; a--) {
      if (state[r0 + a] < active) {
        if (next < 0) last[a]++;
        if (!beforeFound && a < A) {
          before[a]++;
          beforeFound = true;
        }
        next = a;
      }
      if (gap && next >= 0) gap[gapStart![a] + next - a]++;
    }
  }

  /** Write the summaries into the cohort rows (every row's cohort has had a member). */
  finish(cohorts: CohortRow[], labels: readonly string[]): void {
    const offsetOf = new Map<string, number>();
    for (let k = this.firstFlow; k < this.span; k++) offsetOf.set(labels[k], k);
    for (const row of cohorts) {
      const acc = this.accOf(offsetOf.get(row.cohort)!);
      row.lastActiveAge = Array.from(acc.last);
      row.lastActiveAgeBeforeFinal = Array.from(acc.before);
      if (acc.gap) {
        const { gap, gapStart } = acc;
        row.windowActive = Array.from({ length: gapStart!.length - 1 }, (_, a) => {
          let running = 0;
          return Array.from(gap.subarray(gapStart![a], gapStart![a + 1]), (v) => (running += v));
        });
      }
    }
  }
}
