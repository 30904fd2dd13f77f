/**
 * Uncertainty bands for a projection: draw S transition matrices from the Dirichlet posterior of the
 * counts ({@link sampleTransitionMatrix}), project each with the same start and inflow, and take
 * percentiles of every step's counts and shares across the S projections (Hyndman & Fan definition 7,
 * see {@link quantileSorted}). The bands show the uncertainty of the transition probabilities only:
 * start and inflow are held fixed. Same seed and options → identical output.
 *
 * This is the sampling error of the pooled rates alone, a floor on the uncertainty; the projection's
 * own bands (`simulate.ts`) add how the rates and arrivals move and the audience's binomial noise.
 * Kept in the library API for callers that want that floor.
 */
import { TidemarkError } from '../errors.js';
import { dirichletParameters, sampleFromParameters, type DirichletOptions } from './dirichlet.js';
import { assertCounts, assertInteger, assertNonNegativeSquare } from './guards.js';
import { projectUnchecked } from './project.js';
import { quantileSorted } from '../numerics/quantile.js';
import { mulberry32 } from '../numerics/random.js';
import type { Matrix, Projection, Vector } from './types.js';

export interface BandOptions extends DirichletOptions {
  /** Number of sampled matrices S (default 500). */
  samples?: number;
  /** Seed of the generator (default 1). */
  seed?: number;
  /** Percentiles in [0, 100], ascending (default [10, 50, 90]). */
  percentiles?: number[];
  /** Band the counts as well as the shares (default true; false leaves `counts` empty, for callers that read shares only). */
  withCounts?: boolean;
}

export interface Bands {
  percentiles: number[];
  /** counts[k][t][s]: percentile percentiles[k] of the count of states[s] at step t (empty when not asked for). */
  counts: Matrix[];
  /** shares[k][t][s]: the same for shares. */
  shares: Matrix[];
  samples: number;
  seed: number;
}

/**
 * Percentile bands of a projection from pooled transition counts.
 *
 * @throws TidemarkError `MATRIX_INVALID` for counts that are not square, finite and ≥ 0;
 *   `INPUT_INVALID` for a bad start, inflow, horizon (0 to 10000), sample count (1 to 100000), seed,
 *   prior, mask, or percentiles that are not ascending numbers in [0, 100].
 * @example projectionBands(counts, start, inflow, 6, { seed: 42 }).counts[1] // medians, steps 0…6
 */
export function projectionBands(counts: Matrix, start: Vector, inflow: Vector, horizon: number, options: BandOptions = {}): Bands {
  const { samples = 500, seed = 1, percentiles = [10, 50, 90] } = options;
  assertNonNegativeSquare(counts, undefined, 'counts');
  const n = counts.length;
  assertCounts(start, n, 'start');
  assertCounts(inflow, n, 'inflow');
  assertInteger(horizon, 'horizon', 0, 10000);
  assertInteger(samples, 'samples', 1, 100000);
  if (percentiles.length === 0 || percentiles.some((p, k) => !(p >= 0 && p <= 100) || (k > 0 && p < percentiles[k - 1]))) {
    throw new TidemarkError('INPUT_INVALID', `percentiles must be ascending numbers in [0, 100] (got ${percentiles.join(', ')})`, { key: 'percentiles' });
  }
  const rng = mulberry32(seed);
  const alpha = dirichletParameters(counts, options); // checked once, sampled `samples` times
  const runs = Array.from({ length: samples }, () => projectUnchecked(sampleFromParameters(rng, alpha), start, inflow, horizon));
  const sorted = new Float64Array(samples);
  const band = (of: (run: Projection) => Matrix): Matrix[] => {
    const out = percentiles.map(() => Array.from({ length: horizon + 1 }, () => new Array<number>(n).fill(0)));
    for (let t = 0; t <= horizon; t++) {
      for (let s = 0; s < n; s++) {
        for (let k = 0; k < samples; k++) sorted[k] = of(runs[k])[t][s];
        sorted.sort(); // numeric order
        for (let k = 0; k < percentiles.length; k++) out[k][t][s] = quantileSorted(sorted, percentiles[k] / 100);
      }
    }
    return out;
  };
  return {
    percentiles: percentiles.slice(),
    counts: options.withCounts === false ? [] : band((run) => run.counts),
    shares: band((run) => run.shares),
    samples,
    seed,
  };
}
