/**
 * The grain advisor: how long users take to come back, and the period length and lapse limit that
 * suit that rhythm.
 *
 * A *return gap* is the number of days between two consecutive active days of one user (an active
 * day holds at least one key event, in the rules' time zone); a user active on days 3, 4 and 11 has
 * the gaps 1 and 7. Users seen on one day only have no gap: they never came back in the data, so the
 * gaps describe the users who return (say so beside the numbers).
 */
import { TidemarkError } from '../errors.js';
import type { EventLog } from '../ingest/eventLog.js';
import { isKeyRow, type Timelines } from '../lifecycle/timelines.js';
import { plural } from '../text/plural.js';

const DAY = 86_400_000;

/** The grains and the days one period covers (a month: its longest, 31 days). */
export const GRAIN_DAYS = { day: 1, week: 7, month: 31 } as const;
export type AdvisedGrain = keyof typeof GRAIN_DAYS;

/** The share of return gaps the suggested grain must cover, and the share the lapse limit must wait out. */
export const COVER_SHARE = 0.8;
export const LAPSE_SHARE = 0.95;

/** Buckets of the gap distribution, in days: [from, to] inclusive (to = null: and longer). */
export const GAP_BUCKETS: readonly [number, number | null][] = [
  [1, 1], [2, 2], [3, 3], [4, 4], [5, 5], [6, 6], [7, 7], [8, 14], [15, 21], [22, 31], [32, 62], [63, 92], [93, 183], [184, null],
];

export interface GrainAdvice {
  /** Users with at least one active day. */
  users: number;
  /** Users with two or more active days (they give the gaps). */
  returningUsers: number;
  gaps: number;
  distribution: { from: number; to: number | null; gaps: number; share: number; cumulative: number }[];
  /** Percentiles of the gaps in days (inverse of the empirical distribution function), null without gaps. */
  percentiles: { p50: number; p80: number; p90: number; p95: number } | null;
  suggestion: { grain: AdvisedGrain; lapseLimit: number } | null;
  rule: string;
  reading: string;
}

/**
 * The p-quantile of sorted values by the inverse of the empirical distribution function: the
 * smallest value v with at least p·n values ≤ v (Hyndman & Fan 1996, "Sample quantiles in
 * statistical packages", The American Statistician 50(4), definition 1).
 * @throws TidemarkError NOT_ENOUGH_DATA for no values; INPUT_INVALID for p outside (0, 1].
 * @example quantileInverseEcdf([1, 1, 2, 7, 7], 0.8) // 7 (4 of 5 values ≤ 7; only 3 ≤ 2)
 */
export function quantileInverseEcdf(sorted: ArrayLike<number>, p: number): number {
  if (!(p > 0 && p <= 1)) throw new TidemarkError('INPUT_INVALID', `quantileInverseEcdf: p must be in (0, 1], got ${p}`);
  if (sorted.length === 0) throw new TidemarkError('NOT_ENOUGH_DATA', 'quantileInverseEcdf: no values');
  return sorted[Math.max(0, Math.ceil(p * sorted.length - 1e-9) - 1)];
}

/**
 * The grain and lapse limit for return gaps whose 80th percentile is `p80` days and 95th `p95`:
 * the smallest grain whose period covers p80 (day ≤ 1, week ≤ 7, month ≤ 31 days; month when even
 * a month does not), and as lapse limit the quiet periods a return at p95 spans, ceil(p95 / period
 * days) − 1, at least 1. Source: our own rule; the 80% and 95% shares are common practice, not a standard.
 * @example suggestGrain(7, 21) // { grain: 'week', lapseLimit: 2 } (a 21-day gap is 2 quiet weeks, then a return)
 */
export function suggestGrain(p80: number, p95: number): { grain: AdvisedGrain; lapseLimit: number } {
  const grain: AdvisedGrain = p80 <= GRAIN_DAYS.day ? 'day' : p80 <= GRAIN_DAYS.week ? 'week' : 'month';
  return { grain, lapseLimit: Math.max(1, Math.ceil(p95 / GRAIN_DAYS[grain]) - 1) };
}

export const GRAIN_RULE = `The suggested grain is the smallest period (a day, a week, or a month of up to 31 days) that holds the 80th percentile of return gaps, so that most returns fall in the next period or the one after; the lapse limit is the number of quiet periods a return at the 95th percentile spans, ceil(p95 / days per period) − 1, at least 1, so that 95% of returns come before a user is called dormant.`;

/**
 * Return gaps of every user, their distribution and the suggested grain.
 * @example users active on days {3, 4, 11} and {1, 8}: gaps [1, 7, 7], p80 = 7 → week.
 */
export function adviseGrain(log: EventLog, t: Timelines): GrainAdvice {
  const gaps: number[] = [];
  let users = 0, returning = 0;
  for (let u = 0; u < t.users; u++) {
    let last = NaN, days = 0;
    for (let k = t.rowStart[u]; k < t.rowStart[u + 1]; k++) {
      const i = t.order[k];
      if (!isKeyRow(log, i)) continue;
      const day = Math.floor(log.wallMs[i] / DAY);
      if (day === last) continue;
      if (days > 0) gaps.push(day - last);
      last = day;
      days++;
    }
    if (days > 0) users++;
    if (days > 1) returning++;
  }
  const sorted = Float64Array.from(gaps).sort();
  const n = sorted.length;
  let cumulative = 0, k = 0;
  const distribution = GAP_BUCKETS.map(([from, to]) => {
    let c = 0;
    while (k < n && (to === null || sorted[k] <= to)) {
      c++;
      k++;
    }
    cumulative += c;
    return { from, to, gaps: c, share: n ? c / n : 0, cumulative: n ? cumulative / n : 0 };
  });
  if (n === 0) {
    return { users, returningUsers: 0, gaps: 0, distribution, percentiles: null, suggestion: null, rule: GRAIN_RULE, reading: `No user came back on a second day (${plural(users, 'user')}), so the data cannot suggest a grain.` };
  }
  const q = (p: number) => quantileInverseEcdf(sorted, p);
  const percentiles = { p50: q(0.5), p80: q(COVER_SHARE), p90: q(0.9), p95: q(LAPSE_SHARE) };
  const suggestion = suggestGrain(percentiles.p80, percentiles.p95);
  const days = (d: number) => plural(d, 'day');
  const beyond = percentiles.p80 > GRAIN_DAYS.month ? ' (returns are rarer than monthly: even a month does not hold 80% of them)' : '';
  const reading = `Half of the returns come within ${days(percentiles.p50)} and 80% within ${days(percentiles.p80)}, so a ${suggestion.grain} grain fits${beyond}, with a lapse limit of ${suggestion.lapseLimit} (95% of returns come within ${days(percentiles.p95)}); from ${returning.toLocaleString('en-US')} of ${users.toLocaleString('en-US')} users who came back at least once.`;
  return { users, returningUsers: returning, gaps: n, distribution, percentiles, suggestion, rule: GRAIN_RULE, reading };
}
