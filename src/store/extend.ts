/**
 * Extending the waist by whole periods from per-user state: the heart of the incremental store.
 *
 * Each new period walks every stored user one step through the lifecycle plan (the same tabulated
 * machine the engine walks, lifecycle/plan.ts) and adds that period to every table in full form,
 * exactly as engines/memory/aggregate.ts would have counted it over the whole history:
 * - state counts, transitions and tenure retention cells from each user's state before and after;
 * - the cohort triangle's new age from who is active; `lastActiveAge`, `lastActiveAgeBeforeFinal` and
 *   the window counts from each user's cohort and last active period (a member counts in the window
 *   of ages a … A exactly when their last active age is at least a);
 * - durations from each user's first active and first dormant periods, censored at the end.
 * The cost of a period is one step a user plus the cohort triangle's new column: it grows with the
 * users, never with the periods already stored. A rebuild runs the same steps from an empty state.
 */
import { TidemarkError } from '../errors.js';
import { bandLabels } from '../flows/tenure.js';
import { WINDOW_MAX_AGE, type CohortRow, type DurationRow, type WaistTables } from '../flows/types.js';
import type { EventLog } from '../ingest/eventLog.js';
import { activePeriods } from '../lifecycle/activity.js';
import { applyIdle, IDLE_CLASSES, levelOf, type LifecyclePlan } from '../lifecycle/plan.js';
import { baseState, lifecycleStates } from '../lifecycle/states.js';
import { periodLabel, type PeriodScheme } from '../periods/calendar.js';
import type { Rules } from '../rules/schema.js';
import { canonicalDurations } from '../waist/canonical.js';
import { NO_PERIOD, type UserState } from './users.js';

/** The waist tables being extended, and the period keys they cover. */
export interface Ledger {
  /** First period key of the range; undefined while nothing is stored. */
  startKey?: number;
  /** Last period key stored. */
  lastKey?: number;
  /** The tables in full form (waist/types.ts), every period from startKey to lastKey. */
  tables: WaistTables;
}

/** Empty tables for these rules. */
export function emptyTables(rules: Rules, plan: LifecyclePlan): WaistTables {
  const table = lifecycleStates(rules);
  const roleName = (role: string) => (table.find((s) => s.role === role) as { name: string }).name;
  const activeCount = table.filter((s) => s.active).length;
  return {
    states: [...plan.states],
    activeStates: plan.states.slice(0, activeCount),
    arrivalState: roleName('arrival'),
    exitState: roleName('exit'),
    periods: [],
    warmup: rules.warmup,
    stateCounts: [],
    transitions: [],
    tenureCells: [],
    cohorts: [],
    durations: [],
  };
}

/** Active (user, period) pairs of a log in [fromKey, toKey], by period: uid and key events. */
export interface PeriodActivity {
  fromKey: number;
  /** Entries of period fromKey + i are start[i] … start[i + 1] − 1. */
  start: Int32Array;
  uid: Int32Array;
  events: Int32Array;
}

/**
 * The active periods of `log` in [fromKey, toKey], users mapped to stored uids (users seen active for
 * the first time are added to `users`, not yet active). `uidOfLogUser` receives the mapping.
 */
export function periodActivity(log: EventLog, users: UserState, minEvents: number, fromKey: number, toKey: number): { activity: PeriodActivity; uidOfLogUser: Int32Array } {
  const span = toKey - fromKey + 1;
  const a = activePeriods(log, minEvents, fromKey, span);
  const uidOfLogUser = new Int32Array(log.users.length).fill(-1);
  const start = new Int32Array(span + 1);
  for (let i = 0; i < a.user.length; i++) start[a.offset[i] + 1]++;
  for (let p = 0; p < span; p++) start[p + 1] += start[p];
  const fill = start.slice(0, span);
  const uid = new Int32Array(a.user.length);
  const events = new Int32Array(a.user.length);
  for (let i = 0; i < a.user.length; i++) {
    const lu = a.user[i];
    let u = uidOfLogUser[lu];
    if (u < 0) {
      u = users.uidOf(log.users[lu]);
      if (u < 0) u = users.add(log.users[lu]);
      uidOfLogUser[lu] = u;
    }
    const at = fill[a.offset[i]]++;
    uid[at] = u;
    events[at] = a.events[i];
  }
  return { activity: { fromKey, start, uid, events }, uidOfLogUser };
}

/** Called for every user and period walked (for comparing two classifications). */
export type StateHook = (uid: number, key: number, code: number) => void;

/**
 * Extend `ledger` and `users` through period `toKey` (each period after the ledger's last, or from
 * `activity.fromKey` when the ledger is empty), with the activity of those periods.
 * @throws {TidemarkError} INPUT_INVALID when the activity does not start right after the ledger.
 */
export function extend(ledger: Ledger, users: UserState, rules: Rules, plan: LifecyclePlan, activity: PeriodActivity, toKey: number, onState?: StateHook): void {
  const from = ledger.lastKey === undefined ? activity.fromKey : ledger.lastKey + 1;
  if (from !== activity.fromKey) throw new TidemarkError('INPUT_INVALID', `activity starts at period key ${activity.fromKey}, not ${from}`, { key: 'activity' });
  if (ledger.startKey === undefined) ledger.startKey = from;
  const w = new Walk(ledger, users, plan, { grain: rules.grain, weekStart: rules.weekStart }, rules.tenureBands);
  for (let p = from; p <= toKey; p++) w.step(p, activity, p === toKey, onState);
  ledger.lastKey = Math.max(toKey, ledger.lastKey ?? toKey);
  if (toKey >= from) w.finish();
}

/** One extension's working state. */
class Walk {
  private readonly S: number;
  private readonly A: number;
  private readonly B: number;
  private readonly start: number;
  private readonly firstFlowKey: number;
  private readonly dormantCode: number;
  private readonly freshIdx: number;
  private readonly bands: number[];
  private readonly bandOf: Uint8Array;
  private readonly lastEdge: number;
  private readonly bandNames: string[];
  /** Cohort rows by period key. */
  private readonly cohortAt = new Map<number, CohortRow>();
  /** Events this period, by uid (0: inactive). */
  private ev: Int32Array;

  constructor(private readonly ledger: Ledger, private readonly users: UserState, private readonly plan: LifecyclePlan, private readonly scheme: PeriodScheme, bands: readonly number[]) {
    const t = ledger.tables;
    this.S = t.states.length;
    this.A = t.activeStates.length;
    this.start = ledger.startKey as number;
    this.firstFlowKey = this.start + t.warmup;
    this.dormantCode = plan.states.indexOf(baseState('exit')) + 1;
    this.freshIdx = t.states.indexOf(t.arrivalState);
    this.bands = [...bands];
    this.B = this.bands.length;
    this.lastEdge = this.bands[this.B - 1];
    this.bandOf = new Uint8Array(this.lastEdge + 1);
    for (let x = 0, b = 0; x <= this.lastEdge; x++) {
      while (b + 1 < this.B && x >= this.bands[b + 1]) b++;
      this.bandOf[x] = b;
    }
    this.bandNames = bandLabels(this.bands);
    const index = new Map(t.periods.map((label, i) => [label, i]));
    for (const row of t.cohorts) this.cohortAt.set(this.start + (index.get(row.cohort) as number), row);
    this.ev = new Int32Array(users.n);
  }

  step(p: number, act: PeriodActivity, final: boolean, onState?: StateHook): void {
    const { users: us, plan, S, A, B } = this;
    const t = this.ledger.tables;
    const label = periodLabel(p, this.scheme);
    t.periods.push(label);
    if (this.ev.length < us.n) this.ev = new Int32Array(Math.max(us.n, this.ev.length * 2));
    const ev = this.ev;
    const i0 = act.start[p - act.fromKey], i1 = act.start[p - act.fromKey + 1];
    for (let i = i0; i < i1; i++) {
      const u = act.uid[i];
      ev[u] = act.events[i];
      if (us.first[u] === NO_PERIOD) us.first[u] = p;
    }
    const flows = p - 1 >= this.firstFlowKey;
    const sc = new Array<number>(S).fill(0);
    const tr = new Int32Array(S * S);
    const cell = new Int32Array(A * B * 2);
    // cohorts: a new age for each, and who counts where
    for (const [k, row] of this.cohortAt) {
      row.active.push(0);
      if (p - k > WINDOW_MAX_AGE + 1) delete row.windowActive;
    }
    const hist = new Map<number, { after: Int32Array; before: Int32Array }>();
    const histOf = (k: number): { after: Int32Array; before: Int32Array } | undefined => {
      const age = p - k;
      if (!final && age > WINDOW_MAX_AGE + 1) return undefined;
      let h = hist.get(k);
      if (!h) hist.set(k, (h = { after: new Int32Array(age + 1), before: new Int32Array(age) }));
      return h;
    };
    const L = plan.lapseLimit;
    const split = plan.thresholds.length > 0;
    const { nextState, idleEffect, levels } = plan;
    const cohortKeyMin = this.firstFlowKey;
    for (let u = 0; u < us.n; u++) {
      const first = us.first[u];
      if (first === NO_PERIOD || first > p) continue;
      const e = ev[u];
      ev[u] = 0;
      const prev = us.code[u];
      const idleBefore = us.idle[u], prevBefore = us.prevCode[u];
      const level = e === 0 ? 0 : split ? levelOf(plan, true, e) : 1;
      const j = (prev * IDLE_CLASSES + (us.idle[u] < L ? 0 : 1)) * levels + level;
      const next = nextState[j];
      us.idle[u] = applyIdle(idleEffect[j], us.idle[u], L);
      us.prevCode[u] = prev;
      us.code[u] = next;
      if (next === this.dormantCode && us.firstDormant[u] === NO_PERIOD) us.firstDormant[u] = p;
      sc[next - 1]++;
      if (flows && prev > 0) {
        tr[(prev - 1) * S + next - 1]++;
        if (prev - 1 < A) {
          const band = this.bandOf[Math.min(p - 1 - first, this.lastEdge)];
          cell[((prev - 1) * B + band) * 2 + (next - 1 < A ? 1 : 0)]++;
        }
      }
      const before = us.lastActive[u];
      if (e > 0) us.lastActive[u] = p;
      // changed: the state, the state before, the idle count, the last active or first dormant period
      if (e > 0 || next !== prev || prev !== prevBefore || us.idle[u] !== idleBefore || us.firstDormant[u] === p) us.dirty[u] = 1;
      if (first >= cohortKeyMin) {
        let row = this.cohortAt.get(first);
        if (!row) {
          row = { cohort: label, size: 0, active: [0] };
          this.cohortAt.set(first, row);
        }
        if (next - 1 < A) row.active[p - first]++;
        const h = histOf(first);
        if (h) {
          h.after[us.lastActive[u] - first]++;
          if (p > first) h.before[before - first]++;
        }
      }
      onState?.(u, p, next);
    }
    t.stateCounts.push(sc);
    if (flows) {
      const counts = Array.from({ length: S }, (_, i) => Array.from(tr.subarray(i * S, i * S + S)));
      const from = t.periods[t.periods.length - 2];
      t.transitions.push({ from, to: label, counts, fresh: sc[this.freshIdx] });
      for (let s = 0; s < A; s++) {
        for (let b = 0; b < B; b++) {
          const kept = cell[(s * B + b) * 2 + 1], lost = cell[(s * B + b) * 2];
          if (kept + lost > 0) t.tenureCells.push({ to: label, state: t.states[s], segment: this.bandNames[b], n: kept + lost, retained: kept });
        }
      }
    }
    // the new cohort's size, then each cohort's windows and last-active counts
    const fresh = this.cohortAt.get(p);
    if (fresh) fresh.size = fresh.active[0];
    for (const [k, row] of this.cohortAt) {
      const h = hist.get(k);
      if (!h) continue;
      const age = p - k;
      if (age <= WINDOW_MAX_AGE + 1) {
        // members with a last active age ≥ a are exactly those active somewhere in ages a … age
        const atLeast = new Array<number>(age + 1);
        for (let a = age, run = 0; a >= 0; a--) atLeast[a] = run += h.after[a];
        const win = row.windowActive ?? [];
        for (let a = 0; a < age; a++) win[a].push(atLeast[a]);
        win.push([atLeast[age]]);
        row.windowActive = win;
      }
      if (final) {
        row.lastActiveAge = Array.from(h.after);
        row.lastActiveAgeBeforeFinal = Array.from(h.before);
      }
    }
  }

  /** Put the cohorts in the engine's order and shape, and recount the durations. */
  finish(): void {
    const t = this.ledger.tables;
    const keys = [...this.cohortAt.keys()].sort((a, b) => a - b);
    t.cohorts = keys.map((k) => {
      const r = this.cohortAt.get(k) as CohortRow;
      // the memory engine's key order, so the two write byte-identical waists
      const row: CohortRow = { cohort: r.cohort, size: r.size, active: r.active, lastActiveAge: r.lastActiveAge };
      row.lastActiveAgeBeforeFinal = r.lastActiveAgeBeforeFinal;
      if (r.windowActive) row.windowActive = r.windowActive;
      return row;
    });
    t.durations = durations(this.users, this.start, this.ledger.lastKey as number, this.firstFlowKey, this.scheme);
  }
}

/**
 * Time from first active to first dormant per user, censored at `lastKey`, for users first active
 * from `firstFlowKey` on, grouped by cohort (as engines/memory/aggregate.ts `durationRows`).
 */
export function durations(users: UserState, startKey: number, lastKey: number, firstFlowKey: number, scheme: PeriodScheme): DurationRow[] {
  const m = new Map<string, DurationRow>();
  const labels = new Map<number, string>();
  for (let u = 0; u < users.n; u++) {
    const first = users.first[u];
    if (first === NO_PERIOD || first < firstFlowKey) continue;
    const d = users.firstDormant[u];
    const observed: 0 | 1 = d !== NO_PERIOD ? 1 : 0;
    const duration = observed ? d - first : lastKey - first;
    let label = labels.get(first);
    if (label === undefined) labels.set(first, (label = periodLabel(first, scheme)));
    const key = `${first - startKey}|${duration}|${observed}`;
    const row = m.get(key);
    if (row) row.users++;
    else m.set(key, { group: label, cohort: label, duration, observed, users: 1 });
  }
  return canonicalDurations([...m.values()]);
}
