/**
 * Recalibrating the projection bands' widths from past errors (split conformal prediction with a
 * normalised score; Vovk, Gammerman & Shafer 2005, *Algorithmic Learning in a Random World*, ch. 2;
 * Shafer & Vovk 2008, "A tutorial on conformal prediction", JMLR 9:371–421). A band [l, u] around the
 * paths' median m is scored against the outcome x by the distance of x from m in units of the band's side
 * on x's side; a band with both sides scaled by c holds x exactly when the score is at most c, so the
 * quantile of past scores at the band's level is the factor that would have made past bands hold that
 * share. Used by the backtest (each origin from the scores of earlier ones) and by the projection at the
 * last period (`simulate.ts`, from the backtest's latest scores).
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
 * The score of outcome x against a band [l, u] around its median m: (x − m)/(u − m) above m,
 * (m − x)/(m − l) below, with the sides of {@link bandSides}. An outcome off the median of a band of
 * width 0 scores 10⁶.
 *
 * @example bandScore(0.7, 0.3, 0.2, 0.5) // 2
 */
export function bandScore(x: number, m: number, l: number, u: number, alt?: readonly [number, number]): number {
  const d = x - m;
  if (Math.abs(d) <= EPS) return 0;
  const [lo, hi] = bandSides(m, l, u, alt);
  const w = d > 0 ? hi : lo;
  return w > EPS ? Math.abs(d) / w : 1e6;
}

/** The band [l, u] around m with each side ({@link bandSides}) scaled by c. */
export function widen(m: number, l: number, u: number, c: number, alt?: readonly [number, number]): [number, number] {
  const [lo, hi] = bandSides(m, l, u, alt);
  return [m - c * lo, m + c * hi];
}

/** The inner band's fallback sides when both of its own are 0: the outer band's, times `ratio`. */
export function innerAlt(m: number, ol: number, ou: number, ratio: number): [number, number] {
  return [Math.max(0, m - ol) * ratio, Math.max(0, ou - m) * ratio];
}

/**
 * Both bands recalibrated: [inner lo, inner hi, outer lo, outer hi] of the model around the median m,
 * each band's sides scaled by its factor ({@link widen}; the inner band's fallback sides from the outer's
 * times `ratio`), the inner band kept inside the outer one.
 *
 * @example recalibratedBands(0.3, [0.25, 0.35, 0.2, 0.4], 1, 1.5, 0.53) // [0.25, 0.35, 0.15, 0.45]
 */
export function recalibratedBands(m: number, model: readonly [number, number, number, number], inner: number, outer: number, ratio: number): [number, number, number, number] {
  const [il, iu] = widen(m, model[0], model[1], inner, innerAlt(m, model[2], model[3], ratio));
  const [ol, ou] = widen(m, model[2], model[3], outer);
  return [Math.max(il, ol), Math.min(iu, ou), ol, ou];
}

/** One past score: the origin's number, the period its outcome was known, and the inner and outer bands' scores. */
export interface BandScoreRecord {
  origin: number;
  known: number;
  inner: number;
  outer: number;
}

/**
 * The factors by which the band sides are scaled at an origin at period p: from the scores of earlier
 * origins (number < `before`) whose outcome was known at p, of the latest `keep` such origins, the
 * ⌈(n + 1)·level⌉-th smallest of the n scores (the largest when that exceeds n) for each band's level,
 * at most {@link MAX_FACTOR}. Null when fewer than `min` scores.
 *
 * @example widthFactors(scores, 30, 26, 30, 15, 0.5, 0.8) // { inner: 0.92, outer: 1.1, scores: 75 }
 */
export function widthFactors(sc: readonly BandScoreRecord[], p: number, before: number, min: number, keep: number, levelInner: number, levelOuter: number): { inner: number; outer: number; scores: number } | null {
  const known = sc.filter((x) => x.origin < before && x.known <= p);
  if (known.length === 0) return null;
  const last = known.reduce((a, x) => Math.max(a, x.origin), -1);
  const used = known.filter((x) => x.origin > last - keep);
  if (used.length < min) return null;
  const q = (v: number[], level: number) => {
    v.sort((a, b) => a - b);
    return Math.min(MAX_FACTOR, v[Math.min(v.length, Math.ceil((v.length + 1) * level)) - 1]);
  };
  return { inner: q(used.map((x) => x.inner), levelInner), outer: q(used.map((x) => x.outer), levelOuter), scores: used.length };
}
