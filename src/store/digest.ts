/**
 * What changed since the last update, in at most eight lines: the latest period's active users,
 * arrivals, returns and those who went quiet; the moves between states that grew or shrank most
 * against the average of the previous four periods; and any change of retention by prior state,
 * from the period before to the latest, that is significant after Benjamini–Hochberg control.
 *
 * Pure: a function of the waist in full form (the latest stored period, even when incomplete, which
 * the digest then says). Aggregates only, never an id.
 */
import { retentionChanges } from '../explain/retention.js';
import { growthAccount } from '../flows/growth.js';
import { GRAIN_NOUN } from '../periods/calendar.js';
import type { ReportSection } from '../report/sections/types.js';
import type { Waist } from '../waist/types.js';

/** Periods whose moves are averaged to compare the latest with. */
export const DIGEST_AVERAGE_OVER = 4;
/** The false discovery rate of the retention changes reported. */
export const DIGEST_Q = 0.05;
/** Lines at most in the terminal. */
export const DIGEST_LINES = 8;

export interface DigestMove {
  from: string;
  to: string;
  /** Users making the move into the latest period. */
  users: number;
  /** Its mean over the previous `averageOver` periods. */
  average: number;
  /** users − average. */
  change: number;
  /** change / average; null when the average is 0. */
  relative: number | null;
}

export interface DigestRetentionChange {
  state: string;
  label: string;
  base: { n: number; retained: number; rate: number };
  compare: { n: number; retained: number; rate: number };
  change: number;
  /** Newcombe hybrid-score 95% interval of the change. */
  lower: number;
  upper: number;
  p: number;
  /** Benjamini–Hochberg adjusted p across the states tested. */
  pAdjusted: number;
}

export interface Digest {
  grain: string;
  /** The latest period, and the one before it (null when it is the first). */
  period: string;
  previous: string | null;
  /** False when the data stop early in the latest period (its counts may still grow). */
  complete: boolean;
  coverage: number;
  active: number;
  arrivals: number;
  returns: number;
  /** Active in the previous period and not in the latest. */
  wentQuiet: number;
  /** Periods the moves are compared with (up to DIGEST_AVERAGE_OVER; 0 when there are none). */
  averageOver: number;
  grew: DigestMove | null;
  shrank: DigestMove | null;
  retention: { tested: number; q: number; significant: DigestRetentionChange[] };
}

/**
 * The digest of the latest period of a waist in full form. Counts: the growth accounting of the latest
 * transition (flows/growth.ts, common practice). Moves: each cell of the latest transition matrix
 * against its mean over the previous {@link DIGEST_AVERAGE_OVER} transitions, the largest rise and fall
 * in users (staying in the exit state left out). Retention: each prior state's retention into the
 * latest period against the period before by the pooled two-proportion z-test, with Benjamini and
 * Hochberg's (1995) step-up adjustment across the states tested (explain/retention.ts); a state is
 * listed when its adjusted p ≤ {@link DIGEST_Q}. Throws nothing for a waist the reader accepts; with
 * one period only, the moves and retention are empty.
 * @example // the worked example of test/store/digest.test.ts: the last transition moves 25 users from
 * // engaged to lapsing against 10, 12, 8, 10 before; newcomers' retention goes from 48/80 to 56/70
 * digestOf(waist) // { active: 86, arrivals: 12, returns: 7, wentQuiet: 25,
 *                 //   grew: { from: 'engaged', to: 'lapsing', users: 25, average: 10, change: 15, relative: 1.5 },
 *                 //   retention: { tested: 3, significant: [{ state: 'fresh', p: 0.00805, pAdjusted: 0.0241, … }] }, … }
 */
export function digestOf(w: Waist): Digest {
  const t = w.tables;
  const m = w.manifest;
  const last = t.periods.length - 1;
  const period = t.periods[last];
  const isActive = t.states.map((s) => t.activeStates.includes(s));
  const roleOf = new Map(m.states.map((s) => [s.name, s.role]));
  const sum = (pred: (s: string) => boolean) => t.states.reduce((a, s, i) => a + (pred(s) ? t.stateCounts[last][i] : 0), 0);
  const active = sum((s) => t.activeStates.includes(s));
  const arrivals = sum((s) => roleOf.get(s) === 'arrival');
  const k = t.transitions.findIndex((tr) => tr.to === period);
  const tr = k >= 0 ? t.transitions[k] : undefined;
  const growth = tr ? growthAccount(tr, isActive) : undefined;
  const digest: Digest = {
    grain: GRAIN_NOUN[m.rules.grain],
    period,
    previous: last > 0 ? t.periods[last - 1] : null,
    complete: m.lastPeriod.complete,
    coverage: m.lastPeriod.coverage,
    active,
    arrivals,
    returns: growth ? growth.returned : sum((s) => roleOf.get(s) === 'return'),
    wentQuiet: growth ? growth.newlyInactive : 0,
    averageOver: 0,
    grew: null,
    shrank: null,
    retention: { tested: 0, q: DIGEST_Q, significant: [] },
  };
  if (!tr) return digest;
  const before = t.transitions.slice(Math.max(0, k - DIGEST_AVERAGE_OVER), k);
  digest.averageOver = before.length;
  if (before.length > 0) {
    const S = t.states.length;
    for (let i = 0; i < S; i++) {
      for (let j = 0; j < S; j++) {
        if (t.states[i] === t.exitState && t.states[j] === t.exitState) continue; // staying gone only piles up
        const average = before.reduce((a, b) => a + b.counts[i][j], 0) / before.length;
        const users = tr.counts[i][j];
        const change = users - average;
        const move: DigestMove = { from: t.states[i], to: t.states[j], users, average, change, relative: average === 0 ? null : change / average };
        if (change > 0 && (!digest.grew || change > digest.grew.change)) digest.grew = move;
        if (change < 0 && (!digest.shrank || change < digest.shrank.change)) digest.shrank = move;
      }
    }
  }
  if (k > 0) {
    const base = t.transitions[k - 1].to;
    const cells = t.tenureCells.filter((c) => c.to === base || c.to === period).map((c) => ({ ...c, segment: '' }));
    const changes = retentionChanges(cells, { base, compare: period, minN: m.rules.minCell, q: DIGEST_Q });
    const labels = new Map(m.states.map((s) => [s.name, s.label]));
    digest.retention.tested = changes.filter((c) => c.p !== null).length;
    digest.retention.significant = changes
      .filter((c) => c.significant)
      .map((c) => ({
        state: c.state,
        label: labels.get(c.state) ?? c.state,
        base: { n: c.base.n, retained: c.base.retained, rate: c.base.rate as number },
        compare: { n: c.compare.n, retained: c.compare.retained, rate: c.compare.rate as number },
        change: c.change as number,
        lower: c.lower as number,
        upper: c.upper as number,
        p: c.p as number,
        pAdjusted: c.pAdjusted as number,
      }))
      .sort((a, b) => a.pAdjusted - b.pAdjusted || (a.state < b.state ? -1 : 1));
  }
  return digest;
}

const n0 = (x: number) => Math.round(x).toLocaleString('en-US');
const pct = (x: number) => `${(x * 100).toFixed(1)}%`;
const signed = (x: number) => `${x >= 0 ? '+' : '−'}${Math.abs(x * 100).toFixed(0)}%`;
const pValue = (p: number) => (p < 0.001 ? '< 0.001' : `= ${p.toFixed(3)}`);

/** The digest as at most {@link DIGEST_LINES} short lines of text (state names as the rules name them). */
export function digestLines(d: Digest): string[] {
  const g = d.grain;
  const incomplete = d.complete ? '' : ` (incomplete: the data stop ${(d.coverage * 100).toFixed(0)}% into it)`;
  const lines = [`${cap(g)} of ${d.period}${incomplete}: ${n0(d.active)} active users (${n0(d.arrivals)} new, ${n0(d.returns)} returned); ${n0(d.wentQuiet)} went quiet.`];
  if (d.previous === null) {
    lines.push(`The first ${g} stored: nothing earlier to compare with.`);
    return lines;
  }
  const over = d.averageOver === 1 ? `the ${g} before` : `the previous ${d.averageOver} ${g}s`;
  const move = (m: DigestMove) => `${m.from} → ${m.to}, ${n0(m.users)} users (average ${n0(m.average)}${m.relative === null ? '' : `, ${signed(m.relative)}`})`;
  if (d.averageOver === 0) lines.push(`No earlier ${g} to compare this ${g}'s moves with.`);
  else {
    lines.push(d.grew ? `Grew most against ${over}: ${move(d.grew)}.` : `No move grew against ${over}.`);
    lines.push(d.shrank ? `Shrank most: ${move(d.shrank)}.` : 'No move shrank.');
  }
  const sig = d.retention.significant;
  if (sig.length === 0) {
    lines.push(`No significant retention change since the ${g} before (Benjamini–Hochberg, ${d.retention.tested} tested).`);
    return lines;
  }
  const room = DIGEST_LINES - lines.length;
  const shown = sig.length <= room ? sig : sig.slice(0, room - 1);
  for (const c of shown) {
    lines.push(`Retention of ${c.label} ${c.change >= 0 ? 'rose' : 'fell'} ${Math.abs(c.change * 100).toFixed(1)} points, ${pct(c.base.rate)} → ${pct(c.compare.rate)} (adjusted p ${pValue(c.pAdjusted)}).`);
  }
  if (shown.length < sig.length) lines.push(`… and ${sig.length - shown.length} more significant retention change${sig.length - shown.length > 1 ? 's' : ''} (--format json lists them).`);
  return lines;
}

function cap(s: string): string {
  return s.charAt(0).toUpperCase() + s.slice(1);
}

/** The digest as the report's first section (report/build.ts `ReportOptions.digest`). */
export function digestSection(d: Digest): ReportSection {
  return {
    id: 'digest',
    title: `Since the last update: the ${d.grain} of ${d.period}`,
    placement: 'first',
    paragraphs: digestLines(d),
    warnings: [],
    tables: [],
    documents: [{ name: 'digest', value: d }],
  };
}
