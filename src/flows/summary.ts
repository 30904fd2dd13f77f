/**
 * The flows report: per transition, the counts, rates, status-split retention and growth account;
 * and a matrix pooled over a chosen run of transitions.
 */
import { growthAccount, type GrowthAccount } from './growth.js';
import { rowRates, rowSums, sumMatrices } from './rates.js';
import { statusRetention, type StateRetention } from './retention.js';
import { parseSelection, selectTransitions } from './select.js';
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

/** Summaries of every transition, and the pooled matrix over `poolRange` (`all`, `N` or `FROM..TO`; default all). */
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
  const chosen = w.transitions.length === 0 ? [] : selectTransitions(w, parseSelection(poolRange ?? 'all'));
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
