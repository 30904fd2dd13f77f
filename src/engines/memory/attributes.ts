/**
 * An attribute's value per active (user, period): the value on the user's latest event in that
 * period (by wall-clock time, to the millisecond); on a tie, the largest value in Unicode code-point
 * order (a missing value is the smallest). The tie-break reads only the values, never the order of
 * the rows, so an engine that cannot see file order (SQL) takes the same value; code-point order is
 * the order of UTF-8 bytes, which every SQL engine can sort by. Used to split retention by plan,
 * region, channel and the like, taking the user's value in the period retained from.
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
    if (at < 0) continue;
    const w = log.wallMs[e];
    if (w > when[at] || (w === when[at] && compareCodePoints(col.values[col.codes[e]], col.values[codes[at]]) > 0)) {
      when[at] = w;
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

/**
 * Compare two strings in Unicode code-point order (the order of their UTF-8 bytes), which differs
 * from JavaScript's code-unit order only between a character above U+FFFF and one in U+E000–U+FFFF.
 * Source: the Unicode Standard §2.5 (UTF-16 code-unit order vs code-point order) and the usual fix-up
 * of the differing units (as in ICU's u_strcmpCodePointOrder).
 * @example compareCodePoints('\u{1F600}', '\uFF61') > 0 // true, though '\u{1F600}' < '\uFF61' in JavaScript
 */
export function compareCodePoints(a: string, b: string): number {
  const n = Math.min(a.length, b.length);
  for (let i = 0; i < n; i++) {
    let x = a.charCodeAt(i), y = b.charCodeAt(i);
    if (x !== y) {
      if (x >= 0xd800 && y >= 0xd800) {
        x = x >= 0xe000 ? x - 0x800 : x + 0x2000;
        y = y >= 0xe000 ? y - 0x800 : y + 0x2000;
      }
      return x - y;
    }
  }
  return a.length - b.length;
}
