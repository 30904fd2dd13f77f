/**
 * Named scenarios side by side (`--scenario NAME="…"`): each is applied to the fitted chain for its
 * point projection (`whatif.ts`: refusals, reweighting, campaigns) and to every simulated path for its
 * bands (`simulate.ts`: same random numbers as the baseline), and compared with the baseline: the mix at
 * the horizon, active users, and the difference from the baseline with its own band.
 */
import { inflowAt } from './inflow.js';
import type { Forecast } from './forecast.js';
import { projectVarying } from './project.js';
import { parseNamedScenario } from './scenario.js';
import { applyInflowEdits, pathPercentiles, type PathEdits, type Simulation } from './simulate.js';
import type { Projection } from './types.js';
import { applyScenario, type MoveRules } from './whatif.js';
import { INNER_BAND } from './backtest.js';
import { TidemarkError } from '../errors.js';

type Pair = [number, number];
type Counts = Record<string, number>;
/** A quantity with its inner (50%) and outer band. */
export interface Banded {
  value: number;
  inner: Pair | null;
  outer: Pair | null;
}

export interface ScenarioOutput {
  name: string;
  /** The edits as written. */
  text: string;
  /** One line per edit: the entry before and after (a campaign: 0 and its users). */
  edits: { text: string; before: number; after: number }[];
  /** Per step: total and active users in the scenario, and their difference from the baseline. */
  steps: { step: number; period?: string; total: Banded; active: Banded | null; difference: { total: Banded; active: Banded | null } }[];
  /** The mix at the horizon, and the difference from the baseline, per state. */
  atHorizon: { counts: Record<string, Banded>; shares: Record<string, Banded>; difference: Record<string, Banded> };
}

export interface NamedEdits {
  name: string;
  text: string;
  changes: { text: string; before: number; after: number }[];
  edits: PathEdits;
  point: Projection;
}

/**
 * Parses, checks and applies named scenarios to forecast `f`.
 *
 * @throws TidemarkError `INPUT_INVALID` (key `scenario…`) as {@link parseNamedScenario} and {@link applyScenario}.
 * @example scenarioEdits(['keep=lapsing->dormant*0.8'], states, f, moves, 12)[0].point.counts[12]
 */
export function scenarioEdits(texts: readonly string[], states: string[], f: Forecast, moves: MoveRules | undefined, horizon: number): NamedEdits[] {
  return parseNamedScenario(texts).map(({ name, text, edits }) => {
    let applied: ReturnType<typeof applyScenario>;
    try {
      applied = applyScenario({ states, matrix: f.matrix, inflow: f.inflowVector, moves }, edits, horizon);
    } catch (e) {
      throw e instanceof TidemarkError ? new TidemarkError(e.code, `${name}: ${e.message}`, { ...e.where, key: 'scenarios' }, e.hint) : e;
    }
    const rows = new Map<number, { j: number; op: 'scale' | 'set'; value: number }[]>();
    const pathEdits: PathEdits = { rows, inflow: [], campaigns: applied.campaigns };
    for (const e of edits) {
      if (e.target === 'transition') {
        const i = states.indexOf(e.from);
        rows.set(i, [...(rows.get(i) ?? []), { j: states.indexOf(e.to), op: e.op, value: e.value }]);
      } else if (e.target === 'inflow') pathEdits.inflow.push({ state: e.state === undefined ? undefined : states.indexOf(e.state), op: e.op, value: e.value });
    }
    const split = f.inflowVector.map((v) => v / (f.inflowVector.reduce((a, b) => a + b, 0) || 1));
    const center = f.inflow.center;
    const stateCenter = split.map((s) => s * center);
    const point = projectVarying(applied.matrix, f.point.counts[0], (h) => {
      const a = split.map((s) => s * inflowAt(f.inflow, h));
      applyInflowEdits(a, pathEdits, center, stateCenter, h);
      return a;
    }, horizon);
    return { name, text, changes: applied.changes, edits: pathEdits, point };
  });
}

/** The comparison of each named scenario with the baseline; bands when `sim` holds their paths (index k + 1). */
export function namedScenarios(named: readonly NamedEdits[], states: readonly string[], f: Forecast, sim: Simulation | undefined, band: Pair, activeIdx: readonly number[], labels?: readonly (string | undefined)[]): ScenarioOutput[] {
  const S = states.length;
  const H = f.point.counts.length - 1;
  const levels = [INNER_BAND[0], INNER_BAND[1], band[0], band[1]];
  const total = (c: Float64Array, b: number) => { let t = 0; for (let j = 0; j < S; j++) t += c[b + j]; return t; };
  const active = (c: Float64Array, b: number) => activeIdx.reduce((a, i) => a + c[b + i], 0);
  const banded = (value: number, q: number[][] | undefined, t: number): Banded => ({ value, inner: q ? [q[0][t], q[1][t]] : null, outer: q ? [q[2][t], q[3][t]] : null });
  const sum = (v: number[], idx: readonly number[]) => idx.reduce((a, i) => a + v[i], 0);
  return named.map((n, k) => {
    const which = k + 1;
    const pct = (of: (c: Float64Array, b: number) => number, minus?: number, upper?: number, state?: number) => (sim ? pathPercentiles(sim, levels, of, which, minus, upper, state) : undefined);
    const qTotal = pct(total), qActive = activeIdx.length ? pct(active) : undefined;
    const dTotal = pct(total, 0), dActive = activeIdx.length ? pct(active, 0) : undefined;
    const steps = n.point.counts.map((c, t) => ({
      step: t,
      ...(labels?.[t] ? { period: labels[t] } : {}),
      total: banded(n.point.totals[t], qTotal, t),
      active: activeIdx.length ? banded(sum(c, activeIdx), qActive, t) : null,
      difference: {
        total: banded(n.point.totals[t] - f.point.totals[t], dTotal, t),
        active: activeIdx.length ? banded(sum(c, activeIdx) - sum(f.point.counts[t], activeIdx), dActive, t) : null,
      },
    }));
    const perState = (of: (s: number) => (c: Float64Array, b: number) => number, value: (s: number) => number, minus?: number, upper?: number): Record<string, Banded> =>
      Object.fromEntries(states.map((st, s) => [st, banded(value(s), pct(of(s), minus, upper ?? Infinity, s), H)]));
    const count = (s: number) => (c: Float64Array, b: number) => c[b + s];
    const share = (s: number) => (c: Float64Array, b: number) => { const t = total(c, b); return t > 0 ? c[b + s] / t : 0; };
    return {
      name: n.name,
      text: n.text,
      edits: n.changes,
      steps,
      atHorizon: {
        counts: perState(count, (s) => n.point.counts[H][s]),
        shares: perState(share, (s) => n.point.shares[H][s], undefined, 1),
        difference: perState(count, (s) => n.point.counts[H][s] - f.point.counts[H][s], 0),
      },
    };
  });
}

export type { Counts };
