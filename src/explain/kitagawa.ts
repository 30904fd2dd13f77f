/**
 * Symmetric Kitagawa decomposition of the difference between two weighted rates (Kitagawa 1955,
 * "Components of a difference between two rates", JASA 50:1168–1194; Preston, Heuveline & Guillot
 * 2001, Demography, §2.3). With group shares cᵢ (weights normalised to sum 1) and rates rᵢ, base 0
 * and compare 1, R = Σ cᵢrᵢ and
 *   R₁ − R₀ = Σ (r₁ᵢ − r₀ᵢ)(c₀ᵢ + c₁ᵢ)/2   [rate effect]
 *           + Σ (c₁ᵢ − c₀ᵢ)(r₀ᵢ + r₁ᵢ)/2   [mix (composition) effect],
 * with no residual: the two effects sum to the change up to float rounding.
 *
 * A group absent from one side (weight 0) has no rate there. Convention: the missing rate is taken
 * equal to the other side's rate, so the group's rate effect is 0 and its whole contribution
 * c₁r₁ − c₀r₀ is mix. A group absent from both sides contributes nothing and has null rates.
 *
 * Layer policy for `src/explain`: invalid input throws `INPUT_INVALID`; what the data cannot define
 * is null, never NaN and never a throw, and every result carries the counts it rests on so a caller
 * can grey it out. Here: if one side has total weight 0, its rate, the change and both effects are null.
 *
 * Simpson's-paradox flag: every group present on both sides (at least two groups), every group's
 * rate change of one strict sign, and the aggregate change of the opposite strict sign.
 */
import { TidemarkError } from '../errors.js';

/** One group, by weight (any non-negative scale, e.g. a count) and rate. */
export interface KitagawaGroupInput {
  key: string;
  weightBase: number;
  /** Rate in the base; may be null only when weightBase is 0. */
  rateBase: number | null;
  weightCompare: number;
  rateCompare: number | null;
}

/** One group, by counts: n₀ members of whom retained₀ stayed (base), n₁ / retained₁ (compare). */
export interface KitagawaCounts {
  key: string;
  n0: number;
  retained0: number;
  n1: number;
  retained1: number;
}

export interface KitagawaGroupResult {
  key: string;
  /** Raw weights as given (counts for the counts form). */
  totalBase: number;
  totalCompare: number;
  /** Shares of the side's total weight (0 when the side is empty). */
  weightBase: number;
  weightCompare: number;
  rateBase: number | null;
  rateCompare: number | null;
  /** Null when either side as a whole is empty. */
  rateEffect: number | null;
  mixEffect: number | null;
}

export interface KitagawaResult {
  totalBase: number;
  totalCompare: number;
  /** Aggregate rates Σ cᵢrᵢ; null for an empty side. */
  base: number | null;
  compare: number | null;
  change: number | null;
  rateEffect: number | null;
  mixEffect: number | null;
  simpson: boolean;
  groups: KitagawaGroupResult[];
}

function checkGroups(groups: readonly KitagawaGroupInput[]): void {
  const seen = new Set<string>();
  groups.forEach((g, i) => {
    if (seen.has(g.key)) throw new TidemarkError('INPUT_INVALID', `kitagawa: group '${g.key}' appears twice`, { key: `groups[${i}].key` });
    seen.add(g.key);
    for (const side of ['Base', 'Compare'] as const) {
      const w = g[`weight${side}`];
      const r = g[`rate${side}`];
      if (!(Number.isFinite(w) && w >= 0)) {
        throw new TidemarkError('INPUT_INVALID', `kitagawa: weight${side} of '${g.key}' must be a finite number ≥ 0, got ${w}`, { key: `groups[${i}].weight${side}` });
      }
      if (w > 0 && !(typeof r === 'number' && Number.isFinite(r))) {
        throw new TidemarkError('INPUT_INVALID', `kitagawa: rate${side} of '${g.key}' must be a finite number when its weight is positive, got ${r}`, { key: `groups[${i}].rate${side}` });
      }
    }
  });
}

/**
 * Symmetric Kitagawa decomposition from weights and rates.
 *
 * @throws {TidemarkError} INPUT_INVALID for a duplicate key, a negative or non-finite weight, or a
 *   missing rate where the weight is positive.
 * @example kitagawa([{ key: 'a', weightBase: 1, rateBase: 0.5, weightCompare: 3, rateCompare: 0.6 },
 *                    { key: 'b', weightBase: 1, rateBase: 0.3, weightCompare: 1, rateCompare: 0.3 }])
 *   // base 0.4, compare 0.525: change 0.125 = rateEffect 0.0625 + mixEffect 0.0625
 */
export function kitagawa(groups: readonly KitagawaGroupInput[]): KitagawaResult {
  checkGroups(groups);
  const totalBase = groups.reduce((s, g) => s + g.weightBase, 0);
  const totalCompare = groups.reduce((s, g) => s + g.weightCompare, 0);
  const defined = totalBase > 0 && totalCompare > 0;
  let base = 0;
  let compare = 0;
  let rateEffect = 0;
  let mixEffect = 0;
  const out: KitagawaGroupResult[] = groups.map((g) => {
    const c0 = totalBase > 0 ? g.weightBase / totalBase : 0;
    const c1 = totalCompare > 0 ? g.weightCompare / totalCompare : 0;
    const rateBase = g.weightBase > 0 ? g.rateBase : null;
    const rateCompare = g.weightCompare > 0 ? g.rateCompare : null;
    const r0 = rateBase ?? rateCompare ?? 0;
    const r1 = rateCompare ?? rateBase ?? 0;
    const re = ((r1 - r0) * (c0 + c1)) / 2;
    const me = ((c1 - c0) * (r0 + r1)) / 2;
    base += c0 * r0;
    compare += c1 * r1;
    rateEffect += re;
    mixEffect += me;
    return {
      key: g.key, totalBase: g.weightBase, totalCompare: g.weightCompare, weightBase: c0, weightCompare: c1,
      rateBase, rateCompare, rateEffect: defined ? re : null, mixEffect: defined ? me : null,
    };
  });
  const change = compare - base;
  const changes = out.map((g) => (g.rateBase !== null && g.rateCompare !== null ? g.rateCompare - g.rateBase : null));
  const allPresent = out.length >= 2 && changes.every((d) => d !== null);
  const simpson =
    defined && allPresent && change !== 0 &&
    changes.every((d) => d !== null && d !== 0 && Math.sign(d) === -Math.sign(change));
  return {
    totalBase, totalCompare,
    base: totalBase > 0 ? base : null,
    compare: totalCompare > 0 ? compare : null,
    change: defined ? change : null,
    rateEffect: defined ? rateEffect : null,
    mixEffect: defined ? mixEffect : null,
    simpson,
    groups: out,
  };
}

/**
 * Symmetric Kitagawa decomposition from counts: weights are n₀, n₁ and rates retained/n.
 *
 * @throws {TidemarkError} INPUT_INVALID for a duplicate key or counts that are negative,
 *   non-finite, or with retained > n.
 * @example kitagawaFromCounts(berkeleyMenThenWomen) // change −0.141645 = rate +0.036028 + mix −0.177674 (Bickel et al. 1975)
 */
export function kitagawaFromCounts(groups: readonly KitagawaCounts[]): KitagawaResult {
  return kitagawa(
    groups.map((g, i) => {
      for (const [n, x, side] of [[g.n0, g.retained0, '0'], [g.n1, g.retained1, '1']] as const) {
        if (!(Number.isFinite(n) && n >= 0 && Number.isFinite(x) && x >= 0 && x <= n)) {
          throw new TidemarkError('INPUT_INVALID', `kitagawa: group '${g.key}' needs 0 ≤ retained${side} ≤ n${side}, got ${x} of ${n}`, { key: `groups[${i}]` });
        }
      }
      return {
        key: g.key,
        weightBase: g.n0,
        rateBase: g.n0 > 0 ? g.retained0 / g.n0 : null,
        weightCompare: g.n1,
        rateCompare: g.n1 > 0 ? g.retained1 / g.n1 : null,
      };
    }),
  );
}
