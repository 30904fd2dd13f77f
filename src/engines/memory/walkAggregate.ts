/**
 * The waist tables straight from the walk of the users, with no classified rows: the counts of
 * {@link countTables} and the cohort summaries of extendCohorts (aggregate.ts) made while each user's
 * periods are walked ({@link walkUsers}). At 10M events the classified columns are about 13M rows of
 * 18 bytes, written once and read twice; this pass writes none (a user's states go to a buffer of one
 * range's length, read backwards at the user's end). `aggregate(classify(…))` stays the reference: a
 * property test checks that both give the same tables on random logs and rules.
 */
import type { ActivePeriods } from '../../lifecycle/activity.js';
import { classifiedSize, firstActivePeriods, walkUsers, type WalkVisitor } from '../../lifecycle/classify.js';
import type { LifecyclePlan } from '../../lifecycle/plan.js';
import type { WaistTables } from '../../flows/types.js';
import { CohortAccumulators, waistTables, type AggregateOptions, type TableCounts } from './aggregate.js';

/** What the walk gives: the tables, and each user's first active and first dormant period offsets (as Classified has them). */
export interface WalkedTables {
  tables: WaistTables;
  firstActive: Int32Array;
  firstDormant: Int32Array;
}

/** The counting visitor: the body of countTables a period, and a member's states kept for the cohort summaries. */
class TableCounter implements WalkVisitor {
  readonly byState: Float64Array;
  readonly byPair: Float64Array;
  readonly byCell: Float64Array;
  readonly B: number;
  readonly tri: Float64Array;
  readonly triStart: Float64Array;
  readonly triMap = new Map<number, number>();
  readonly dense: boolean;
  private readonly bandOf: Uint8Array;
  private readonly lastEdge: number;
  private readonly S: number;
  private readonly A: number;
  private readonly span: number;
  private readonly outStart: number;
  /** States at ages 0 … of the current user (a cohort member past the warm-up), by plan state index. */
  private readonly ages: Uint8Array;
  /**
   * Runs of an inactive state s through quiet periods, as differences over the periods: +1 where a
   * run starts, −1 where it stops, for byState (quietState[s · (span + 1) + p]) and for the transitions
   * s → s (quietPair); {@link finish} adds their running sums to the counts.
   */
  private readonly quietState: Float64Array;
  private readonly quietPair: Float64Array;

  constructor(o: AggregateOptions, private readonly firstFlow: number, rows: number, readonly firstDormant: Int32Array, private readonly accs: CohortAccumulators) {
    const S = (this.S = o.states.length);
    const span = (this.span = o.labels.length);
    this.outStart = o.outStart;
    this.A = o.activeCount;
    const P = span - o.outStart;
    // band of each tenure up to the last band's edge; every tenure beyond it is in the last band
    const lastEdge = (this.lastEdge = o.tenureBands[o.tenureBands.length - 1]);
    this.bandOf = new Uint8Array(lastEdge + 1);
    for (let t = 0, b = 0; t <= lastEdge; t++) {
      while (b + 1 < o.tenureBands.length && t >= o.tenureBands[b + 1]) b++;
      this.bandOf[t] = b;
    }
    const B = (this.B = o.tenureBands.length);
    this.byState = new Float64Array(P * S);
    this.byPair = new Float64Array(span * S * S);
    this.byCell = new Float64Array(span * S * B * 2);
    // the cohort triangle laid out as in countTables (dense when not much larger than the rows)
    const m = Math.max(0, span - firstFlow);
    this.dense = (m * (m + 1)) / 2 <= Math.max(4 * rows, 1 << 20);
    this.triStart = new Float64Array(this.dense ? m + 1 : 0);
    for (let k = 0; k < this.triStart.length - 1; k++) this.triStart[k + 1] = this.triStart[k] + (span - firstFlow - k);
    this.tri = new Float64Array(this.dense ? this.triStart[m] : 0);
    this.ages = new Uint8Array(span);
    this.quietState = new Float64Array(S * (span + 1));
    this.quietPair = new Float64Array(S * (span + 1));
  }

  quiet(u: number, from: number, to: number, code: number, first: number): void {
    const s = code - 1;
    if (s < this.A) {
      // an active state kept through quiet periods (no such plan today): row by row
      for (let p = from; p < to; p++) this.row(u, p, code, code, first);
      return;
    }
    // an inactive state: no retention cell (the prior state is not active) and no cohort activity
    const base = s * (this.span + 1);
    this.quietState[base + from]++;
    this.quietState[base + to]--;
    const pairFrom = Math.max(from, this.firstFlow + 1);
    if (pairFrom < to) {
      this.quietPair[base + pairFrom]++;
      this.quietPair[base + to]--;
    }
    if (first >= this.firstFlow) this.ages.fill(s, from - first, to - first);
  }

  /** Add the quiet runs into byState and byPair. */
  finish(): void {
    const S = this.S, span = this.span;
    for (let s = 0; s < S; s++) {
      const base = s * (span + 1);
      let inState = 0, inPair = 0;
      for (let p = 0; p < span; p++) {
        inState += this.quietState[base + p];
        inPair += this.quietPair[base + p];
        if (inState !== 0) this.byState[(p - this.outStart) * S + s] += inState;
        if (inPair !== 0) this.byPair[(p * S + s) * S + s] += inPair;
      }
    }
  }

  row(_u: number, p: number, code: number, prevCode: number, first: number): void {
    const S = this.S, A = this.A;
    const s = code - 1, prev = prevCode - 1, t = p - first;
    this.byState[(p - this.outStart) * S + s]++;
    if (prev >= 0 && p - 1 >= this.firstFlow) {
      this.byPair[(p * S + prev) * S + s]++;
      if (prev < A) {
        const band = t > 0 ? this.bandOf[t - 1 < this.lastEdge ? t - 1 : this.lastEdge] : 0;
        this.byCell[((p * S + prev) * this.B + band) * 2 + (s < A ? 1 : 0)]++;
      }
    }
    if (first >= this.firstFlow) {
      // a member past the warm-up: its rows start at age 0 (firstFlow ≥ outStart)
      this.ages[t] = s;
      if (s < A) {
        if (this.dense) this.tri[this.triStart[first - this.firstFlow] + t]++;
        else {
          const key = first * this.span + t;
          this.triMap.set(key, (this.triMap.get(key) ?? 0) + 1);
        }
      }
    }
  }

  endUser(u: number, first: number, dormantAt: number): void {
    this.firstDormant[u] = dormantAt;
    if (first >= this.firstFlow) this.accs.addMember(first, this.ages, 0, this.span - first, this.A);
  }
}

/** The tables `aggregate(classify(active, plan, users, o.outStart), o)` gives, in one walk with no rows kept. */
export function walkAggregate(active: ActivePeriods, plan: LifecyclePlan, users: number, o: AggregateOptions, firstActive = firstActivePeriods(active, users)): WalkedTables {
  const span = o.labels.length;
  const firstFlow = o.outStart + o.warmup;
  const firstDormant = new Int32Array(users).fill(-2);
  const accs = new CohortAccumulators(span, firstFlow);
  const t = new TableCounter(o, firstFlow, classifiedSize(firstActive, span, o.outStart), firstDormant, accs);
  walkUsers(active, plan, o.outStart, t);
  t.finish();
  const { byState, byPair, byCell, B, dense, tri, triStart, triMap } = t;
  const counts: TableCounts = {
    byState,
    byPair,
    byCell,
    B,
    age: (k, a) => (dense ? tri[triStart[k - firstFlow] + a] : triMap.get(k * span + a) ?? 0),
  };
  const tables = waistTables(counts, o, (cohorts) => accs.finish(cohorts, o.labels), firstActive, firstDormant);
  return { tables, firstActive, firstDormant };
}
