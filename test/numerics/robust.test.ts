import { describe, expect, it } from 'vitest';
import { mad, median, modifiedZOutliers, theilSen, trimmedIndices, trimmedMean } from '../../src/numerics/robust.js';

describe('median, trimmed mean, MAD (hand-computed values)', () => {
  it('median of odd and even counts; NaN for none', () => {
    expect(median([3, 1, 2])).toBe(2);
    expect(median([3, 1, 4, 1])).toBe(2);
    expect(median([])).toBeNaN();
  });

  it('20% trimmed mean drops ⌊0.2·n⌋ values at each end (Wilcox 2012, §3.3)', () => {
    expect(trimmedMean([1, 2, 3, 4, 100])).toBe(3); // g = 1: (2 + 3 + 4)/3
    expect(trimmedMean([5, 1, 9, 3])).toBe(4.5); // g = 0: the plain mean
    expect(trimmedMean([10, 1, 2, 3, 4, 5, 6, 7, 8, 9])).toBe(5.5); // g = 2: mean of 3…8
    expect(trimmedIndices([1, 2, 3, 4, 100])).toEqual([0, 4]);
  });

  it('MAD: the median of absolute deviations from the median', () => {
    expect(mad([1, 2, 3, 4, 100])).toBe(1); // deviations 2, 1, 0, 1, 97
    expect(mad([2, 2, 2])).toBe(0);
  });
});

describe('modifiedZOutliers (Iglewicz & Hoaglin 1993: |0.6745·(x − median)/MAD| > 3.5)', () => {
  it('flags a spike and nothing else; hand check: median 10, MAD 1, M(60) = 0.6745·50 = 33.7', () => {
    expect(modifiedZOutliers([10, 11, 9, 10, 12, 10, 60])).toEqual([6]);
  });
  it('the threshold: M = 3.5 exactly is kept, just above is flagged', () => {
    // median 0, MAD 1: x = 3.5/0.6745 ≈ 5.189 is on the threshold
    expect(modifiedZOutliers([-1, 0, 1, 0, -1, 1, 5.18])).toEqual([]);
    expect(modifiedZOutliers([-1, 0, 1, 0, -1, 1, 5.2])).toEqual([6]);
  });
  it('with MAD 0 every value off the median is an outlier', () => {
    expect(modifiedZOutliers([4, 4, 4, 4, 9])).toEqual([4]);
  });
});

describe('theilSen (Sen 1968)', () => {
  it('a line with one wild point keeps the slope of the others (hand: 6 of 10 pairwise slopes are 2)', () => {
    expect(theilSen([0, 1, 2, 3, 4], [1, 3, 5, 7, 40])).toEqual({ slope: 2, intercept: 1 });
  });
  it('agrees with a brute-force median of pairwise slopes written here', () => {
    const x = [0, 1, 2, 3, 4, 5, 6, 7];
    const y = [500, 520, 515, 560, 3000, 570, 600, 590];
    const slopes: number[] = [];
    for (let i = 0; i < x.length; i++) for (let j = i + 1; j < x.length; j++) slopes.push((y[j] - y[i]) / (x[j] - x[i]));
    slopes.sort((a, b) => a - b);
    const slope = (slopes[13] + slopes[14]) / 2; // 28 slopes: the mean of the 14th and 15th
    const resid = y.map((v, i) => v - slope * x[i]).sort((a, b) => a - b);
    expect(theilSen(x, y).slope).toBeCloseTo(slope, 12);
    expect(theilSen(x, y).intercept).toBeCloseTo((resid[3] + resid[4]) / 2, 12);
  });
});
