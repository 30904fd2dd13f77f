/**
 * Early signals: what newcomers do in their first periods that goes with staying.
 *
 * For each event name (and for events of any name), each newcomer's events in their first `early`
 * periods (the first active period and the `early − 1` after it) are counted. For each threshold k,
 * newcomers with at least k such events are compared with the rest on later retention: being active
 * in the period `early + horizon − 1` after the first (so with early 1 and horizon 4, in the 4th
 * period after the first). Only newcomers observed for all `early + horizon` periods count; the others
 * are left out and counted (`leftOut`), so late arrivals do not read as churned.
 *
 * These are correlations: members keen from the start both do more early and stay longer. A change
 * (say, prompting everyone to book a class) needs an experiment before anyone acts on it.
 */
import { TidemarkError } from '../errors.js';
import type { EventLog } from '../ingest/eventLog.js';
import { activeIn, firstActive, type ObservedRange, type Timelines } from '../lifecycle/timelines.js';
import { bhAdjust } from '../stats/bh.js';
import { newcombeDifference } from '../stats/newcombe.js';
import { wilsonInterval } from '../stats/wilson.js';
import { twoProportionZTest } from '../stats/ztest.js';
import { plural } from '../text/plural.js';

export interface EarlyOptions {
  /** Periods from the first active one in which events are counted (≥ 1). */
  early: number;
  /** Periods after the early window to the period retention is read in (≥ 1). */
  horizon: number;
  /** Thresholds k (≥ 1), ascending. */
  thresholds: number[];
  /** False discovery rate for Benjamini–Hochberg (default 0.05). */
  q?: number;
  /** Groups smaller than this are flagged `small` (the rules' minCell). */
  minCell?: number;
}

export interface Rate {
  n: number;
  retained: number;
  rate: number;
  lower: number;
  upper: number;
}

export interface ThresholdRow {
  /** The event name; null for events of any name. */
  event: string | null;
  k: number;
  /** Newcomers with ≥ k events of the name in the early window, and the rest. */
  atLeast: Rate;
  below: Rate;
  /** atLeast.n / all newcomers counted. */
  coverage: number;
  /** atLeast.rate / below.rate; null when below.rate is 0. */
  lift: number | null;
  /** atLeast.rate − below.rate with Newcombe's hybrid score interval (95%). */
  difference: { value: number; lower: number; upper: number };
  /** Two-proportion z-test, and the Benjamini–Hochberg adjusted p-value across every row. */
  p: number;
  pAdjusted: number;
  significant: boolean;
  /** Youden's J: share of retained newcomers at ≥ k minus share of the others at ≥ k; null when all or none were retained. */
  youden: number | null;
  /** A group under minCell. */
  small: boolean;
}

export interface EarlyOutput {
  options: { early: number; horizon: number; thresholds: number[]; q: number };
  /** Newcomers counted (first active from the start of the range, observed for early + horizon periods). */
  newcomers: number;
  retained: number;
  /** Newcomers left out because the data end before their early + horizon periods. */
  leftOut: number;
  /** Users first active before the start of the range (not newcomers in it). */
  before: number;
  rows: ThresholdRow[];
  /** Per event name: its best threshold, or null when no threshold separates significantly. */
  best: { event: string | null; k: number; youden: number; difference: number; coverage: number }[];
  criterion: string;
  caution: string;
  reading: string;
}

export const EARLY_CRITERION = 'The best threshold of an event is the one with the largest Youden index J (share of retained newcomers at or above it minus share of the others at or above it; Youden 1950), among the thresholds whose difference in retention is positive and significant after Benjamini–Hochberg.';
export const EARLY_CAUTION = 'These are correlations, not causes: newcomers who are keen from the start both do more early and stay longer. Test a change (a prompt, an onboarding step) with an experiment before acting on it.';

function rate(retained: number, n: number): Rate {
  const w = wilsonInterval(retained, n);
  return { n, retained, rate: w.estimate, lower: w.lower, upper: w.upper };
}

/**
 * Early signals of every event name at every threshold.
 * @throws TidemarkError INPUT_INVALID for options out of range; NOT_ENOUGH_DATA when no newcomer is
 *   observed for early + horizon periods (the message says how many were left out).
 * @example 4 newcomers, 2 with a class in week 1 (both retained), 2 without (1 retained), early 1,
 *   horizon 1: class_enrolled at k = 1 gives rates 1 and 0.5, lift 2, coverage 0.5.
 */
export function earlySignals(log: EventLog, t: Timelines, range: ObservedRange, o: EarlyOptions): EarlyOutput {
  const q = o.q ?? 0.05;
  if (!(Number.isInteger(o.early) && o.early >= 1 && Number.isInteger(o.horizon) && o.horizon >= 1)) {
    throw new TidemarkError('INPUT_INVALID', `early and horizon must be whole numbers ≥ 1, got ${o.early} and ${o.horizon}`, { key: 'early' });
  }
  const ks = [...new Set(o.thresholds)].sort((a, b) => a - b);
  if (ks.length === 0 || ks.some((k) => !(Number.isInteger(k) && k >= 1))) throw new TidemarkError('INPUT_INVALID', 'thresholds must be whole numbers ≥ 1', { key: 'thresholds' });
  const cap = ks[ks.length - 1];
  const names = log.detail?.names ?? [''];
  const E = names.length; // slot 0 (no name) is reused for "any event"
  // hist[e][r][c]: newcomers with min(c, cap) events of name e in the early window; r = 1 retained
  const hist = Array.from({ length: E }, () => [new Int32Array(cap + 1), new Int32Array(cap + 1)]);
  const seenName = new Uint8Array(E);
  const tally = new Int32Array(E);
  const touched: number[] = [];
  let newcomers = 0, retained = 0, leftOut = 0, before = 0;
  const span = o.early + o.horizon;
  for (let u = 0; u < t.users; u++) {
    const f = firstActive(t, u);
    if (f === undefined) continue;
    if (f < range.fromKey) {
      before++;
      continue;
    }
    if (f + span - 1 > range.lastKey) {
      leftOut++;
      continue;
    }
    newcomers++;
    const r = activeIn(t, u, f + span - 1) ? 1 : 0;
    retained += r;
    let any = 0;
    for (let k = t.rowStart[u]; k < t.rowStart[u + 1]; k++) {
      const i = t.order[k];
      const p = log.period[i];
      if (p < f) continue;
      if (p >= f + o.early) break;
      any++;
      const e = log.detail ? log.detail.event[i] : 0;
      if (e === 0) continue;
      if (tally[e]++ === 0) touched.push(e);
    }
    hist[0][r][Math.min(any, cap)]++;
    for (const e of touched) {
      hist[e][r][Math.min(tally[e], cap)]++;
      seenName[e] = 1;
      tally[e] = 0;
    }
    touched.length = 0;
  }
  if (newcomers === 0) {
    throw new TidemarkError('NOT_ENOUGH_DATA', `no newcomer is observed for ${plural(span, 'period')} (${o.early} early + ${o.horizon} to the horizon): ${leftOut.toLocaleString('en-US')} left out as the data end too soon`, { key: 'horizon' }, 'Lower --early or --horizon, or use a longer log');
  }
  const rows: Omit<ThresholdRow, 'pAdjusted' | 'significant'>[] = [];
  const notRetained = newcomers - retained;
  for (let e = 0; e < E; e++) {
    if (e > 0 && !seenName[e]) continue;
    // counts at ≥ k from the top of the histogram; newcomers with none of the name sit in bin 0
    const atLeast = [0, 0];
    const byK = new Map<number, [number, number]>();
    for (let c = cap; c >= 1; c--) {
      atLeast[0] += hist[e][0][c];
      atLeast[1] += hist[e][1][c];
      byK.set(c, [atLeast[0], atLeast[1]]);
    }
    for (const k of ks) {
      const [nNot, nRet] = byK.get(k)!;
      const nA = nNot + nRet, nB = newcomers - nA;
      if (nA === 0 || nB === 0) continue; // one group empty: nothing to compare
      const rB = retained - nRet;
      const a = rate(nRet, nA), b = rate(rB, nB);
      const d = newcombeDifference(nRet, nA, rB, nB);
      rows.push({
        event: e === 0 ? null : names[e], k, atLeast: a, below: b, coverage: nA / newcomers,
        lift: b.rate === 0 ? null : a.rate / b.rate,
        difference: { value: d.difference, lower: d.lower, upper: d.upper },
        p: twoProportionZTest(nRet, nA, rB, nB).p,
        youden: retained === 0 || notRetained === 0 ? null : nRet / retained - nNot / notRetained,
        small: nA < (o.minCell ?? 0) || nB < (o.minCell ?? 0),
      });
    }
  }
  const adjusted = bhAdjust(rows.map((r) => r.p));
  const full: ThresholdRow[] = rows.map((r, i) => ({ ...r, pAdjusted: adjusted[i], significant: adjusted[i] <= q }));
  const best: EarlyOutput['best'] = [];
  for (const ev of [...new Set(full.map((r) => r.event))]) {
    const cands = full.filter((r) => r.event === ev && r.significant && r.difference.value > 0 && r.youden !== null);
    if (!cands.length) continue;
    const top = cands.reduce((x, y) => (y.youden! > x.youden! ? y : x));
    best.push({ event: ev, k: top.k, youden: top.youden!, difference: top.difference.value, coverage: top.coverage });
  }
  best.sort((x, y) => y.youden - x.youden);
  const f = (n: number) => n.toLocaleString('en-US');
  const pctx = (x: number) => `${(x * 100).toFixed(1)}%`;
  const lead = best.find((b) => b.event !== null);
  const reading = lead
    ? `Newcomers with at least ${plural(lead.k, `${lead.event} event`)} in their first ${o.early === 1 ? 'period' : plural(o.early, 'period')} were retained ${pctx(lead.difference)} points more often (${pctx(lead.coverage)} of newcomers reach it; Youden's J ${lead.youden.toFixed(2)}), of ${plural(newcomers, 'newcomer')}; a correlation, not a cause.`
    : `No event name separates retained newcomers from the others significantly (${plural(newcomers, 'newcomer')}, Benjamini–Hochberg at ${q}).`;
  return { options: { early: o.early, horizon: o.horizon, thresholds: ks, q }, newcomers, retained, leftOut, before, rows: full, best, criterion: EARLY_CRITERION, caution: EARLY_CAUTION, reading };
}
