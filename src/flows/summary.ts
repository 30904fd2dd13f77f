/**
 * The flows report: per transition, the counts, rates, status-split retention and growth account;
 * and a matrix pooled over a chosen run of transitions.
 */
import { TidemarkError, suggestion } from '../errors.js';
import { growthAccount, type GrowthAccount } from './growth.js';
import { rowRates, rowSums, sumMatrices } from './rates.js';
import { statusRetention, type StateRetention } from './retention.js';
import type { WaistTables } from './types.js';

export interface TransitionSummary {
  from: string;
  to: string;
  counts: number[][];
  fresh: number;
  rates: (number[] | null)[];
  retention: Record<string, StateRetention>;
  growth: GrowthAccount;
}

export interface PooledSummary {
  from: string;
  to: string;
  transitions: number;
  counts: number[][];
  rates: (number[] | null)[];
  n: number[];
  fresh: number;
  retention: Record<string, StateRetention>;
}

export interface FlowsSummary {
  states: string[];
  activeStates: string[];
  periods: string[];
  warmupPeriods: string[];
  stateCounts: Record<string, number>[];
  transitions: TransitionSummary[];
  pooled: PooledSummary | null;
}

/**
 * Select a run of transitions by the labels of their later periods, `FROM..TO` (either side may be
 * empty), or all when undefined. Throws RANGE_INVALID naming the unknown label.
 */
export function selectTransitions(w: WaistTables, range: string | undefined): WaistTables['transitions'] {
  if (!range) return w.transitions;
  const m = /^([^.]*)\.\.([^.]*)$/.exec(range.trim());
  if (!m) throw new TidemarkError('RANGE_INVALID', `'${range}' is not a range`, { key: 'pool' }, 'Write FROM..TO with period labels, e.g. 2026-06-01..2026-08-31');
  const labels = w.transitions.map((t) => t.to);
  const find = (label: string, dflt: number) => {
    if (label === '') return dflt;
    const i = labels.indexOf(label);
    if (i < 0) {
      const dym = suggestion(label, labels);
      throw new TidemarkError('RANGE_INVALID', `no transition into period '${label}'`, { key: 'pool' }, dym ? `${dym}` : `Periods run from ${labels[0]} to ${labels[labels.length - 1]}`);
    }
    return i;
  };
  const a = find(m[1], 0);
  const b = find(m[2], labels.length - 1);
  if (a > b) throw new TidemarkError('RANGE_INVALID', `range '${range}' runs backwards`, { key: 'pool' }, 'Put the earlier period first');
  return w.transitions.slice(a, b + 1);
}

export function summariseFlows(w: WaistTables, poolRange?: string): FlowsSummary {
  const active = w.states.map((s) => w.activeStates.includes(s));
  const transitions: TransitionSummary[] = w.transitions.map((t) => ({
    from: t.from,
    to: t.to,
    counts: t.counts,
    fresh: t.fresh,
    rates: rowRates(t.counts),
    retention: statusRetention(t, w.states, w.activeStates),
    growth: growthAccount(t, active),
  }));
  const chosen = selectTransitions(w, poolRange);
  let pooled: PooledSummary | null = null;
  if (chosen.length > 0) {
    const counts = sumMatrices(chosen.map((t) => t.counts), w.states.length);
    const fresh = chosen.reduce((a, t) => a + t.fresh, 0);
    pooled = {
      from: chosen[0].from,
      to: chosen[chosen.length - 1].to,
      transitions: chosen.length,
      counts,
      rates: rowRates(counts),
      n: rowSums(counts),
      fresh,
      retention: statusRetention({ from: '', to: '', counts, fresh }, w.states, w.activeStates),
    };
  }
  return {
    states: w.states,
    activeStates: w.activeStates,
    periods: w.periods,
    warmupPeriods: w.periods.slice(0, w.warmup),
    stateCounts: w.stateCounts.map((row) => Object.fromEntries(w.states.map((s, i) => [s, row[i]]))),
    transitions,
    pooled,
  };
}
