/**
 * The headlines of one rule set, from its waist (analysis form), each as the command that gives it in
 * full would say it:
 * - retention by prior state, pooled over every transition past the warm-up (as `flows` pools them):
 *   the share of users in each active state who are active the next period;
 * - the state mix of the latest period (`stateCounts`);
 * - the long-run mix of the chain `project` fits by default (the last 8 transitions, or all when
 *   fewer): the stationary distribution when there is one, otherwise null with the sentence that says why;
 * - the decomposition sentence of `explain` for its default periods (the latest change).
 * A headline the data cannot give (no transition, one period retained into) is null with the reason.
 * Pure: reads the waist only.
 */
import { TidemarkError } from '../errors.js';
import { explainRetention } from '../explain/run.js';
import { summariseFlows } from '../flows/summary.js';
import { computeProjection } from '../markov/run.js';
import { GRAIN_NOUN } from '../periods/calendar.js';
import { stateLabelsOf } from '../waist/manifest.js';
import type { Waist } from '../waist/types.js';

export interface StateShare {
  state: string;
  users: number;
  share: number | null;
}

export interface Headlines {
  /** The analysis periods: first, last, and how many. */
  periods: { first: string; last: string; count: number };
  /** Pooled status-split retention by active state; null rate when the state had no users. */
  retention: { state: string; n: number; retained: number; rate: number | null }[];
  latestMix: { period: string; states: StateShare[] };
  longRun: { kind: string | null; shares: { state: string; share: number }[] | null; sentence: string };
  decomposition: { base: string; compare: string; change: number | null; sentence: string } | { base: null; compare: null; change: null; sentence: null; reason: string };
}

/** Why a headline cannot be given, from the error that said so; other errors pass through. */
function reasonOf(e: unknown): string {
  if (e instanceof TidemarkError && (e.code === 'NOT_ENOUGH_DATA' || e.code === 'RANGE_INVALID' || e.code === 'MATRIX_INVALID')) return e.message;
  throw e;
}

/**
 * The headlines of a waist in analysis form.
 * @throws only what the analyses throw for broken tables; a headline the data are too short for is
 *   null with its reason.
 * @example headlinesOf(demoWaist).latestMix.states[0] // { state: 'fresh', users: 517, share: 0.0258 } (the demo, 2026-11-23)
 */
export function headlinesOf(waist: Waist): Headlines {
  const t = waist.tables;
  const m = waist.manifest;
  const P = t.periods.length;
  const flows = summariseFlows(t);
  const retention = t.activeStates.map((s) => ({ state: s, ...(flows.pooled?.retention[s] ?? { n: 0, retained: 0, rate: null }) }));
  const counts = t.stateCounts[P - 1] ?? t.states.map(() => 0);
  const total = counts.reduce((a, b) => a + b, 0);
  const latestMix = { period: t.periods[P - 1], states: t.states.map((s, i) => ({ state: s, users: counts[i], share: total === 0 ? null : counts[i] / total })) };

  let longRun: Headlines['longRun'];
  if (t.transitions.length === 0) longRun = { kind: null, shares: null, sentence: 'no transition to fit a chain on: the data hold one period past the warm-up' };
  else {
    try {
      // the chain and long run `project` gives by default; one simulated path and no backtest suffice
      const p = computeProjection({ tables: t }, { horizon: 1, samples: 1, seed: 1, band: [10, 90], backtest: false });
      const steady = p.steadyState;
      longRun = { kind: p.longRun.kind, shares: steady ? p.states.map((s) => ({ state: s, share: steady[s] })) : null, sentence: p.longRun.sentence };
    } catch (e) {
      longRun = { kind: null, shares: null, sentence: reasonOf(e) };
    }
  }

  let decomposition: Headlines['decomposition'];
  try {
    const e = explainRetention(t, { grainWord: `one-${GRAIN_NOUN[m.rules.grain]}`, minCell: m.rules.minCell, stateLabels: stateLabelsOf(m.states) });
    decomposition = { base: e.base, compare: e.compare, change: e.overall.change, sentence: e.sentence };
  } catch (e) {
    decomposition = { base: null, compare: null, change: null, sentence: null, reason: reasonOf(e) };
  }
  return { periods: { first: t.periods[0], last: t.periods[P - 1], count: P }, retention, latestMix, longRun, decomposition };
}
