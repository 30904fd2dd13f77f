/**
 * Risk table of aggregated durations: for every distinct duration t, the users at risk (duration ≥ t),
 * the events (observed endings at t) and the censorings at t.
 *
 * Layer policy for `src/survival`: invalid rows throw `INPUT_INVALID` (naming the row); data that
 * are valid but cannot support the analysis (no users; fewer than two groups; no events for a test)
 * throw `NOT_ENOUGH_DATA`. Ties follow the usual convention: at a time t, users censored at t are
 * still at risk for the events at t.
 */
import { TidemarkError } from '../errors.js';
import type { DurationRow } from '../flows/types.js';

export interface RiskRow {
  t: number;
  /** Users with duration ≥ t. */
  atRisk: number;
  /** Users whose ending was observed at t. */
  events: number;
  /** Users censored at t. */
  censored: number;
}

/**
 * Checks every row: duration a finite number ≥ 0, observed 0 or 1, users a finite number ≥ 0.
 *
 * @throws {TidemarkError} INPUT_INVALID naming the first bad row (key `rows[i].field`).
 */
export function checkDurationRows(rows: readonly DurationRow[]): void {
  rows.forEach((r, i) => {
    if (!(Number.isFinite(r.duration) && r.duration >= 0)) {
      throw new TidemarkError('INPUT_INVALID', `duration must be a finite number ≥ 0, got ${r.duration}`, { key: `rows[${i}].duration` });
    }
    if (r.observed !== 0 && r.observed !== 1) {
      throw new TidemarkError('INPUT_INVALID', `observed must be 0 or 1, got ${String(r.observed)}`, { key: `rows[${i}].observed` });
    }
    if (!(Number.isFinite(r.users) && r.users >= 0)) {
      throw new TidemarkError('INPUT_INVALID', `users must be a finite number ≥ 0, got ${r.users}`, { key: `rows[${i}].users` });
    }
  });
}

/**
 * The risk table of `rows` (all groups pooled), ascending in t; rows with users = 0 are ignored.
 * Checks the rows first (see {@link checkDurationRows}).
 *
 * @throws {TidemarkError} INPUT_INVALID for a bad row.
 * @example riskTable([{ group: '', duration: 2, observed: 1, users: 3 }, { group: '', duration: 5, observed: 0, users: 1 }])
 *   // [{ t: 2, atRisk: 4, events: 3, censored: 0 }, { t: 5, atRisk: 1, events: 0, censored: 1 }]
 */
export function riskTable(rows: readonly DurationRow[]): RiskRow[] {
  checkDurationRows(rows);
  const byTime = new Map<number, { events: number; censored: number }>();
  let total = 0;
  for (const r of rows) {
    if (r.users === 0) continue;
    total += r.users;
    const cell = byTime.get(r.duration) ?? { events: 0, censored: 0 };
    if (r.observed === 1) cell.events += r.users;
    else cell.censored += r.users;
    byTime.set(r.duration, cell);
  }
  const out: RiskRow[] = [];
  let atRisk = total;
  for (const t of [...byTime.keys()].sort((a, b) => a - b)) {
    const { events, censored } = byTime.get(t)!;
    out.push({ t, atRisk, events, censored });
    atRisk -= events + censored;
  }
  return out;
}
