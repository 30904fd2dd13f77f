import { describe, expect, it } from 'vitest';
import { cohortShapes, curveShape, groupedCurve, groupedCurves } from '../../src/explain/cohortCurve.js';
import { cohortRowFromUsers } from '../../src/engines/memory/cohortExt.js';

describe('groupedCurve', () => {
  const rows = [
    { cohort: '2026-01-05', size: 40, active: [40, 22, 18] },
    { cohort: '2026-01-12', size: 60, active: [60, 30] },
  ];
  it('adds members of cohorts that observed each age (by hand)', () => {
    expect(groupedCurve(rows)).toEqual([
      { age: 0, n: 100, active: 100, share: 1, cohorts: 2 },
      { age: 1, n: 100, active: 52, share: 0.52, cohorts: 2 },
      { age: 2, n: 40, active: 18, share: 0.45, cohorts: 1 },
    ]);
  });

  it('is the size-weighted mean of the cohorts’ shares', () => {
    const c = groupedCurve(rows)[1];
    expect(c.share).toBeCloseTo((40 * (22 / 40) + 60 * (30 / 60)) / 100, 15);
  });

  it('builds on-or-after curves from the extended rows', () => {
    // a: members at [0,1], [0,2], [0] → on-or-after(1) = 2; b: [0], [0,1] → 1.
    const a = cohortRowFromUsers('a', 2, [[0, 1], [0, 2], [0]]);
    const b = cohortRowFromUsers('b', 1, [[0], [0, 1]]);
    const curve = groupedCurve([a, b], 'onOrAfter');
    expect(curve.map((p) => [p.n, p.active])).toEqual([[5, 5], [5, 3], [3, 1]]);
  });

  it('groups cohorts by a label and is [] for no cohorts', () => {
    const g = groupedCurves(rows, (r) => r.cohort.slice(0, 7));
    expect(g).toHaveLength(1);
    expect(g[0].group).toBe('2026-01');
    expect(groupedCurve([])).toEqual([]);
  });
});

describe('curveShape', () => {
  it('reads a curve whose late slope is near zero as flattening, and says why', () => {
    // ages 0..6; k' = min(3, ⌊5/2⌋) = 2; first = (0.35 − 0.5)/2 = −7.5 pts; last = (0.318 − 0.33)/2 = −0.6 pts.
    const s = curveShape([1, 0.5, 0.4, 0.35, 0.33, 0.32, 0.318]);
    expect(s.k).toBe(2);
    expect(s.first).toBeCloseTo(-7.5, 12);
    expect(s.last).toBeCloseTo(-0.6, 12);
    // −0.6 < −0.5, but −0.6 ≥ 0.25 × −7.5: the ratio rule decides.
    expect(s.reading).toBe('flattening');
    expect(s.rule).toContain('at most 0.25 of the early one');
  });

  it('reads a steady decline as still falling', () => {
    const shares = [1, 0.6, 0.55, 0.5, 0.45, 0.4, 0.35, 0.3, 0.25];
    const s = curveShape(shares);
    expect(s.reading).toBe('still falling');
    expect(s.last).toBeCloseTo(-5, 12);
    expect(s.rule).toContain('-5.0 points a period from age 5 to 8');
  });

  it('reads a late rise as a rising tail', () => {
    const s = curveShape([1, 0.4, 0.3, 0.25, 0.24, 0.25, 0.27, 0.3]);
    expect(s.reading).toBe('rising tail');
    expect(s.last! > 0.5).toBe(true);
  });

  it('a flat tail within the threshold is flattening by the first rule', () => {
    const s = curveShape([1, 0.5, 0.3, 0.2, 0.2, 0.2, 0.2]);
    expect(s.reading).toBe('flattening');
    expect(s.rule).toContain('≥ -0.5');
  });

  it('thresholds are options', () => {
    const shares = [1, 0.5, 0.4, 0.35, 0.33, 0.32, 0.318];
    expect(curveShape(shares, { ratio: 0.01 }).reading).toBe('still falling');
    expect(curveShape(shares, { flat: 1 }).reading).toBe('flattening');
  });

  it('needs at least four ages', () => {
    expect(curveShape([1, 0.5, 0.4]).reading).toBe('too short');
    expect(curveShape([1, 0.5, 0.4, 0.3]).k).toBe(1);
  });
});

describe('cohortShapes', () => {
  it('reads each cohort and flags small ones', () => {
    const rows = [
      { cohort: 'a', size: 100, active: [100, 60, 55, 50, 45, 40, 35, 30, 25] },
      { cohort: 'b', size: 10, active: [10, 5, 4] },
      { cohort: 'c', size: 0, active: [0, 0, 0, 0, 0] },
    ];
    const s = cohortShapes(rows);
    expect(s.map((x) => [x.cohort, x.reading, x.small])).toEqual([
      ['a', 'still falling', false],
      ['b', 'too short', true],
      ['c', 'too short', true],
    ]);
  });
});
