/**
 * The narrow waist: small count tables that every analysis reads.
 *
 * Any engine (the in-memory engine, DuckDB, warehouse SQL) that produces these tables feeds every
 * analysis. Sizes are states² × periods plus small cohort tables; no per-user rows cross this line.
 *
 * Conventions: periods are labelled by their start date `YYYY-MM-DD` in the rules' time zone;
 * matrices are `counts[from][to]` with states in the order of `states`.
 */

/** One pair of consecutive periods. */
export interface TransitionCounts {
  /** Label of the earlier period. */
  from: string;
  /** Label of the later period. */
  to: string;
  /** counts[i][j]: users in states[i] in `from` and states[j] in `to` (users present in both). */
  counts: number[][];
  /** Users whose first active period is `to` (they enter in the `fresh` state). */
  fresh: number;
}

/** Retention cell: users in an active state at `from`, split by a segment, and how many stayed active. */
export interface RetentionCell {
  /** Label of the period retained into (the later period of the pair). */
  to: string;
  /** Prior state (an active state) in the earlier period. */
  state: string;
  /** Segment value: a tenure band label or an attribute value; '' when unsplit. */
  segment: string;
  /** Users in `state` (and `segment`) in the earlier period. */
  n: number;
  /** Of those, users active in the later period. */
  retained: number;
}

/** One acquisition cohort: users whose first active period is `cohort`. */
export interface CohortRow {
  cohort: string;
  size: number;
  /** active[k]: cohort members active k periods after their first (active[0] === size); observed ages only. */
  active: number[];
  /** lastActiveAge[k]: members whose last active age (within the observed ages) is k; sums to size. */
  lastActiveAge?: number[];
  /**
   * windowActive[a][j]: members active at least once at ages a … a + j (see explain/cohorts.ts).
   * Filled for cohorts observed over at most {@link WINDOW_MAX_AGE} ages; absent beyond.
   */
  windowActive?: number[][];
  /**
   * lastActiveAgeBeforeFinal[k]: members whose last active age up to A − 1 is k (length A). Only in a
   * waist's full form, so that leaving out an incomplete last period stays exact (src/waist/derive.ts).
   */
  lastActiveAgeBeforeFinal?: number[];
}

/** Oldest age for which engines fill CohortRow.windowActive (it grows with the square of the ages). */
export const WINDOW_MAX_AGE = 60;

/** Durations from first active to first dormant, aggregated: `users` users share this row. */
export interface DurationRow {
  /** Group label ('' when ungrouped; the cohort label when grouped by cohort). */
  group: string;
  /** The users' first active period; only in a waist's full form (src/waist/derive.ts merges it away). */
  cohort?: string;
  /** Periods from first active to first dormant (observed) or to the end of the data (censored). */
  duration: number;
  /** 1 when the user reached dormant, 0 when right-censored. */
  observed: 0 | 1;
  users: number;
}

export interface WaistTables {
  states: string[];
  /** The states that mean "active in this period" (they come first in `states`). */
  activeStates: string[];
  /** The state new users arrive in (their first active period). */
  arrivalState: string;
  /** The state of users gone quiet for longer than the lapse limit. */
  exitState: string;
  /** All analysis periods in order. */
  periods: string[];
  /** Number of leading periods that are warm-up: classified, but left out of flows and retention. */
  warmup: number;
  /** stateCounts[p][s]: users in states[s] in periods[p]. */
  stateCounts: number[][];
  /** One entry per consecutive pair (periods[p-1], periods[p]) for p past the warm-up. */
  transitions: TransitionCounts[];
  /** Retention cells by prior state and tenure band (segment = band label). */
  tenureCells: RetentionCell[];
  /** Cohort triangle. */
  cohorts: CohortRow[];
  /** Time-to-dormant durations, grouped by cohort. */
  durations: DurationRow[];
  /**
   * Retention cells by prior state and an attribute's value in the earlier period (when asked for);
   * `perPerson` when the column's values are nearly unique per user (never name them in sentences).
   */
  segmentCells?: { by: string; cells: RetentionCell[]; perPerson?: boolean };
  /** Time-to-dormant durations grouped by that attribute's value in each user's first active period. */
  segmentDurations?: { by: string; rows: DurationRow[]; perPerson?: boolean };
  /**
   * Optional: the flows of each segment when asked for (`--by`), users split by the attribute's value
   * in their first active period (as `segmentDurations`), so the segments partition the users and
   * their tables add up to the unsplit ones. `stateCounts` is aligned with `periods`, `transitions`
   * with `transitions` (same from/to); `fresh` is the segment's own newcomers.
   */
  segmentTransitions?: { by: string; perPerson?: boolean; segments: SegmentFlows[] };
}

/** The flows of one segment (see WaistTables.segmentTransitions). */
export interface SegmentFlows {
  /** The attribute's value; '(none)' for users without one. */
  segment: string;
  /** stateCounts[p][s]: the segment's users in states[s] in periods[p]. */
  stateCounts: number[][];
  transitions: TransitionCounts[];
}
