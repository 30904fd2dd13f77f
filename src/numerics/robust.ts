/**
 * Robust summaries of a short series (a handful of periods): median, trimmed mean, the median
 * absolute deviation, outliers by the modified z-score, and the Theil–Sen line.
 */

/**
 * The sample median (the mean of the two middle values for an even count); NaN for no values.
 * @example median([3, 1, 4, 1]) // 2
 */
export function median(values: readonly number[]): number {
  if (values.length === 0) return Number.NaN;
  const s = [...values].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}

/**
 * The γ-trimmed mean: sort, drop g = ⌊γ·n⌋ values at each end, average the rest (Tukey & McLaughlin
 * 1963; 20% trimming as recommended by Wilcox, *Introduction to Robust Estimation and Hypothesis
 * Testing*, 3rd ed. 2012, §3.3). NaN for no values.
 * @example trimmedMean([1, 2, 3, 4, 100], 0.2) // g = 1: mean of 2, 3, 4 = 3
 */
export function trimmedMean(values: readonly number[], trim = 0.2): number {
  if (values.length === 0) return Number.NaN;
  const s = [...values].sort((a, b) => a - b);
  const g = Math.floor(trim * s.length);
  const kept = s.slice(g, s.length - g);
  return kept.reduce((a, b) => a + b, 0) / kept.length;
}

/** The values a γ-trimmed mean drops, as indices into `values` (lowest and highest g). */
export function trimmedIndices(values: readonly number[], trim = 0.2): number[] {
  const order = values.map((_, i) => i).sort((a, b) => values[a] - values[b] || a - b);
  const g = Math.floor(trim * values.length);
  return g === 0 ? [] : [...order.slice(0, g), ...order.slice(order.length - g)].sort((a, b) => a - b);
}

/**
 * The median absolute deviation from `center` (default: the median), unscaled. Multiply by 1.4826 for
 * a consistent estimate of a normal standard deviation (Rousseeuw & Croux 1993, JASA 88:1273–1283).
 * @example mad([1, 2, 3, 4, 100]) // median 3, deviations 2, 1, 0, 1, 97 → 1
 */
export function mad(values: readonly number[], center = median(values)): number {
  return median(values.map((v) => Math.abs(v - center)));
}

/**
 * Indices of outliers by the modified z-score M = 0.6745·(x − center)/MAD, |M| > 3.5 (Iglewicz &
 * Hoaglin 1993, *How to Detect and Handle Outliers*, ASQC). `residuals` are deviations from the
 * method's own center (the median, or a fitted line). `minMad` floors the MAD (a known noise level,
 * so that near-identical values do not make ordinary ones outliers); with MAD = 0 every value off the
 * center is an outlier.
 * @example modifiedZOutliers([0, 1, -1, 0, 2, -2, 40]) // [6]
 */
export function modifiedZOutliers(residuals: readonly number[], minMad = 0): number[] {
  const m = median(residuals);
  const d = Math.max(minMad, mad(residuals, m));
  return residuals.map((r, i) => [r, i] as const).filter(([r]) => (d > 0 ? (0.6745 * Math.abs(r - m)) / d > 3.5 : r !== m)).map(([, i]) => i);
}

/**
 * The Theil–Sen line: slope = median of the pairwise slopes (y_j − y_i)/(x_j − x_i) over i < j with
 * x_i ≠ x_j (Sen 1968, JASA 63:1379–1389), intercept = median of y − slope·x.
 * @example theilSen([0, 1, 2, 3, 4], [1, 3, 5, 7, 40]) // { slope: 2, intercept: 1 }: the last point does not tilt it
 */
export function theilSen(x: readonly number[], y: readonly number[]): { slope: number; intercept: number } {
  const slopes: number[] = [];
  for (let i = 0; i < x.length; i++) for (let j = i + 1; j < x.length; j++) if (x[j] !== x[i]) slopes.push((y[j] - y[i]) / (x[j] - x[i]));
  const slope = slopes.length ? median(slopes) : 0;
  return { slope, intercept: median(y.map((v, i) => v - slope * x[i])) };
}
