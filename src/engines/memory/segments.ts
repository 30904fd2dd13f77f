/**
 * Retention cells split by an attribute's value in the period retained from, and the flows of each
 * segment of users: counts of combined integer keys in one pass over the classified rows (these were
 * arquero group-bys; a `Map` keeps the keys in order of first appearance, as the group-bys did, and
 * leaves arquero's ~0.3 s of module loading off every run).
 */
import type { ActiveAttribute } from './attributes.js';
import { activeIndex } from './attributes.js';
import type { ActivePeriods } from '../../lifecycle/activity.js';
import type { Classified } from '../../lifecycle/classify.js';
import type { RetentionCell, SegmentFlows, TransitionCounts } from '../../flows/types.js';

export function segmentCells(c: Classified, active: ActivePeriods, attr: ActiveAttribute, o: { states: readonly string[]; activeCount: number; labels: string[]; firstFlow: number }): RetentionCell[] {
  const V = attr.values.length;
  const S = o.states.length;
  const seg = new Int32Array(c.size).fill(-1);
  for (let r = 0; r < c.size; r++) {
    if (c.prev[r] < 0 || c.prev[r] >= o.activeCount || c.period[r] - 1 < o.firstFlow) continue;
    const i = activeIndex(active, c.user[r], c.period[r] - 1);
    if (i >= 0) seg[r] = attr.codes[i];
  }
  const counted = new Map<number, number>();
  for (let r = 0; r < c.size; r++) {
    if (seg[r] < 0) continue;
    const k = ((c.period[r] * S + c.prev[r]) * V + seg[r]) * 2 + (c.state[r] < o.activeCount ? 1 : 0);
    counted.set(k, (counted.get(k) ?? 0) + 1);
  }
  const cells = new Map<number, RetentionCell>();
  for (const [k, n] of counted) {
    const kept = k % 2;
    const cell = Math.floor(k / 2);
    const v = cell % V;
    const prev = Math.floor(cell / V) % S;
    const p = Math.floor(cell / V / S);
    let row = cells.get(cell);
    if (!row) cells.set(cell, (row = { to: o.labels[p], state: o.states[prev], segment: attr.values[v] || '(none)', n: 0, retained: 0 }));
    row.n += n;
    if (kept) row.retained += n;
  }
  return [...cells.values()].sort((a, b) => (a.to < b.to ? -1 : a.to > b.to ? 1 : a.state < b.state ? -1 : a.state > b.state ? 1 : a.segment < b.segment ? -1 : 1));
}

/**
 * The flows of each segment (WaistTables.segmentTransitions): users split by `segmentOf[user]`, an
 * index into `values` fixed per user (the attribute's value in the first active period), so that the
 * segments partition the users. One count of combined integer keys for the state counts and one for
 * the transitions, in one pass over the rows. Segments with no user in the
 * output periods are left out; '' becomes '(none)'.
 */
export function segmentFlows(c: Classified, segmentOf: Int32Array, values: readonly string[], o: { states: readonly string[]; labels: string[]; outStart: number; firstFlow: number; freshCode: number }): SegmentFlows[] {
  const S = o.states.length;
  const span = o.labels.length;
  const P = span - o.outStart;
  const byState = new Map<number, number>();
  const byPair = new Map<number, number>();
  for (let r = 0; r < c.size; r++) {
    const g = segmentOf[c.user[r]], p = c.period[r], prev = c.prev[r], s = c.state[r];
    const ks = (g * span + p) * S + s;
    byState.set(ks, (byState.get(ks) ?? 0) + 1);
    if (prev >= 0 && p - 1 >= o.firstFlow) {
      const kp = ((g * span + p) * S + prev) * S + s;
      byPair.set(kp, (byPair.get(kp) ?? 0) + 1);
    }
  }
  const present = new Set<number>();
  for (const k of byState.keys()) present.add(Math.floor(k / (span * S)));
  const firstTo = Math.max(o.firstFlow + 1, o.outStart + 1);
  const name = (g: number) => values[g] || '(none)';
  // ordered by name (code-unit order): the canonical order of a waist, the same in every engine
  return [...present].sort((a, b) => (name(a) < name(b) ? -1 : name(a) > name(b) ? 1 : 0)).map((g) => {
    const stateCounts = Array.from({ length: P }, (_, q) => Array.from({ length: S }, (_, s) => byState.get((g * span + q + o.outStart) * S + s) ?? 0));
    const transitions: TransitionCounts[] = [];
    for (let p = firstTo; p < span; p++) {
      const counts = Array.from({ length: S }, (_, i) => Array.from({ length: S }, (_, j) => byPair.get(((g * span + p) * S + i) * S + j) ?? 0));
      transitions.push({ from: o.labels[p - 1], to: o.labels[p], counts, fresh: stateCounts[p - o.outStart][o.freshCode] ?? 0 });
    }
    return { segment: name(g), stateCounts, transitions };
  });
}
