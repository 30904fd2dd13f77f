/** Projection steps as the output shows them: counts, shares, active users and their bands. */
import { INNER_BAND } from './backtest.js';
import type { Forecast } from './forecast.js';
import { pathPercentiles, type Simulation } from './simulate.js';

type Counts = Record<string, number>;
type Pair = [number, number];
const byState = (states: readonly string[], v: ArrayLike<number>): Counts => Object.fromEntries(states.map((s, i) => [s, v[i]]));

export interface StepBands {
  /** The outer band's percentiles (`--band`, default 10th–90th). */
  percentiles: Pair;
  counts: Record<string, Pair>;
  shares: Record<string, Pair>;
  /** The inner (25th–75th percentile, 50%) band. */
  inner: { percentiles: Pair; counts: Record<string, Pair>; shares: Record<string, Pair> };
  /** Active users (the sum over the active states): inner and outer band. */
  active?: { inner: Pair; outer: Pair };
}

export interface ProjectionStep {
  step: number;
  /** The period's label, when the grain is known. */
  period?: string;
  total: number;
  /** Users in the active states (events only). */
  active?: number;
  counts: Counts;
  shares: Counts;
  bands: StepBands | null;
}

/** Projection steps with the inner and outer bands of simulation `which` (point values from `point`). */
export function stepsWithBands(states: readonly string[], point: { counts: number[][]; shares: number[][]; totals: number[] }, sim: Simulation | undefined, which: number, band: Pair, activeIdx: readonly number[], labels?: readonly (string | undefined)[]): ProjectionStep[] {
  const S = states.length;
  const levels = [band[0], band[1], INNER_BAND[0], INNER_BAND[1]];
  const q = sim ? states.map((_, s) => ({ counts: pathPercentiles(sim, levels, (c, b) => c[b + s], which, undefined, Infinity, s), shares: pathPercentiles(sim, levels, (c, b) => share(c, b, S, s), which, undefined, 1, s) })) : undefined;
  const act = sim && activeIdx.length ? pathPercentiles(sim, levels, (c, b) => activeIdx.reduce((a, i) => a + c[b + i], 0), which) : undefined;
  return point.counts.map((c, t) => ({
    step: t,
    ...(labels?.[t] ? { period: labels[t] } : {}),
    total: point.totals[t],
    ...(activeIdx.length ? { active: activeIdx.reduce((a, i) => a + c[i], 0) } : {}),
    counts: byState(states, c),
    shares: byState(states, point.shares[t]),
    bands: q
      ? {
          percentiles: band,
          counts: Object.fromEntries(states.map((s, i) => [s, [q[i].counts[0][t], q[i].counts[1][t]]])),
          shares: Object.fromEntries(states.map((s, i) => [s, [q[i].shares[0][t], q[i].shares[1][t]]])),
          inner: {
            percentiles: [...INNER_BAND],
            counts: Object.fromEntries(states.map((s, i) => [s, [q[i].counts[2][t], q[i].counts[3][t]]])),
            shares: Object.fromEntries(states.map((s, i) => [s, [q[i].shares[2][t], q[i].shares[3][t]]])),
          },
          ...(act ? { active: { inner: [act[2][t], act[3][t]] as Pair, outer: [act[0][t], act[1][t]] as Pair } } : {}),
        }
      : null,
  }));
}

function share(c: Float64Array, base: number, S: number, s: number): number {
  let total = 0;
  for (let j = 0; j < S; j++) total += c[base + j];
  return total > 0 ? c[base + s] / total : 0;
}

/** Warnings about a forecast's inputs: outlier periods of the inflow, rows whose variation is unknown. */
export function forecastWarnings(f: Forecast, where: string): string[] {
  const w: string[] = [];
  const m = f.inflow.method;
  if (f.inflow.outliers.length) {
    const list = f.inflow.outliers.map((x) => `${x.period} (${Math.round(x.arrivals).toLocaleString('en-US')})`).join(', ');
    w.push(m === 'mean'
      ? `Inflow: new users in ${list} lie far from the usual; the mean includes them (use the median to leave them out).`
      : `Inflow: the ${m === 'trend' ? 'trend' : m === 'trimmed' ? 'trimmed mean' : 'median'} treated ${list} as outliers (new users far from the usual, e.g. a campaign); they do not move the inflow and are left out of its variation.`);
  }
  const rough = f.variation.filter((r) => r.rates !== null && !r.estimated).map((r) => r.state);
  if (rough.length) w.push(`Bands: ${rough.join(', ')} had users leaving in fewer than 3 periods of ${where}, so how their rates vary is unknown; their bands show only sampling error and may be too narrow.`);
  return w;
}
