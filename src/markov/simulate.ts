/**
 * Simulated futures of the audience, for bands that hold what the past says can happen (see
 * DEVELOPERS.md, "Projection bands"). Each sampled path:
 * 1. draws each row's level from Dirichlet(m·(1/v − 1) + prior on the observed moves), v the level
 *    variance of `rateVariation`, and the inflow's center (and slope) from a normal with its standard
 *    deviation; the estimated variances φ, δ (and the inflow's) are scaled by ν/χ²_ν, ν = periods − 2,
 *    since a few periods estimate them only roughly ({@link varianceFactor});
 * 2. every period, moves each row's level one step of a Dirichlet random walk (concentration 1/δ − 1),
 *    draws that period's rates around it (concentration 1/φ − 1), and the period's arrivals
 *    (level walk σ²_η, noise σ_ε);
 * 3. moves the users by multinomial draws (the binomial noise of a finite audience) and adds the
 *    arrivals.
 * Scenarios edit each path's rates and arrivals after they are drawn, and use the same random numbers
 * as the baseline (common random numbers), so their difference from the baseline has a band of its own.
 */
import { TidemarkError } from '../errors.js';
import { multinomial } from '../numerics/binomial.js';
import { dirichletUnchecked } from '../numerics/dirichlet.js';
import { mulberry32, normal, type Rng } from '../numerics/random.js';
import { gamma } from '../numerics/gamma.js';
import { quantileSorted } from '../numerics/quantile.js';
import type { InflowEstimate } from './inflow.js';
import { recalibratedBands, type SideFactors } from './recalibrate.js';
import { MAX_VARIATION, type RowVariation } from './variation.js';

/** Pseudo-count added to each observed move when a row's level is drawn (Jeffreys). */
export const LEVEL_PRIOR = 0.5;

/** What the paths are drawn from. */
export interface PathModel {
  rows: readonly RowVariation[];
  inflow: Pick<InflowEstimate, 'center' | 'slope' | 'noiseSd' | 'drift' | 'centerSd' | 'slopeSd'> & { periods?: number };
  /** How the arrivals split over the states (shares summing to 1, or all 0 for no inflow). */
  split: readonly number[];
  /** ρ, the share of the rates' variation every row shares (`commonShare`; 0 or none: rows move independently). */
  common?: number;
}

/** Edits of one scenario, by state index (checked by the caller). */
export interface PathEdits {
  /** Per row, the edited moves in order: scale the entry by `value`, or set it to `value`. */
  rows: Map<number, { j: number; op: 'scale' | 'set'; value: number }[]>;
  /** Inflow edits in order; `state` undefined for the total. `set` scales to value / fitted center. */
  inflow: { state?: number; op: 'scale' | 'set'; value: number }[];
  /** Extra users arriving in `state` at `step`. */
  campaigns: { state: number; count: number; step: number }[];
}

export interface Simulation {
  samples: number;
  horizon: number;
  states: number;
  /** One per scenario (index 0: the baseline): counts[(k·(H + 1) + t)·S + s] of path k. */
  counts: Float64Array[];
  /** Set after the backtest: the band sides' factors by step, which {@link pathPercentiles} applies. */
  recalibration?: BandRecalibration;
}

/**
 * Recalibrated bands (the backtest's `centreShift` and `widthFactors`): the `inner` and `outer` bands of
 * a step are moved by the state's centre correction (a quantity of one state only) and the lower and
 * upper sides around the median scaled by that step's factors (`recalibrate.ts`; a side of width 0 takes
 * the other's). Differences between scenarios keep the model's bands.
 */
export interface BandRecalibration {
  inner: readonly [number, number];
  outer: readonly [number, number];
  /**
   * factors[t]: step t's factors [lower, upper] per band ([1, 1] where none was measured; the last for
   * steps beyond) and each state's centre correction in units of its outer band's half-width.
   */
  factors: readonly { inner: SideFactors; outer: SideFactors; shift?: readonly number[] }[];
  /** The inner band's side over the outer's for a normal, for an inner band of width 0 (`innerAlt`). */
  sideRatio: number;
}

/** The largest number of numbers a simulation may hold (samples × steps × states × scenarios). */
export const MAX_CELLS = 50_000_000;

/**
 * Draws `samples` paths of `horizon` periods from `start` (whole counts), for the baseline and each
 * scenario. Same seed, same paths.
 *
 * @throws TidemarkError `INPUT_INVALID` when the paths would hold more than {@link MAX_CELLS} numbers.
 * @example simulatePaths(model, [50, 700, 60, 180, 900], 8, { samples: 200, seed: 1 }).counts[0].length // 200·9·5
 */
export function simulatePaths(model: PathModel, start: readonly number[], horizon: number, o: { samples: number; seed: number; edits?: readonly PathEdits[] }): Simulation {
  const S = model.rows.length;
  const scen = [undefined, ...(o.edits ?? [])];
  const stride = (horizon + 1) * S;
  if (o.samples * stride * scen.length > MAX_CELLS) {
    throw new TidemarkError('INPUT_INVALID', `${o.samples} samples of ${horizon} periods for ${scen.length} scenarios would hold more than ${MAX_CELLS.toLocaleString('en-US')} numbers`, { key: 'samples' }, 'use fewer samples, a shorter horizon or fewer scenarios');
  }
  const counts = scen.map(() => new Float64Array(o.samples * stride));
  const x0 = start.map((v) => Math.max(0, Math.round(v)));
  const levelAlpha = model.rows.map((r) => r.rates && (r.filtered ?? r.rates).map((m, j) => ((r.rates as number[])[j] > 0 ? m * (1 / r.level - 1) + LEVEL_PRIOR : 0)));
  const center = model.inflow.center;
  const rho = Math.min(1, Math.max(0, model.common ?? 0));
  const stateCenter = model.split.map((f) => f * center);
  for (let k = 0; k < o.samples; k++) {
    const rng = mulberry32(streamSeed(o.seed, k, 0));
    // the variances were estimated from a few periods: each path draws them from a scaled inverse chi-square
    const rows = model.rows.map((r) => {
      const f = varianceFactor(rng, r.periods - 2);
      return { ...r, noise: Math.min(MAX_VARIATION, r.noise * f), drift: Math.min(MAX_VARIATION, r.drift * f) };
    });
    const level = levelAlpha.map((a) => (a === null ? null : dirichletUnchecked(rng, a)));
    let inflowLevel = center + model.inflow.centerSd * normal(rng);
    const slope = model.inflow.slope + model.inflow.slopeSd * normal(rng);
    const fi = varianceFactor(rng, (model.inflow.periods ?? 0) - 2);
    const inflowDrift = model.inflow.drift * fi;
    const inflowNoiseSd = Math.max(Math.sqrt(center), model.inflow.noiseSd * Math.sqrt(fi));
    const xs = scen.map(() => x0.slice());
    const noise: Rng[] = scen.map(() => mulberry32(streamSeed(o.seed, k, 1)));
    scen.forEach((_, c) => counts[c].set(x0, k * stride));
    for (let t = 1; t <= horizon; t++) {
      // the shocks every row shares this period, one per destination (for the walk and for the noise)
      const cWalk = rho > 0 ? x0.map(() => normal(rng)) : null;
      const cNoise = rho > 0 ? x0.map(() => normal(rng)) : null;
      const rates = rows.map((r, i) => {
        const lv = level[i];
        if (lv === null) return null;
        if (r.drift > 0) level[i] = sharedStep(dirichletStep(rng, lv, (1 - rho) * r.drift), lv, rho * r.drift, cWalk);
        const l = level[i] as number[];
        return r.noise > 0 ? sharedStep(dirichletStep(rng, l, (1 - rho) * r.noise), l, rho * r.noise, cNoise) : l.slice();
      });
      inflowLevel += Math.sqrt(inflowDrift) * normal(rng);
      const total = Math.max(0, inflowLevel + slope * t + inflowNoiseSd * normal(rng));
      scen.forEach((edit, c) => {
        const x = xs[c];
        const next = new Array<number>(S).fill(0);
        for (let i = 0; i < S; i++) {
          if (x[i] === 0) continue;
          const p = rates[i];
          if (p === null) {
            next[i] += x[i];
            continue;
          }
          const row = edit?.rows.get(i);
          const moved = multinomial(noise[c], x[i], row ? editRow(p, row, i) : p);
          for (let j = 0; j < S; j++) next[j] += moved[j];
        }
        const arrivals = model.split.map((f) => f * total);
        if (edit) applyInflowEdits(arrivals, edit, center, stateCenter, t);
        for (let j = 0; j < S; j++) next[j] += Math.round(arrivals[j]);
        xs[c] = next;
        counts[c].set(next, k * stride + t * S);
      });
    }
  }
  return { samples: o.samples, horizon, states: S, counts };
}

/** A Dirichlet draw around `p` with variance `v`·p(1 − p) a cell (p itself when v = 0). */
function dirichletStep(rng: Rng, p: readonly number[], v: number): number[] {
  return v > 0 ? dirichletUnchecked(rng, p.map((x) => x * (1 / v - 1))) : p.slice();
}

/**
 * `q` moved by the shared shock c (standard normals, one per destination) with covariance v·(diag(m) − m·mᵀ)
 * around m: x_j = √(v)·(√m_j·c_j − m_j·Σ_k √m_k·c_k), whose covariance is exactly that (a square root of
 * the multinomial covariance); cells of m > 0 are kept above 0, then the row is scaled to sum to 1.
 */
export function sharedStep(q: number[], m: readonly number[], v: number, c: readonly number[] | null): number[] {
  if (c === null || !(v > 0)) return q;
  const sd = Math.sqrt(v);
  let dot = 0;
  for (let j = 0; j < m.length; j++) if (m[j] > 0) dot += Math.sqrt(m[j]) * c[j];
  let sum = 0;
  for (let j = 0; j < m.length; j++) {
    if (m[j] > 0) q[j] = Math.max(1e-12, q[j] + sd * (Math.sqrt(m[j]) * c[j] - m[j] * dot));
    sum += q[j];
  }
  for (let j = 0; j < m.length; j++) q[j] /= sum;
  return q;
}

/**
 * A sampled row with a scenario's edits: scaled entries are capped at 1; if the edited entries add up
 * to more than 1 they are scaled down to 1 together; the other entries keep their proportions and fill
 * the rest (the rest goes to the diagonal when they are all 0 and it is not edited).
 */
export function editRow(p: readonly number[], edits: readonly { j: number; op: 'scale' | 'set'; value: number }[], diagonal: number): number[] {
  const pins = new Map<number, number>();
  for (const e of edits) pins.set(e.j, e.op === 'set' ? e.value : Math.min(1, (pins.get(e.j) ?? p[e.j]) * e.value));
  let fixed = 0;
  for (const v of pins.values()) fixed += v;
  const shrink = fixed > 1 ? 1 / fixed : 1;
  const rest = p.reduce((s, v, j) => s + (pins.has(j) ? 0 : v), 0);
  const remainder = Math.max(0, 1 - fixed * shrink);
  const out = p.map((v, j) => (pins.has(j) ? (pins.get(j) as number) * shrink : rest > 0 ? (v * remainder) / rest : 0));
  if (rest === 0 && remainder > 0 && !pins.has(diagonal)) out[diagonal] += remainder;
  return out;
}

export function applyInflowEdits(arrivals: number[], edit: PathEdits, center: number, stateCenter: readonly number[], step: number): void {
  for (const e of edit.inflow) {
    if (e.state === undefined) {
      const k = e.op === 'scale' ? e.value : center > 0 ? e.value / center : 0;
      for (let j = 0; j < arrivals.length; j++) arrivals[j] *= k;
      if (e.op === 'set' && center === 0 && arrivals.length > 0) arrivals[0] = e.value;
    } else if (e.op === 'scale') arrivals[e.state] *= e.value;
    else arrivals[e.state] = stateCenter[e.state] > 0 ? (arrivals[e.state] * e.value) / stateCenter[e.state] : e.value;
  }
  for (const c of edit.campaigns) if (c.step === step) arrivals[c.state] += c.count;
}

/**
 * A draw of ν/χ²_ν, the factor by which a variance estimated with ν degrees of freedom is scaled in one
 * path (the scaled-inverse-χ² posterior of a normal variance; Gelman et al., *Bayesian Data Analysis*,
 * 3rd ed., §3.2). ν < 1 (too few periods) gives 1: those rows have no estimated variation anyway.
 */
export function varianceFactor(rng: Rng, df: number): number {
  return df >= 1 ? df / (2 * gamma(rng, df / 2)) : 1;
}

/** A seed for path k's stream: a 32-bit mix of the seed, the path and the stream number. */
function streamSeed(seed: number, k: number, stream: number): number {
  let h = Math.imul(seed ^ 0x9e3779b9, 0x85ebca6b) ^ Math.imul(k + 1, 0xc2b2ae35) ^ Math.imul(stream + 1, 0x27d4eb2f);
  h ^= h >>> 16;
  h = Math.imul(h, 0x7feb352d);
  h ^= h >>> 15;
  return h >>> 0;
}

/**
 * Percentiles across paths of a quantity of each path at each step (Hyndman & Fan definition 7):
 * out[q][t] for `levels` in [0, 100]. With `sim.recalibration`, the bands' percentiles are moved from
 * the step's median by their factors (not for a difference, `minus`), and, for a quantity of one
 * `state`, the band by that state's centre correction times the model's outer half-width; kept within
 * [0, `upper`].
 */
export function pathPercentiles(sim: Simulation, levels: readonly number[], of: (counts: Float64Array, base: number) => number, which = 0, minus?: number, upper = Infinity, state?: number): number[][] {
  const { samples, horizon, states } = sim;
  const stride = (horizon + 1) * states;
  const sorted = new Float64Array(samples);
  const out = levels.map(() => new Array<number>(horizon + 1).fill(0));
  for (let t = 0; t <= horizon; t++) {
    for (let k = 0; k < samples; k++) {
      const base = k * stride + t * states;
      sorted[k] = of(sim.counts[which], base) - (minus === undefined ? 0 : of(sim.counts[minus], base));
    }
    sorted.sort();
    const r = minus === undefined ? sim.recalibration : undefined;
    const f = r?.factors[Math.min(t, r.factors.length - 1)];
    let bands: Map<number, number> | undefined;
    if (r && f && t > 0) {
      // the bands recalibrated as the backtest does (recalibrate.ts): each side scaled by its factor
      const at = (l: number) => quantileSorted(sorted, l / 100);
      const med = at(50);
      const model: [number, number, number, number] = [at(r.inner[0]), at(r.inner[1]), at(r.outer[0]), at(r.outer[1])];
      const shift = state === undefined ? 0 : (f.shift?.[state] ?? 0) * (model[3] - model[2]) / 2;
      const [il, iu, ol, ou] = recalibratedBands(med, model, f.inner, f.outer, r.sideRatio, shift);
      // a widened band stays within what the quantity can be: counts and shares are never below 0, a
      // share never above 1 (`upper`)
      const clamp = (v: number) => Math.min(upper, Math.max(0, v));
      bands = new Map([[r.outer[0], clamp(ol)], [r.outer[1], clamp(ou)], [r.inner[0], clamp(il)], [r.inner[1], clamp(iu)]]);
    }
    levels.forEach((l, q) => (out[q][t] = bands?.get(l) ?? quantileSorted(sorted, l / 100)));
  }
  return out;
}
