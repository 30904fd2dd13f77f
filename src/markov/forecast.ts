/**
 * One forecast from a window of transitions: the pooled chain (maximum likelihood, `fit.ts`), the
 * inflow by the chosen method (`inflow.ts`), how the rates vary (`variation.ts`), the point projection
 * and the model its bands are simulated from (`simulate.ts`).
 */
import type { TransitionCounts } from '../flows/types.js';
import { normaliseCounts } from './fit.js';
import { estimateInflow, inflowAt, type InflowEstimate, type InflowMethod } from './inflow.js';
import { projectVarying } from './project.js';
import type { PathModel } from './simulate.js';
import type { Matrix, Projection, Vector } from './types.js';
import { commonShare, rateVariation, type RowVariation } from './variation.js';

export interface Forecast {
  matrix: Matrix;
  /** Pooled counts over the window. */
  counts: Matrix;
  emptyRows: string[];
  inflow: InflowEstimate;
  /** The inflow per state at step 1 (a trend changes it step by step). */
  inflowVector: Vector;
  variation: RowVariation[];
  point: Projection;
  model: PathModel;
}

/**
 * The forecast from `window` (in order), starting from `start` (counts at the window's last period),
 * new users arriving in state `fi`. `fixedInflow` replaces the estimated center (its variation kept).
 *
 * @throws TidemarkError as {@link estimateInflow} and {@link normaliseCounts}.
 * @example forecastWindow(states, tables.transitions.slice(-8), tables.stateCounts.at(-1), 0, 12, 'median').point.counts[12]
 */
export function forecastWindow(states: string[], window: readonly TransitionCounts[], start: Vector, fi: number, horizon: number, method: InflowMethod, fixedInflow?: number): Forecast {
  const counts = states.map((_, i) => states.map((_, j) => window.reduce((a, t) => a + t.counts[i][j], 0)));
  const { matrix, emptyRows } = normaliseCounts(counts, states);
  const estimated = estimateInflow(window.map((t) => t.fresh), window.map((t) => t.to), method);
  const inflow = fixedInflow === undefined ? estimated : { ...estimated, center: fixedInflow, slope: 0, slopeSd: 0 };
  const split = states.map((_, i) => (i === fi ? 1 : 0));
  const point = projectVarying(matrix, start, (h) => split.map((f) => f * inflowAt(inflow, h)), horizon);
  const variation = rateVariation(window, states);
  return { matrix, counts, emptyRows, inflow, inflowVector: split.map((f) => f * inflowAt(inflow, 1)), variation, point, model: { rows: variation, inflow, split, common: commonShare(variation) } };
}
