/**
 * Shifted-beta-geometric (sBG) model of a cohort's survival (Fader & Hardie 2007, "How to project
 * customer retention", Journal of Interactive Marketing 21(1):76–90).
 *
 * Each member leaves at the end of a period with a constant probability θ, and θ varies across
 * members as Beta(α, β). The lifetime T ∈ {1, 2, …} (the period in which a member is lost) has
 *   P(T = t) = B(α + 1, β + t − 1) / B(α, β),     S(t) = P(T > t) = B(α, β + t) / B(α, β),
 * with S(0) = 1. Log-beta is computed from the Lanczos log-gamma (`stats/lgamma.ts`).
 *
 * Fit: from survivors n₀ ≥ n₁ ≥ … ≥ n_T (members still active at each age), nₜ₋₁ − nₜ were lost
 * in period t and n_T are right-censored at T, so
 *   LL(α, β) = Σₜ (nₜ₋₁ − nₜ) ln P(T = t) + n_T ln S(T).
 * LL is maximised over (ln α, ln β) by Nelder–Mead (`optimize.ts`) from several starting points,
 * the best kept and restarted. The search is confined to |ln α|, |ln β| ≤ 15; a maximum on that
 * edge (the data push the model to a limit, e.g. members who all leave at once mixed with members
 * who never leave) is reported with `boundary: true`.
 *
 * Expected remaining lifetime, for a member still active at the last observed age T: the expected
 * number of further periods survived, E[#{t > T : T_life > t} | T_life > T] = Σ_{t>T} S(t)/S(T).
 * Its untruncated value is (β + T)/(α − 1) when α > 1 and infinite when α ≤ 1 (the posterior of θ
 * is Beta(α, β + T) and E[1/θ] diverges for α ≤ 1), which fits of real cohorts often give. So the
 * reported value is the sum truncated at `lifetimeCap` further periods (default 100), and the
 * untruncated value is given beside it (null when infinite).
 *
 * Policy for `src/curve`: a malformed vector throws INPUT_INVALID; a vector that cannot support a
 * fit (n₀ = 0, fewer than three ages, nobody lost, everyone lost in the first period) throws
 * NOT_ENOUGH_DATA.
 */
import { TidemarkError } from '../errors.js';
import { logBeta } from '../stats/lgamma.js';
import { nelderMead } from './optimize.js';

function checkParams(alpha: number, beta: number, fn: string): void {
  if (!(alpha > 0 && beta > 0 && Number.isFinite(alpha) && Number.isFinite(beta))) {
    throw new TidemarkError('INPUT_INVALID', `${fn}: alpha and beta must be positive finite numbers, got ${alpha}, ${beta}`);
  }
}

function checkCap(cap: number): void {
  if (!(Number.isInteger(cap) && cap >= 1)) throw new TidemarkError('INPUT_INVALID', `lifetimeCap must be an integer ≥ 1, got ${cap}`, { key: 'lifetimeCap' });
}

function checkT(t: number, min: number, fn: string): void {
  if (!(Number.isInteger(t) && t >= min)) throw new TidemarkError('INPUT_INVALID', `${fn}: t must be an integer ≥ ${min}, got ${t}`);
}

/**
 * sBG survival S(t) = B(α, β + t)/B(α, β).
 *
 * @throws {TidemarkError} INPUT_INVALID for α or β not positive, or t not an integer ≥ 0.
 * @example sbgSurvival(1, 1, 1) // 0.5;  sbgSurvival(2, 1, 1) // 1/3
 */
export function sbgSurvival(t: number, alpha: number, beta: number): number {
  checkParams(alpha, beta, 'sbgSurvival');
  checkT(t, 0, 'sbgSurvival');
  return t === 0 ? 1 : Math.exp(logBeta(alpha, beta + t) - logBeta(alpha, beta));
}

/**
 * sBG churn probability P(T = t) = B(α + 1, β + t − 1)/B(α, β), t ≥ 1.
 *
 * @throws {TidemarkError} INPUT_INVALID for α or β not positive, or t not an integer ≥ 1.
 * @example sbgChurnProbability(1, 1, 1) // 0.5;  sbgChurnProbability(2, 1, 1) // 1/6
 */
export function sbgChurnProbability(t: number, alpha: number, beta: number): number {
  checkParams(alpha, beta, 'sbgChurnProbability');
  checkT(t, 1, 'sbgChurnProbability');
  return Math.exp(logBeta(alpha + 1, beta + t - 1) - logBeta(alpha, beta));
}

/**
 * Checks a survivors vector: finite, non-negative, non-increasing, n₀ > 0, at least two ages,
 * someone lost and someone left after the first period.
 *
 * @throws {TidemarkError} INPUT_INVALID or NOT_ENOUGH_DATA as described in the module comment.
 */
export function checkSurvivors(survivors: readonly number[]): void {
  survivors.forEach((v, t) => {
    if (!(Number.isFinite(v) && v >= 0)) throw new TidemarkError('INPUT_INVALID', `survivors[${t}] must be a finite number ≥ 0, got ${v}`, { key: `survivors[${t}]` });
    if (t > 0 && v > survivors[t - 1]) {
      throw new TidemarkError('INPUT_INVALID', `survivors must not increase: survivors[${t}] = ${v} > survivors[${t - 1}] = ${survivors[t - 1]}`, { key: `survivors[${t}]` });
    }
  });
  if (survivors.length < 2) throw new TidemarkError('NOT_ENOUGH_DATA', `a fit needs survivors at two ages or more, got ${survivors.length}`);
  const n0 = survivors[0];
  const nT = survivors[survivors.length - 1];
  if (n0 === 0) throw new TidemarkError('NOT_ENOUGH_DATA', 'the cohort has no users at age 0 (n0 = 0)');
  if (nT === n0) throw new TidemarkError('NOT_ENOUGH_DATA', 'no user was lost, so the churn cannot be estimated');
  if (survivors[1] === 0) throw new TidemarkError('NOT_ENOUGH_DATA', 'every user was lost in the first period, so the spread of churn cannot be estimated');
}

/**
 * sBG log-likelihood of a survivors vector (see the module comment).
 *
 * @throws {TidemarkError} INPUT_INVALID for α or β not positive, or a malformed vector.
 * @example sbgLogLikelihood(0.704, 1.182, [1000, 631, 468, 382, 326, 289, 262, 241]) // ≈ −1680.27 (Fader & Hardie 2007)
 */
export function sbgLogLikelihood(alpha: number, beta: number, survivors: readonly number[]): number {
  checkParams(alpha, beta, 'sbgLogLikelihood');
  checkSurvivors(survivors);
  return logLikelihood(alpha, beta, survivors);
}

function logLikelihood(alpha: number, beta: number, survivors: readonly number[]): number {
  const lb = logBeta(alpha, beta);
  const T = survivors.length - 1;
  let ll = 0;
  for (let t = 1; t <= T; t++) {
    const lost = survivors[t - 1] - survivors[t];
    if (lost > 0) ll += lost * (logBeta(alpha + 1, beta + t - 1) - lb);
  }
  if (survivors[T] > 0) ll += survivors[T] * (logBeta(alpha, beta + T) - lb);
  return ll;
}

/**
 * Expected further periods survived by a member active at age T, summed over at most `cap` further
 * periods: Σ_{t=T+1}^{T+cap} S(t)/S(T), by the ratio S(t)/S(t − 1) = (β + t − 1)/(α + β + t − 1).
 * Without the cap it is (β + T)/(α − 1) for α > 1 and infinite for α ≤ 1 (see the module comment).
 *
 * @throws {TidemarkError} INPUT_INVALID for α or β not positive, T not an integer ≥ 0, or cap not an integer ≥ 1.
 * @example sbgRemainingLifetime(1, 1, 0, 3) // 1/2 + 1/3 + 1/4 = 1.0833… (S(t) = 1/(t + 1))
 */
export function sbgRemainingLifetime(alpha: number, beta: number, T: number, cap: number): number {
  checkParams(alpha, beta, 'sbgRemainingLifetime');
  checkT(T, 0, 'sbgRemainingLifetime');
  checkCap(cap);
  let ratio = 1;
  let sum = 0;
  for (let t = T + 1; t <= T + cap; t++) {
    ratio *= (beta + t - 1) / (alpha + beta + t - 1);
    sum += ratio;
  }
  return sum;
}

export interface SbgOptions {
  /** Last age of the projection; default 2T. */
  horizon?: number;
  /** Further periods summed for the expected remaining lifetime; default 100. */
  lifetimeCap?: number;
}

export interface SbgFit {
  alpha: number;
  beta: number;
  logLikelihood: number;
  /** S(t) for t = 0 … horizon (share of n₀ still active). */
  projection: { t: number; survival: number }[];
  /** Σ_{t=T+1}^{T+cap} S(t)/S(T): expected further periods survived, capped. */
  expectedRemainingLifetime: number;
  lifetimeCap: number;
  /** (β + T)/(α − 1) when α > 1; null when α ≤ 1 (infinite). */
  expectedRemainingLifetimeUncapped: number | null;
  /** The maximum lies on the edge of the search box (|ln α| or |ln β| near 15). */
  boundary: boolean;
  converged: boolean;
}

const BOX = 15;

/**
 * Fewest ages a fit needs. Two ages (n₀, n₁) give one loss rate, which every (α, β) with
 * α/(α + β) equal to it matches exactly: the two parameters are not identified.
 */
export const MIN_FIT_AGES = 3;
const STARTS: readonly (readonly [number, number])[] = [[0, 0], [-1, 0], [0, 1], [-1, 1], [1, 2], [-2, -1], [1, -1]];

/**
 * Maximum-likelihood sBG fit of a survivors vector n₀ … n_T, with its projection and expected
 * remaining lifetime.
 *
 * @throws {TidemarkError} INPUT_INVALID for a malformed vector or option; NOT_ENOUGH_DATA for a
 *   vector that cannot support a fit, or one of fewer than {@link MIN_FIT_AGES} ages (not identified).
 * @example fitSbg([1000, 631, 468, 382, 326, 289, 262, 241]) // α ≈ 0.704, β ≈ 1.182, LL ≈ −1680.265 (Fader & Hardie 2007)
 */
export function fitSbg(survivors: readonly number[], options: SbgOptions = {}): SbgFit {
  checkSurvivors(survivors);
  if (survivors.length < MIN_FIT_AGES) {
    throw new TidemarkError('NOT_ENOUGH_DATA', `survivors at ${survivors.length} ages cannot identify alpha and beta: a fit needs ${MIN_FIT_AGES} ages or more`, {}, 'one loss rate is matched by every alpha/(alpha + beta) equal to it');
  }
  const T = survivors.length - 1;
  const horizon = options.horizon ?? 2 * T;
  const cap = options.lifetimeCap ?? 100;
  if (!(Number.isInteger(horizon) && horizon >= 0)) throw new TidemarkError('INPUT_INVALID', `horizon must be an integer ≥ 0, got ${horizon}`, { key: 'horizon' });
  checkCap(cap);

  // Mean log-likelihood per member: the same maximum, on a scale where an absolute tolerance is relative.
  const n0 = survivors[0];
  const objective = ([la, lb]: number[]): number =>
    Math.abs(la) > BOX || Math.abs(lb) > BOX ? Infinity : -logLikelihood(Math.exp(la), Math.exp(lb), survivors) / n0;
  let best: { x: number[]; value: number; converged: boolean } | null = null;
  for (const start of STARTS) {
    const r = nelderMead(objective, start, { step: 0.5, fTolerance: 1e-13, xTolerance: 1e-10 });
    if (!best || r.value < best.value) best = r;
  }
  const fit = nelderMead(objective, best!.x, { step: 0.05, fTolerance: 1e-13, xTolerance: 1e-10 });
  const alpha = Math.exp(fit.x[0]);
  const beta = Math.exp(fit.x[1]);

  const projection = Array.from({ length: horizon + 1 }, (_, t) => ({ t, survival: sbgSurvival(t, alpha, beta) }));
  return {
    alpha,
    beta,
    logLikelihood: logLikelihood(alpha, beta, survivors),
    projection,
    expectedRemainingLifetime: sbgRemainingLifetime(alpha, beta, T, cap),
    lifetimeCap: cap,
    expectedRemainingLifetimeUncapped: alpha > 1 ? (beta + T) / (alpha - 1) : null,
    boundary: Math.max(Math.abs(fit.x[0]), Math.abs(fit.x[1])) > BOX - 0.5,
    converged: fit.converged,
  };
}
