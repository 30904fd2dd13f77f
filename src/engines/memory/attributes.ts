/**
 * An attribute's value per active (user, period): the value on the user's latest event in that
 * period (by wall-clock time; on ties, the later row). Used to split retention by plan, region,
 * channel and the like, taking the user's value in the period retained from.
 */
import { TidemarkError, showValue, suggestion } from '../../errors.js';
import type { EventLog } from '../../ingest/eventLog.js';
import type { ActivePeriods } from '../../lifecycle/activity.js';

export interface ActiveAttribute {
  name: string;
  /** Per active period (same order as ActivePeriods): index into `values`; 0 is "no value". */
  codes: Int32Array;
  values: string[];
}

/** @throws TidemarkError INPUT_INVALID when the log has no such attribute column (with "did you mean"). */
export function activeAttribute(log: EventLog, name: string, active: ActivePeriods): ActiveAttribute {
  const col = log.attributes.find((a) => a.name === name);
  if (!col) {
    const names = log.attributes.map((a) => a.name);
    throw new TidemarkError('INPUT_INVALID', `the events have no column '${showValue(name, 40)}' to split by`, { key: 'by' },
      suggestion(name, names) ?? (names.length ? `Columns you can split by: ${names.map((n) => showValue(n, 40)).join(', ')}` : 'The events have no extra columns'));
  }
  const { span, startKey } = active;
  const m = active.user.length;
  const keys = new Float64Array(m);
  for (let i = 0; i < m; i++) keys[i] = active.user[i] * span + active.offset[i];
  const codes = new Int32Array(m);
  const when = new Float64Array(m).fill(-Infinity);
  for (let e = 0; e < log.size; e++) {
    const off = log.period[e] - startKey;
    if (off < 0 || off >= span) continue;
    const k = log.user[e] * span + off;
    let lo = 0, hi = m - 1, at = -1;
    while (lo <= hi) {
      const mid = (lo + hi) >> 1;
      if (keys[mid] < k) lo = mid + 1;
      else if (keys[mid] > k) hi = mid - 1;
      else {
        at = mid;
        break;
      }
    }
    if (at >= 0 && log.wallMs[e] >= when[at]) {
      when[at] = log.wallMs[e];
      codes[at] = col.codes[e];
    }
  }
  return { name, codes, values: col.values };
}

/** Index of (user, offset) in the active periods, or -1 (binary search on the sorted pairs). */
export function activeIndex(active: ActivePeriods, user: number, offset: number): number {
  let lo = 0, hi = active.user.length - 1;
  while (lo <= hi) {
    const mid = (lo + hi) >> 1;
    const u = active.user[mid], o = active.offset[mid];
    if (u < user || (u === user && o < offset)) lo = mid + 1;
    else if (u > user || o > offset) hi = mid - 1;
    else return mid;
  }
  return -1;
}
