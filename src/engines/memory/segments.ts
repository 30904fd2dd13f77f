/**
 * Retention cells split by an attribute's value in the period retained from, and the flows of each
 * segment of users (arquero group-bys). arquero is loaded only for a run split by an attribute
 * (`--by`): loading it takes about 0.3 s, which a plain run should not pay.
 */
import type * as Arquero from 'arquero';
import type { ActiveAttribute } from './attributes.js';
import { activeIndex } from './attributes.js';
import type { ActivePeriods } from '../../lifecycle/activity.js';
import type { Classified } from '../../lifecycle/classify.js';
import type { RetentionCell, SegmentFlows, TransitionCounts } from '../../flows/types.js';

/** The arquero module, for the two functions below. */
export type Aq = typeof Arquero;

/** Load arquero (dynamic import, cached by Node's module loader). */
export function loadArquero(): Promise<Aq> {
  return import('arquero');
}

export function segmentCells(aq: Aq, c: Classified, active: ActivePeriods, attr: ActiveAttribute, o: { states: readonly string[]; activeCount: number; labels: string[]; firstFlow: number }): RetentionCell[] {
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

/**
 * The flows of each segment (WaistTables.segmentTransitions): users split by `segmentOf[user]`, an
 * index into `values` fixed per user (the attribute's value in the first active period), so that the
 * segments partition the users. One arquero group-by for the state counts and one for the
 * transitions, on single combined integer keys as in `aggregate.ts`. Segments with no user in the
 * output periods are left out; '' becomes '(none)'.
 */
export function segmentFlows(aq: Aq, c: Classified, segmentOf: Int32Array, values: readonly string[], o: { states: readonly string[]; labels: string[]; outStart: number; firstFlow: number; freshCode: number }): SegmentFlows[] {
  const S = o.states.length;
  const span = o.labels.length;
  const P = span - o.outStart;
  const seg = new Int32Array(c.size);
  for (let r = 0; r < c.size; r++) seg[r] = segmentOf[c.user[r]];
  const base = aq.table({ p: c.period, prev: c.prev, s: c.state, g: seg }).params({ S, span, outStart: o.outStart, firstFlow: o.firstFlow });
  const count = (t: Arquero.ColumnTable): Map<number, number> => {
    const g = t.groupby('k').count({ as: 'n' });
    const keys = g.array('k') as ArrayLike<number>;
    const ns = g.array('n') as ArrayLike<number>;
    const m = new Map<number, number>();
    for (let i = 0; i < keys.length; i++) m.set(keys[i], ns[i]);
    return m;
  };
  const byState = count(base.derive({ k: (d: any, $: any) => (d.g * $.span + d.p) * $.S + d.s }));
  const byPair = count(base.filter((d: any, $: any) => d.prev >= 0 && d.p - 1 >= $.firstFlow).derive({ k: ((d: any, $: any) => ((d.g * $.span + d.p) * $.S + d.prev) * $.S + d.s) }));
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
