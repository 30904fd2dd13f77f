import { describe, expect, it } from 'vitest';
import { estimateInflow, inflowAt } from '../../src/markov/inflow.js';
import { expectRefusal, weeks } from './helpers.js';

const labels = weeks(8);
// eight weeks of newcomers with an open-day spike in the fifth
const arrivals = [510, 530, 495, 520, 5200, 505, 515, 525];

describe('estimateInflow', () => {
  it('median (the default): the spike does not move it and is listed as an outlier', () => {
    const e = estimateInflow(arrivals, labels);
    expect(e.method).toBe('median');
    expect(e.center).toBe(517.5); // sorted middle pair 515, 520
    expect(e.outliers).toEqual([{ period: labels[4], arrivals: 5200 }]);
  });

  it('mean: the spike pulls it up; the outlier is still listed (checked against a plain mean)', () => {
    const e = estimateInflow(arrivals, labels, 'mean');
    expect(e.center).toBeCloseTo(arrivals.reduce((a, b) => a + b, 0) / 8, 12);
    expect(e.outliers.map((o) => o.period)).toEqual([labels[4]]);
  });

  it('trimmed: the 20% trimmed mean drops one value at each end (hand: mean of the middle six)', () => {
    const e = estimateInflow(arrivals, labels, 'trimmed');
    const middle = [...arrivals].sort((a, b) => a - b).slice(1, 7);
    expect(e.center).toBeCloseTo(middle.reduce((a, b) => a + b, 0) / 6, 12);
    expect(e.trimmed).toEqual([labels[2], labels[4]]); // 495 and 5200
  });

  it('trend: the Theil–Sen line through growing arrivals, extrapolated (independent brute force)', () => {
    const growing = [400, 420, 445, 460, 2000, 500, 520, 545];
    const e = estimateInflow(growing, labels, 'trend');
    const slopes: number[] = [];
    for (let i = 0; i < 8; i++) for (let j = i + 1; j < 8; j++) slopes.push((growing[j] - growing[i]) / (j - i));
    slopes.sort((a, b) => a - b);
    const slope = (slopes[13] + slopes[14]) / 2;
    const resid = growing.map((v, t) => v - slope * t).sort((a, b) => a - b);
    const intercept = (resid[3] + resid[4]) / 2;
    expect(e.slope).toBeCloseTo(slope, 12);
    expect(e.center).toBeCloseTo(intercept + slope * 7, 9);
    expect(inflowAt(e, 2)).toBeCloseTo(intercept + slope * 9, 9);
    expect(e.outliers.map((o) => o.period)).toEqual([labels[4]]);
  });

  it('the noise is at least Poisson (√center) and the center has a standard deviation > 0', () => {
    const e = estimateInflow([100, 100, 100, 100], labels.slice(0, 4));
    expect(e.noiseSd).toBeCloseTo(10, 12);
    expect(e.centerSd).toBeGreaterThan(0);
  });

  it('refuses an unknown method and no periods', () => {
    expectRefusal(() => estimateInflow([1, 2], labels.slice(0, 2), 'mode' as never), 'INPUT_INVALID', /unknown inflow method 'mode'/);
    expectRefusal(() => estimateInflow([], []), 'NOT_ENOUGH_DATA', /no periods/);
  });
});
