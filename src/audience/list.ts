/**
 * Audience lists: the users who entered a state at a period (see entry.ts), with their previous state,
 * tenure, last active period and attributes. This is the one output of tidemark that lists people;
 * it is built from a run of the in-memory engine on an event log (the per-user classification, the
 * active periods and the log's attribute columns), never from the waist, which holds counts only.
 *
 * Columns, per user:
 * - `state`: the state at P (a sub-state when a split state's name was asked for);
 * - `previousState`: the state in the period before, or null for a new user (P is their first active
 *   period; history before --from counts, so a member active before --from is not new);
 * - `tenure`: periods since the first active period (0 in it);
 * - `lastActive`: the last period up to P in which the user was active (P itself for an active state);
 * - attributes: every attribute column, the user's value in P: the value on their latest key event in
 *   their last active period up to P (the latest by time, the later row on ties; the rule `--by` uses),
 *   so a quiet user keeps the value of their last active period; null when that event has no value.
 */
import { TidemarkError, showValue } from '../errors.js';
import type { EventLog } from '../ingest/eventLog.js';
import type { ActivePeriods } from '../lifecycle/activity.js';
import type { LogRun } from '../engines/memory/index.js';
import { periodKeyOfDate, periodLabel } from '../periods/calendar.js';
import { periodHint } from '../periods/suggest.js';
import type { EntrySpec } from './entry.js';
import { pseudonym } from './pseudonym.js';
import { whereColumns, type WhereClause } from './where.js';

export interface AudienceRow {
  /** The user id, or its pseudonym when a key was given. */
  user: string;
  state: string;
  previousState: string | null;
  tenure: number;
  lastActive: string;
  /** Values in the order of {@link AudienceList.attributes}; null for no value. */
  attributes: (string | null)[];
}

export interface AudienceList {
  /** The label of P. */
  period: string;
  entry: EntrySpec;
  where: WhereClause[];
  /** The attribute columns of the events. */
  attributes: string[];
  /** Whether `user` holds pseudonyms. */
  pseudonymised: boolean;
  /** Sorted by `user` (code-unit order). */
  rows: AudienceRow[];
  /** `--where` values no event holds in their column (a misspelling, most likely). */
  unseen: { column: string; value: string }[];
}

export interface AudienceQuery {
  /** A date (YYYY-MM-DD) inside P. */
  period: string;
  entry: EntrySpec;
  where?: WhereClause[];
  /** HMAC-SHA-256 key: write pseudonyms instead of ids (pseudonym.ts). */
  key?: Uint8Array;
  /** The last period that may be asked for, as an offset in the run's range (default the last one). */
  lastOffset?: number;
  /** The incomplete last period left out, for the message when P is that one. */
  leftOut?: string;
}

/** The offset of the last active period of `user` at or before `offset`, or -1 (active is sorted by user, then offset). */
export function lastActiveOffset(active: ActivePeriods, user: number, offset: number): number {
  // first index whose (user, offset) is beyond (user, offset), then one step back
  let lo = 0, hi = active.user.length;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    const u = active.user[mid];
    if (u < user || (u === user && active.offset[mid] <= offset)) lo = mid + 1;
    else hi = mid;
  }
  return lo > 0 && active.user[lo - 1] === user ? active.offset[lo - 1] : -1;
}

/**
 * The offset of P in the run's range, checked: inside the output periods, past the warm-up, and not an
 * incomplete last period that was left out.
 * @throws TidemarkError RANGE_INVALID (key `period`) with the periods of the data, or what to do.
 */
export function periodOffset(run: Pick<LogRun, 'range' | 'labels'>, log: Pick<EventLog, 'scheme'>, date: string, warmup: number, lastOffset?: number, leftOut?: string): number {
  const key = periodKeyOfDate(date.trim(), log.scheme);
  if (key === undefined) throw new TidemarkError('RANGE_INVALID', `'${showValue(date)}' is not a date`, { key: 'period' }, 'Write a date as YYYY-MM-DD, e.g. 2026-05-04');
  const { startKey, span, outStart } = run.range;
  const off = key - startKey;
  const last = lastOffset ?? span - 1;
  const label = periodLabel(key, log.scheme);
  const labels = run.labels.slice(outStart, last + 1);
  if (leftOut !== undefined && label === leftOut) {
    throw new TidemarkError('RANGE_INVALID', `${label} is the incomplete last period, left out`, { key: 'period' }, 'Pass --include-partial to keep it, or ask for an earlier period');
  }
  if (off < outStart || off > last) {
    throw new TidemarkError('RANGE_INVALID', `the period of ${showValue(date)} (${label}) is not a period of the data`, { key: 'period' }, periodHint(label, labels) ?? `Periods run from ${labels[0]} to ${labels[labels.length - 1]}`);
  }
  if (off < outStart + warmup) {
    throw new TidemarkError('RANGE_INVALID', `${label} is inside the warm-up (the first ${warmup} period${warmup === 1 ? '' : 's'}), where a long-standing member can look new`, { key: 'period' }, `Ask for ${run.labels[outStart + warmup]} or later, or lower the warm-up`);
  }
  return off;
}

/**
 * The audience list of a run of the in-memory engine on `log`: who entered `q.entry` at `q.period`.
 * One pass over the run's classified rows finds the users; one pass over the events finds their
 * attribute values.
 * @throws TidemarkError RANGE_INVALID (key `period`) as {@link periodOffset}; INPUT_INVALID (key
 *   `where`) for a `--where` column the events lack.
 * @example audienceOf(log, run, { period: '2026-09-07', entry: entrySpec(rules, 'dormant') }).rows.length // users who went dormant that week
 */
export function audienceOf(log: EventLog, run: Pick<LogRun, 'range' | 'labels' | 'classified' | 'waist'> & { active: ActivePeriods }, q: AudienceQuery): AudienceList {
  const attributes = log.attributes.map((a) => a.name);
  const where = q.where ?? [];
  const whereAt = whereColumns(where, attributes);
  const warmup = run.waist.manifest.rules.warmup;
  const p = periodOffset(run, log, q.period, warmup, q.lastOffset, q.leftOut);
  const states = run.waist.tables.states;
  const into = new Uint8Array(states.length);
  for (const s of q.entry.into) into[states.indexOf(s)] = 1;
  const from = q.entry.from ? new Uint8Array(states.length) : undefined;
  for (const s of q.entry.from?.states ?? []) (from as Uint8Array)[states.indexOf(s)] = 1;

  // the users who entered: state at P in `into`, state before not in it (none for a new user)
  const c = run.classified;
  const picked: number[] = [];
  for (let r = 0; r < c.size; r++) {
    if (c.period[r] !== p || !into[c.state[r]]) continue;
    const prev = c.prev[r];
    if (prev >= 0 && into[prev]) continue;
    if (from && (prev < 0 || !from[prev])) continue;
    picked.push(r);
  }

  // their last active period, and the latest key event in it, for the attributes
  const target = new Int32Array(log.users.length).fill(-1);
  for (const r of picked) target[c.user[r]] = lastActiveOffset(run.active, c.user[r], p);
  const best = new Int32Array(log.users.length).fill(-1);
  const { startKey } = run.range;
  for (let e = 0; e < log.size; e++) {
    const u = log.user[e];
    if (target[u] < 0 || log.period[e] - startKey !== target[u]) continue;
    if (best[u] < 0 || log.wallMs[e] >= log.wallMs[best[u]]) best[u] = e;
  }

  const scheme = log.scheme;
  const rows: AudienceRow[] = [];
  for (const r of picked) {
    const u = c.user[r];
    const values = log.attributes.map((a) => (best[u] < 0 || a.codes[best[u]] === 0 ? null : a.values[a.codes[best[u]]]));
    if (!where.every((w, k) => w.values.includes(values[whereAt[k]] ?? ''))) continue;
    rows.push({
      user: q.key ? pseudonym(q.key, log.users[u]) : log.users[u],
      state: states[c.state[r]],
      previousState: c.prev[r] < 0 ? null : states[c.prev[r]],
      tenure: c.tenure[r],
      lastActive: periodLabel(startKey + target[u], scheme),
      attributes: values,
    });
  }
  rows.sort((a, b) => (a.user < b.user ? -1 : a.user > b.user ? 1 : 0));
  const unseen = where.flatMap((w, k) => {
    const known = new Set(log.attributes[whereAt[k]].values);
    return w.values.filter((v) => v !== '' && !known.has(v)).map((value) => ({ column: w.column, value }));
  });
  return { period: periodLabel(startKey + p, scheme), entry: q.entry, where, attributes, pseudonymised: Boolean(q.key), rows, unseen };
}
