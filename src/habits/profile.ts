/**
 * Habit profiles: what long-tenured members do, against members who went dormant early, over each
 * member's first `span` periods (counted from their first active period).
 *
 * - *Long-tenured*: active in at least `minActive` of their first `span` periods (default 6 of 8).
 * - *Went dormant early*: active in fewer than `minActive` of them, and inactive in the last
 *   lapseLimit + 1 of them, so dormant by the rules when those periods end.
 * Members not observed for `span` periods are left out and counted. The two groups never overlap.
 *
 * Compared: the event names each group keeps doing (the share of members who do it, and the share of
 * a member's periods with any event that hold it), regularity (share of periods active, longest run
 * of consecutive active periods), the gaps between active periods, and the day of week and hour of
 * their events (local time in the rules' zone). Correlations only: see the caution.
 */
import { TidemarkError } from '../errors.js';
import type { EventLog } from '../ingest/eventLog.js';
import { firstActive, type ObservedRange, type Timelines } from '../lifecycle/timelines.js';
import { plural } from '../text/plural.js';

const DAY = 86_400_000;
export const WEEKDAY_NAMES = ['Monday', 'Tuesday', 'Wednesday', 'Thursday', 'Friday', 'Saturday', 'Sunday'];

export interface HabitOptions {
  /** Periods from the first active one that are compared (≥ 2). */
  span: number;
  /** Active periods among them that make a member long-tenured (1 ≤ minActive ≤ span). */
  minActive: number;
  /** The rules' lapse limit: inactive periods before dormant. */
  lapseLimit: number;
}

export interface GroupProfile {
  members: number;
  /** Per event name, most done first among long-tenured members. */
  events: { event: string; members: number; memberShare: number; periodShare: number }[];
  /** Mean and median share of the span's periods active, and of the longest run of active periods (in periods). */
  activeShare: { mean: number; median: number } | null;
  longestRun: { mean: number; median: number } | null;
  /** Gaps between consecutive active periods (1 = the next period), counts and shares, 1 … span − 1. */
  gaps: { gap: number; count: number; share: number }[];
  /** Share of the group's events by weekday (Monday first) and by hour 0–23. */
  weekdays: number[];
  hours: number[];
  eventsTotal: number;
}

export interface HabitOutput {
  options: HabitOptions;
  definitions: { longTenured: string; droppedEarly: string };
  longTenured: GroupProfile;
  droppedEarly: GroupProfile;
  /** Members first active in the range but observed for fewer than `span` periods. */
  leftOut: number;
  /** Members in neither group. */
  neither: number;
  /** Per event name: member share and period share, long-tenured minus dropped early (points as fractions). */
  differences: { event: string; memberShare: number | null; periodShare: number | null }[];
  caution: string;
  reading: string;
}

/** A difference in period share this large (5 points) is named in the reading. */
export const HABIT_NOTABLE = 0.05;
export const HABIT_CAUTION = 'Long-tenured users differ from early leavers in many ways at once; a habit that goes with staying is a correlation, not a cause. Test a change with an experiment before acting on it.';

function median(v: number[]): number {
  const s = [...v].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}

class Acc {
  members = 0;
  eventMembers: number[];
  eventPeriodShare: number[];
  activeShares: number[] = [];
  runs: number[] = [];
  gaps: number[];
  weekdays = new Array<number>(7).fill(0);
  hours = new Array<number>(24).fill(0);
  total = 0;
  constructor(names: number, span: number) {
    this.eventMembers = new Array<number>(names).fill(0);
    this.eventPeriodShare = new Array<number>(names).fill(0);
    this.gaps = new Array<number>(span).fill(0);
  }
}

/**
 * Profiles of the long-tenured and the early dormant.
 * @throws TidemarkError INPUT_INVALID for options out of range; NOT_ENOUGH_DATA when neither group has a member.
 * @example span 4, minActive 3, lapse limit 1: active in periods {0,1,2,3} → long-tenured (run 4);
 *   active in {0} only → went dormant early (inactive in periods 2 and 3).
 */
export function habitProfiles(log: EventLog, t: Timelines, range: ObservedRange, o: HabitOptions): HabitOutput {
  const { span, minActive, lapseLimit } = o;
  if (!(Number.isInteger(span) && span >= 2 && Number.isInteger(minActive) && minActive >= 1 && minActive <= span)) {
    throw new TidemarkError('INPUT_INVALID', `need 1 ≤ active ≤ span and span ≥ 2, got ${minActive} of ${span}`, { key: 'span' });
  }
  if (lapseLimit + 1 >= span) {
    throw new TidemarkError('INPUT_INVALID', `a span of ${plural(span, 'period')} cannot show a user going dormant: the lapse limit is ${lapseLimit}, so dormancy takes ${plural(lapseLimit + 1, 'quiet period')} after an active one`, { key: 'span' }, `Use a span of at least ${lapseLimit + 2}`);
  }
  const names = log.detail?.names ?? [''];
  const groups = [new Acc(names.length, span), new Acc(names.length, span)];
  let leftOut = 0, neither = 0;
  const inPeriod = new Int32Array(names.length).fill(-1); // the last period offset each name was seen in, for this member
  const periodsWith = new Int32Array(names.length);
  const touched: number[] = [];
  for (let u = 0; u < t.users; u++) {
    const f = firstActive(t, u);
    if (f === undefined || f < range.fromKey) continue;
    if (f + span - 1 > range.lastKey) {
      leftOut++;
      continue;
    }
    const act: number[] = [];
    for (let a = t.activeStart[u]; a < t.activeStart[u + 1] && t.activePeriod[a] < f + span; a++) act.push(t.activePeriod[a] - f);
    const tail = act.every((p) => p < span - lapseLimit - 1);
    const g = act.length >= minActive ? 0 : tail ? 1 : -1;
    if (g < 0) {
      neither++;
      continue;
    }
    const acc = groups[g];
    acc.members++;
    acc.activeShares.push(act.length / span);
    let run = 0, best = 0;
    for (let k = 0; k < act.length; k++) {
      run = k > 0 && act[k] === act[k - 1] + 1 ? run + 1 : 1;
      best = Math.max(best, run);
      if (k > 0) acc.gaps[act[k] - act[k - 1]]++;
    }
    acc.runs.push(best);
    let periodsWithAny = 0, lastAny = -1;
    for (let k = t.rowStart[u]; k < t.rowStart[u + 1]; k++) {
      const i = t.order[k];
      const off = log.period[i] - f;
      if (off < 0) continue;
      if (off >= span) break;
      if (off !== lastAny) {
        periodsWithAny++;
        lastAny = off;
      }
      const day = Math.floor(log.wallMs[i] / DAY);
      acc.weekdays[(((day + 3) % 7) + 7) % 7]++;
      acc.hours[Math.floor((log.wallMs[i] - day * DAY) / 3_600_000)]++;
      acc.total++;
      const e = log.detail ? log.detail.event[i] : 0;
      if (e === 0) continue;
      if (inPeriod[e] === -1) touched.push(e);
      if (inPeriod[e] !== off) {
        periodsWith[e]++;
        inPeriod[e] = off;
      }
    }
    for (const e of touched) {
      acc.eventMembers[e]++;
      acc.eventPeriodShare[e] += periodsWith[e] / periodsWithAny;
      inPeriod[e] = -1;
      periodsWith[e] = 0;
    }
    touched.length = 0;
  }
  if (groups[0].members + groups[1].members === 0) {
    throw new TidemarkError('NOT_ENOUGH_DATA', `no user is observed for ${plural(span, 'period')} after their first (${leftOut.toLocaleString('en-US')} left out as the data end too soon)`, { key: 'span' }, 'Lower --span, or use a longer log');
  }
  const profile = (a: Acc): GroupProfile => {
    const gapTotal = a.gaps.reduce((x, y) => x + y, 0);
    return {
      members: a.members,
      events: names.map((event, e) => ({ event, members: a.eventMembers[e], memberShare: a.members ? a.eventMembers[e] / a.members : 0, periodShare: a.members ? a.eventPeriodShare[e] / a.members : 0 })).filter((_, e) => e > 0),
      activeShare: a.members ? { mean: a.activeShares.reduce((x, y) => x + y, 0) / a.members, median: median(a.activeShares) } : null,
      longestRun: a.members ? { mean: a.runs.reduce((x, y) => x + y, 0) / a.members, median: median(a.runs) } : null,
      gaps: a.gaps.slice(1).map((count, k) => ({ gap: k + 1, count, share: gapTotal ? count / gapTotal : 0 })),
      weekdays: a.weekdays.map((c) => (a.total ? c / a.total : 0)),
      hours: a.hours.map((c) => (a.total ? c / a.total : 0)),
      eventsTotal: a.total,
    };
  };
  const [lt, de] = groups.map(profile);
  const order = lt.events.map((x, i) => i).sort((i, j) => lt.events[j].periodShare - lt.events[i].periodShare || (lt.events[i].event < lt.events[j].event ? -1 : 1));
  lt.events = order.map((i) => lt.events[i]);
  de.events = order.map((i) => de.events[i]);
  const both = lt.members > 0 && de.members > 0;
  const differences = lt.events.map((x, i) => ({ event: x.event, memberShare: both ? x.memberShare - de.events[i].memberShare : null, periodShare: both ? x.periodShare - de.events[i].periodShare : null }));
  const top = [...differences].filter((d) => d.periodShare !== null && Math.abs(d.periodShare) >= HABIT_NOTABLE).sort((a, b) => Math.abs(b.periodShare!) - Math.abs(a.periodShare!))[0];
  const p = (x: number) => `${(x * 100).toFixed(0)}%`;
  const reading = both
    ? `${plural(lt.members, 'long-tenured user')} ${lt.members === 1 ? 'was' : 'were'} active in ${p(lt.activeShare!.mean)} of their first ${plural(span, 'period')} (longest run ${lt.longestRun!.mean.toFixed(1)} on average), against ${p(de.activeShare!.mean)} for the ${de.members.toLocaleString('en-US')} who went dormant early${top ? `; the habit that differs most is ${top.event}, in ${p(lt.events.find((x) => x.event === top.event)!.periodShare)} of long-tenured users' periods with events against ${p(de.events.find((x) => x.event === top.event)!.periodShare)}` : `; no event name's share of their periods with events differs by ${HABIT_NOTABLE * 100} points or more, so they do the same things, more often`}.`
    : `Only one group has users (${lt.members} long-tenured, ${de.members} went dormant early), so there is nothing to compare.`;
  return {
    options: o,
    definitions: {
      longTenured: `active in at least ${minActive} of their first ${plural(span, 'period')}`,
      droppedEarly: `active in fewer than ${minActive} of their first ${plural(span, 'period')} and inactive in the last ${lapseLimit + 1} of them (dormant by the rules' lapse limit of ${lapseLimit})`,
    },
    longTenured: lt, droppedEarly: de, leftOut, neither, differences, caution: HABIT_CAUTION, reading,
  };
}
