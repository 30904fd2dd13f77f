/**
 * A plain, per-user reference of the lifecycle classification and the flows tables, written from the
 * specification only, for checking the engine.
 *
 * Method (deliberately unlike integer day arithmetic): every timestamp becomes a luxon DateTime in the
 * rules' zone; its period is found with `startOf('day' | 'month')`, or the start of the day stepped
 * back to the week start; the run of periods is built by luxon calendar addition (`plus`). Each user's
 * states are then walked one period at a time with plain counters. Nothing here is fast; all is simple.
 */
import { DateTime } from 'luxon';

export const STATES = ['fresh', 'engaged', 'returned', 'lapsing', 'dormant'] as const;
export type State = (typeof STATES)[number];
export const ACTIVE_STATES: readonly State[] = ['fresh', 'engaged', 'returned'];
export const WEEKDAY_NUMBER: Record<string, number> = {
  monday: 1,
  tuesday: 2,
  wednesday: 3,
  thursday: 4,
  friday: 5,
  saturday: 6,
  sunday: 7,
};

/** A split of an active state by key events in the period: [fewer than atLeast, atLeast or more]. */
export interface RefSplit {
  state: 'engaged' | 'returned';
  atLeast: number;
  names: [string, string];
}

export interface RefRules {
  grain: 'day' | 'week' | 'month';
  splits?: RefSplit[];
  weekStart?: keyof typeof WEEKDAY_NUMBER | string;
  timezone?: string;
  keyEvents?: string[];
  minEvents?: number;
  lapseLimit: number;
  warmup?: number;
}

export interface RefEvent {
  user: string;
  /** As written in the input: ISO 8601 (with or without offset) or epoch digits. */
  timestamp: string;
  event: string;
}

export interface RefRange {
  /** A date (YYYY-MM-DD) inside the first output period. */
  from?: string;
  /** A date (YYYY-MM-DD) inside the last period analysed. */
  to?: string;
  warmup?: number;
}

export interface RefTransition {
  from: string;
  to: string;
  counts: number[][];
  fresh: number;
}

export interface RefResult {
  periods: string[];
  warmup: number;
  /** The states in order: the base states, a split one replaced by its two sub-states. */
  stateList: string[];
  /** user → state per output period (null before the user's first active period). */
  states: Map<string, (string | null)[]>;
  stateCounts: number[][];
  transitions: RefTransition[];
  /** Users with a first active period (anywhere in the analysed history). */
  users: number;
}

/**
 * The instant of a timestamp, shown in `zone`. Epoch digits: |v| ≥ 1e11 is milliseconds, else
 * seconds; ISO 8601 with an offset or Z is that instant; with no offset it is wall-clock time in `zone`.
 */
export function refInstant(ts: string, zone: string): DateTime {
  const t = ts.trim();
  if (/^-?\d+$/.test(t)) {
    const v = Number(t);
    return Math.abs(v) >= 1e11 ? DateTime.fromMillis(v, { zone }) : DateTime.fromSeconds(v, { zone });
  }
  const dt = DateTime.fromISO(t, { zone });
  if (!dt.isValid) throw new Error(`reference: bad timestamp ${ts}`);
  return dt;
}

/** Start (local midnight, in the rules' zone) of the period holding `dt`. */
export function refPeriodStart(dt: DateTime, rules: RefRules): DateTime {
  const day = dt.startOf('day');
  if (rules.grain === 'day') return day;
  if (rules.grain === 'month') return dt.startOf('month');
  const start = WEEKDAY_NUMBER[rules.weekStart ?? 'monday'];
  const back = (day.weekday - start + 7) % 7;
  return day.minus({ days: back }).startOf('day');
}

/** The period label (start date YYYY-MM-DD) of a timestamp under `rules`. */
export function refLabel(ts: string, rules: RefRules): string {
  return refPeriodStart(refInstant(ts, rules.timezone ?? 'UTC'), rules).toISODate()!;
}

/** The label of the period holding a calendar date (YYYY-MM-DD). */
export function refLabelOfDate(date: string, rules: RefRules): string {
  const zone = rules.timezone ?? 'UTC';
  return refPeriodStart(DateTime.fromISO(date, { zone }), rules).toISODate()!;
}

/** Every period label from the period starting `first` to the one starting `last`, by calendar addition. */
export function refPeriodRun(first: DateTime, last: DateTime, rules: RefRules): string[] {
  const unit = rules.grain === 'day' ? 'days' : rules.grain === 'week' ? 'weeks' : 'months';
  const lastLabel = last.toISODate()!;
  const out: string[] = [];
  // add i whole steps to the first start each time, so month ends and DST never accumulate drift
  for (let i = 0; ; i += 1) {
    const label = first.plus({ [unit]: i }).toISODate()!;
    if (label > lastLabel) throw new Error('reference: period run overshot');
    out.push(label);
    if (label === lastLabel) return out;
  }
}

/** Classify every user in every period and build the transition tables, straight from the spec. */
export function refClassify(events: readonly RefEvent[], rules: RefRules, range: RefRange = {}): RefResult {
  const zone = rules.timezone ?? 'UTC';
  const minEvents = rules.minEvents ?? 1;
  const keys = rules.keyEvents ? new Set(rules.keyEvents) : null;
  const toLabel = range.to ? refLabelOfDate(range.to, rules) : undefined;

  // used events: key events (or all), not after --to
  const used: { user: string; start: DateTime; label: string }[] = [];
  for (const e of events) {
    if (keys && !keys.has(e.event)) continue;
    const start = refPeriodStart(refInstant(e.timestamp, zone), rules);
    const label = start.toISODate()!;
    if (toLabel && label > toLabel) continue;
    used.push({ user: e.user, start, label });
  }
  if (used.length === 0) throw new Error('reference: no used events');
  let first = used[0].start;
  let last = used[0].start;
  for (const u of used) {
    if (u.start < first) first = u.start;
    if (u.start > last) last = u.start;
  }
  const all = refPeriodRun(first, last, rules);

  // key events per user per period
  const perUser = new Map<string, Map<string, number>>();
  for (const u of used) {
    let m = perUser.get(u.user);
    if (!m) perUser.set(u.user, (m = new Map()));
    m.set(u.label, (m.get(u.label) ?? 0) + 1);
  }

  // the states in order, and the sub-state of a split state by the period's key events
  const stateList = STATES.flatMap((st) => rules.splits?.find((x) => x.state === st)?.names ?? [st]);
  const refine = (st: State, n: number): string => {
    const split = rules.splits?.find((x) => x.state === st);
    return split ? split.names[n >= split.atLeast ? 1 : 0] : st;
  };

  // walk each user through every period of the history
  const full = new Map<string, (string | null)[]>();
  for (const [user, counts] of perUser) {
    const row: (string | null)[] = [];
    let seenActive = false;
    let prevActive = false;
    let quiet = 0;
    for (const label of all) {
      const active = (counts.get(label) ?? 0) >= minEvents;
      let state: State | null = null;
      if (!seenActive) {
        if (active) {
          state = 'fresh';
          seenActive = true;
        }
      } else if (active) {
        state = prevActive ? 'engaged' : 'returned';
      } else {
        quiet = prevActive ? 1 : quiet + 1;
        state = quiet <= rules.lapseLimit ? 'lapsing' : 'dormant';
      }
      if (active) quiet = 0;
      prevActive = active;
      row.push(state && active ? refine(state, counts.get(label) ?? 0) : state);
    }
    if (seenActive) full.set(user, row);
  }

  // narrow the output to --from
  const fromLabel = range.from ? refLabelOfDate(range.from, rules) : all[0];
  const offset = all.indexOf(fromLabel);
  if (offset < 0) throw new Error(`reference: --from ${range.from} is outside the history`);
  const periods = all.slice(offset);
  const states = new Map<string, (string | null)[]>();
  for (const [user, row] of full) states.set(user, row.slice(offset));

  const stateCounts = periods.map((_, p) => {
    const c = stateList.map(() => 0);
    for (const row of states.values()) {
      const s = row[p];
      if (s) c[stateList.indexOf(s)] += 1;
    }
    return c;
  });

  const warmup = range.warmup ?? rules.warmup ?? 0;
  const transitions: RefTransition[] = [];
  for (let p = 1; p < periods.length; p += 1) {
    if (p - 1 < warmup) continue; // the earlier period is a warm-up period
    const counts = stateList.map(() => stateList.map(() => 0));
    let fresh = 0;
    for (const row of states.values()) {
      const a = row[p - 1];
      const b = row[p];
      if (a && b) counts[stateList.indexOf(a)][stateList.indexOf(b)] += 1;
      if (b === 'fresh') fresh += 1;
    }
    transitions.push({ from: periods[p - 1], to: periods[p], counts, fresh });
  }
  return { periods, warmup, stateList, states, stateCounts, transitions, users: full.size };
}

/** Classified rows (user, period, state), sorted by user then period, as the spec's `classify` gives. */
export function refRows(r: RefResult): { user: string; period: string; state: string }[] {
  const out: { user: string; period: string; state: string }[] = [];
  const users = [...r.states.keys()].sort();
  for (const user of users) {
    r.states.get(user)!.forEach((s, p) => {
      if (s) out.push({ user, period: r.periods[p], state: s });
    });
  }
  return out;
}

export interface RefGrowth {
  activeBefore: number;
  newlyInactive: number;
  fresh: number;
  returned: number;
  activeAfter: number;
  quickRatio: number | null;
}

/**
 * Rates, status-split retention and the growth account of one transition, from the per-user states
 * (not from the counts matrix), so it checks the tables as well as the arithmetic.
 */
export function refFlowsOf(r: RefResult, t: RefTransition) {
  const p = r.periods.indexOf(t.to);
  const isActive = (s: string | null) => s !== null && (ACTIVE_STATES as readonly string[]).includes(s);
  const rates = t.counts.map((row) => {
    const n = row.reduce((a, b) => a + b, 0);
    return n === 0 ? null : row.map((c) => c / n);
  });
  const retention: Record<string, { n: number; retained: number; rate: number | null }> = {};
  for (const s of ACTIVE_STATES) {
    let n = 0;
    let retained = 0;
    for (const row of r.states.values()) {
      if (row[p - 1] === s) {
        n += 1;
        if (isActive(row[p])) retained += 1;
      }
    }
    retention[s] = { n, retained, rate: n === 0 ? null : retained / n };
  }
  let activeBefore = 0;
  let activeAfter = 0;
  let newlyInactive = 0;
  let fresh = 0;
  let returned = 0;
  for (const row of r.states.values()) {
    const a = row[p - 1];
    const b = row[p];
    if (isActive(a)) activeBefore += 1;
    if (isActive(b)) activeAfter += 1;
    if (isActive(a) && b !== null && !isActive(b)) newlyInactive += 1;
    if (b === 'fresh') fresh += 1;
    if (a !== null && !isActive(a) && isActive(b)) returned += 1;
  }
  const growth: RefGrowth = {
    activeBefore,
    newlyInactive,
    fresh,
    returned,
    activeAfter,
    quickRatio: newlyInactive === 0 ? null : (fresh + returned) / newlyInactive,
  };
  return { rates, retention, growth };
}
