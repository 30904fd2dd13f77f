/**
 * Retention cells split by an attribute's value in the period retained from (an arquero group-by,
 * like the other waist tables).
 */
import * as aq from 'arquero';
import type { ActiveAttribute } from './attributes.js';
import { activeIndex } from './attributes.js';
import type { ActivePeriods } from '../../lifecycle/activity.js';
import type { Classified } from '../../lifecycle/classify.js';
import type { RetentionCell } from '../../flows/types.js';

export function segmentCells(c: Classified, active: ActivePeriods, attr: ActiveAttribute, o: { states: readonly string[]; activeCount: number; labels: string[]; firstFlow: number }): RetentionCell[] {
  const V = attr.values.length;
  const S = o.states.length;
  const seg = new Int32Array(c.size).fill(-1);
  for (let r = 0; r < c.size; r++) {
    if (c.prev[r] < 0 || c.prev[r] >= o.activeCount || c.period[r] - 1 < o.firstFlow) continue;
    const i = activeIndex(active, c.user[r], c.period[r] - 1);
    if (i >= 0) seg[r] = attr.codes[i];
  }
  const g = aq
    .table({ p: c.period, prev: c.prev, s: c.state, seg })
    .params({ S, V, A: o.activeCount })
    .filter((d: any) => d.seg >= 0)
    .derive({ k: (d: any, $: any) => ((d.p * $.S + d.prev) * $.V + d.seg) * 2 + (d.s < $.A ? 1 : 0) })
    .groupby('k')
    .count({ as: 'n' });
  const keys = g.array('k') as ArrayLike<number>;
  const ns = g.array('n') as ArrayLike<number>;
  const cells = new Map<number, RetentionCell>();
  for (let i = 0; i < keys.length; i++) {
    const k = keys[i];
    const kept = k % 2;
    const cell = Math.floor(k / 2);
    const v = cell % V;
    const prev = Math.floor(cell / V) % S;
    const p = Math.floor(cell / V / S);
    let row = cells.get(cell);
    if (!row) cells.set(cell, (row = { to: o.labels[p], state: o.states[prev], segment: attr.values[v] || '(none)', n: 0, retained: 0 }));
    row.n += ns[i];
    if (kept) row.retained += ns[i];
  }
  return [...cells.values()].sort((a, b) => (a.to < b.to ? -1 : a.to > b.to ? 1 : a.state < b.state ? -1 : a.state > b.state ? 1 : a.segment < b.segment ? -1 : 1));
}
