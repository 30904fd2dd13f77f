/**
 * Recalibrating the projection bands from past errors, in two steps, both from earlier origins only:
 * 1. an intercept correction of the centre (Clements & Hendry 1998, *Forecasting Economic Time Series*,
 *    ch. 8; Clements & Hendry 1996, "Intercept corrections and structural change", Journal of Applied
 *    Econometrics 11:475–494): each state's band is moved by the median of its recent signed errors, in
 *    units of its outer band's half-width, so a bias that persists (a steady trend the model does not
 *    have) is followed;
 * 2. split conformal prediction with a normalised score (Vovk, Gammerman & Shafer 2005, *Algorithmic
 *    Learning in a Random World*, ch. 2; Shafer & Vovk 2008, "A tutorial on conformal prediction", JMLR
 *    9:371–421) in its asymmetric form (Romano, Patterson & Candès 2019, "Conformalized quantile
 *    regression", NeurIPS, §3 and Theorem 2): each side of the moved band is scored by the signed distance
 *    of the outcome x beyond the moved median m in units of that side, (m − x)/(m − l) below and
 *    (x − m)/(u − m) above, and scaled by the empirical quantile of its own past scores at level
 *    (1 + level)/2, so each side misses at most (1 − level)/2 of the time and the band at most 1 − level.
 * Both may pool a horizon's past cells with its neighbours' at smaller weights ({@link pooledRecords}): a
 * weighted median ({@link weightedMedian}) and the weighted conformal quantile ({@link conformalQuantile};
 * Tibshirani, Barber, Candès & Ramdas 2019), so that they change smoothly from one horizon to the next.
 * Used by the backtest (each origin from the scores of earlier ones) and by the projection at the last
 * period (`simulate.ts`, from the backtest's latest scores).
 */

/** The largest factor a band's sides are scaled by (a model 10 times too narrow). */
export const MAX_FACTOR = 10;
const EPS = 1e-12;

/**
 * The sides (m − l, u − m) used to score and scale a band. A side of width 0 (its percentile equal to the
 * median, as with a state empty in most paths) takes the other side's width; when both are 0 and `alt`
 * is given (the outer band's sides, scaled by the ratio of the bands' normal quantiles), those.
 *
 * @example bandSides(0.3, 0.3, 0.5) // [0.2, 0.2]
 */
export function bandSides(m: number, l: number, u: number, alt?: readonly [number, number]): [number, number] {
  let lo = Math.max(0, m - l), hi = Math.max(0, u - m);
  if (lo <= EPS && hi <= EPS && alt) [lo, hi] = alt;
  if (lo <= EPS) lo = hi;
  if (hi <= EPS) hi = lo;
  return [lo, hi];
}

/**
 * The (unsigned) score of outcome x against a band [l, u] around its median m: (x − m)/(u − m) above m,
 * (m − x)/(m − l) below, with the sides of {@link bandSides}. An outcome off the median of a band of
 * width 0 scores 10⁶. (The recalibration uses the signed side scores of {@link sideScores}.)
 *
 * @example bandScore(0.7, 0.3, 0.2, 0.5) // 2
 */
export function bandScore(x: number, m: number, l: number, u: number, alt?: readonly [number, number]): number {
  // the score on x's own side: the larger of the two signed side scores (the other is ≤ 0)
  return Math.max(...sideScores(x, m, l, u, alt));
}

/**
 * The signed scores [below, above] of outcome x against a band [l, u] around m, with the sides of
 * {@link bandSides}: (m − x)/(m − l) and (x − m)/(u − m). The lower side scaled by c₁ holds x exactly
 * when the first is at most c₁; the upper side scaled by c₂ when the second is at most c₂. A side of
 * width 0 scores ±10⁶ (10⁶ when x is beyond m on that side, −10⁶ otherwise; 0 when x = m).
 *
 * @example sideScores(0.4, 0.3, 0.2, 0.5) // [-1, 0.5]
 */
export function sideScores(x: number, m: number, l: number, u: number, alt?: readonly [number, number]): [number, number] {
  const d = x - m;
  if (Math.abs(d) <= EPS) return [0, 0];
  const [lo, hi] = bandSides(m, l, u, alt);
  return [lo > EPS ? -d / lo : d < 0 ? 1e6 : -1e6, hi > EPS ? d / hi : d > 0 ? 1e6 : -1e6];
}

/**
 * A cell's signed error in units of its outer band's half-width, (x − m)/((u − l)/2); 0 for a band of
 * width 0 (nothing to scale by).
 *
 * @example signedError(0.4, 0.3, 0.2, 0.6) // 0.5
 */
export function signedError(x: number, m: number, l: number, u: number): number {
  const w = (u - l) / 2;
  return w > EPS ? (x - m) / w : 0;
}

/** Factors for a band's sides: [lower, upper]. */
export type SideFactors = readonly [number, number];

/**
 * The band [l, u] around m with its lower side ({@link bandSides}) scaled by c[0] and its upper side by
 * c[1], all moved by `shift`. A factor below 0 (the outcomes kept to one side of the median) puts that
 * bound past the median; should the bounds cross, both are their midpoint.
 *
 * @example widen(0.3, 0.2, 0.5, [2, 0.5]) // [0.1, 0.4]
 */
export function widen(m: number, l: number, u: number, c: number | SideFactors, alt?: readonly [number, number], shift = 0): [number, number] {
  const [lo, hi] = bandSides(m, l, u, alt);
  const [c0, c1] = typeof c === 'number' ? [c, c] : c;
  let a = m + shift - c0 * lo, b = m + shift + c1 * hi;
  if (a > b) a = b = (a + b) / 2;
  return [a, b];
}

/** The inner band's fallback sides when both of its own are 0: the outer band's, times `ratio`. */
export function innerAlt(m: number, ol: number, ou: number, ratio: number): [number, number] {
  return [Math.max(0, m - ol) * ratio, Math.max(0, ou - m) * ratio];
}

/**
 * Both bands recalibrated: [inner lo, inner hi, outer lo, outer hi] of the model around the median m,
 * moved by `shift` (the intercept correction, in the quantity's units), each band's sides scaled by its
 * factors ({@link widen}; the inner band's fallback sides from the outer's times `ratio`), the inner band
 * kept inside the outer one.
 *
 * @example recalibratedBands(0.3, [0.25, 0.35, 0.2, 0.4], [1, 1], [1.5, 1.5], 0.53) // [0.25, 0.35, 0.15, 0.45]
 */
export function recalibratedBands(m: number, model: readonly [number, number, number, number], inner: number | SideFactors, outer: number | SideFactors, ratio: number, shift = 0): [number, number, number, number] {
  const [il, iu] = widen(m, model[0], model[1], inner, innerAlt(m, model[2], model[3], ratio), shift);
  const [ol, ou] = widen(m, model[2], model[3], outer, undefined, shift);
  const a = Math.min(Math.max(il, ol), ou), b = Math.max(Math.min(iu, ou), ol);
  return a <= b ? [a, b, ol, ou] : [(a + b) / 2, (a + b) / 2, ol, ou];
}

/**
 * One past cell: the origin's number, the period its outcome was known, its state, its signed error
 * against the model's band ({@link signedError}), and the signed side scores ({@link sideScores}) of the
 * inner and outer bands as moved by that origin's own intercept correction.
 */
export interface BandScoreRecord {
  origin: number;
  known: number;
  state: number;
  error: number;
  inner: SideFactors;
  outer: SideFactors;
}

/** The records that count at an origin at period p: of earlier origins (number < `before`) whose outcome was known at p, the latest `keep` such origins. */
export function usedRecords(sc: readonly BandScoreRecord[], p: number, before: number, keep: number): BandScoreRecord[] {
  const known = sc.filter((x) => x.origin < before && x.known <= p);
  const last = known.reduce((a, x) => Math.max(a, x.origin), -1);
  return known.filter((x) => x.origin > last - keep);
}

/**
 * The intercept correction of state s at an origin: the (weighted) median of the signed errors of state s
 * among `used` ({@link usedRecords}, or pooled over horizons by {@link pooledRecords} with `weights`), in
 * units of the outer band's half-width; 0 with fewer than `min` of them.
 *
 * @example centreShift([{ state: 0, error: -1 }, { state: 0, error: -0.5 }, { state: 0, error: 2 }] as BandScoreRecord[], 0, 3) // -0.5
 */
export function centreShift(used: readonly BandScoreRecord[], s: number, min: number, weights?: readonly number[]): number {
  const e: number[] = [], w: number[] = [];
  used.forEach((x, i) => {
    if (x.state !== s) return;
    e.push(x.error);
    w.push(weights ? weights[i] : 1);
  });
  if (e.length === 0 || e.length < min) return 0;
  return weightedMedian(e, w);
}

/**
 * The weighted median of v: with the values sorted, the first whose cumulative weight reaches half the
 * total, or the midpoint of it and the next when the cumulative weight equals half exactly (so with unit
 * weights the usual median). NaN for no values.
 *
 * @example weightedMedian([3, 1, 2, 10], [0.5, 1, 1, 0.5]) // 2 (cumulative 1, 2, 2.5, 3 over 1, 2, 3, 10; half of 3 is 1.5)
 */
export function weightedMedian(v: readonly number[], w: readonly number[]): number {
  const o = v.map((_, i) => i).sort((a, b) => v[a] - v[b]);
  const half = w.reduce((a, x) => a + x, 0) / 2;
  let cum = 0;
  for (let k = 0; k < o.length; k++) {
    cum += w[o[k]];
    if (cum === half && k + 1 < o.length) return (v[o[k]] + v[o[k + 1]]) / 2;
    if (cum >= half) return v[o[k]];
  }
  return NaN;
}

/**
 * The conformal quantile of scores v with weights w at `level` (Tibshirani, Barber, Candès & Ramdas 2019,
 * "Conformal prediction under covariate shift", NeurIPS, §2 and Lemma 1: the level-quantile of the
 * weighted scores with a point mass of the new case's weight `self` at +∞): the smallest v whose
 * cumulative weight, over v sorted, reaches level·(Σw + self); the largest v when none does. With unit
 * weights, the ⌈(n + 1)·level⌉-th smallest of the usual split conformal quantile.
 *
 * @example conformalQuantile([1, 2, 3, 4], [1, 1, 0.5, 0.5], 0.6, 1) // 3 (cumulative 1, 2, 2.5, 3; 0.6 × 4 = 2.4)
 */
export function conformalQuantile(v: readonly number[], w: readonly number[], level: number, self = 1): number {
  const o = v.map((_, i) => i).sort((a, b) => v[a] - v[b]);
  const target = level * (w.reduce((a, x) => a + x, 0) + self);
  let cum = 0;
  for (const i of o) {
    cum += w[i];
    if (cum >= target) return v[i];
  }
  return v[o[o.length - 1]];
}

/**
 * The records of horizon h and its neighbours pooled for an origin at period p ({@link usedRecords} at
 * each horizon h ± d, d < weights.length, within 1 … scores.length), each with the weight weights[d] of
 * its distance (a kernel over the horizon; [1] is horizon h alone). `own` are horizon h's records, which
 * decide whether there are enough scores. Neighbouring horizons' errors, in units of their own band
 * widths, estimate the same correction where the horizon's own few would scatter; pooling them makes the
 * corrections and factors change smoothly from one horizon to the next.
 */
export function pooledRecords(scores: readonly (readonly BandScoreRecord[])[], h: number, p: number, before: number, keep: number, weights: readonly number[]): { used: BandScoreRecord[]; weight: number[]; own: BandScoreRecord[] } {
  const used: BandScoreRecord[] = [], weight: number[] = [];
  let own: BandScoreRecord[] = [];
  for (let d = -(weights.length - 1); d < weights.length; d++) {
    const hh = h + d;
    if (hh < 1 || hh > scores.length || weights[Math.abs(d)] <= 0) continue;
    const r = usedRecords(scores[hh - 1], p, before, keep);
    if (d === 0) own = r;
    for (const x of r) {
      used.push(x);
      weight.push(weights[Math.abs(d)]);
    }
  }
  return { used, weight, own };
}

/**
 * The factors by which the (moved) bands' sides are scaled at an origin, from `used`
 * ({@link usedRecords}; or pooled over horizons, {@link pooledRecords}, with `weights` and the horizon's
 * own weight `self`): for each band and side, the conformal quantile ({@link conformalQuantile}) of the
 * signed side scores at level (1 + level)/2 — with unit weights the ⌈(n + 1)·(1 + level)/2⌉-th smallest of
 * the n scores (the largest when that exceeds n) — at most {@link MAX_FACTOR}. Null when fewer than `min`
 * records.
 *
 * @example // four records whose outer lower-side scores are 0.5, 1, 2, 3: level 0.8 takes the ⌈5·0.9⌉ = 5th
 * // smallest, more than 4, so the largest: outer[0] = 3; at level 0.5 the ⌈5·0.75⌉ = 4th, also 3
 * widthFactors(used, 1, 0.5, 0.8).outer[0] // 3
 */
export function widthFactors(used: readonly BandScoreRecord[], min: number, levelInner: number, levelOuter: number, weights?: readonly number[], self = 1): { inner: [number, number]; outer: [number, number]; scores: number } | null {
  if (used.length === 0 || used.length < min) return null;
  const w = weights ?? used.map(() => 1);
  const side = (band: 'inner' | 'outer', k: 0 | 1, level: number) => Math.min(MAX_FACTOR, conformalQuantile(used.map((x) => x[band][k]), w, (1 + level) / 2, self));
  return { inner: [side('inner', 0, levelInner), side('inner', 1, levelInner)], outer: [side('outer', 0, levelOuter), side('outer', 1, levelOuter)], scores: used.length };
}

