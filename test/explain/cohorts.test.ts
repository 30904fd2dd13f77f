import { describe, expect, it } from 'vitest';
import { TidemarkError } from '../../src/errors.js';
import { cohortRowFromUsers } from '../../src/engines/memory/cohortExt.js';
import {
  classicRetention, cohortTriangle, onOrAfterRetention, windowRetention, type CohortRowExt,
} from '../../src/explain/cohorts.js';
import { mulberry32, randInt } from '../stats/prng.js';

/** Seeded random members: each is active at age 0, then at each later age with probability p. */
function randomMembers(seed: number, count: number, lastAge: number): number[][] {
  const rand = mulberry32(seed);
  return Array.from({ length: count }, () => {
    const p = rand() * 0.7;
    const ages = [0];
    for (let a = 1; a <= lastAge; a++) if (rand() < p) ages.push(a);
    return ages;
  });
}

// Naive per-member definitions, written independently of the count tables.
const naiveOnOrAfter = (members: number[][], age: number): number => members.filter((m) => m.some((a) => a >= age)).length;
const naiveWindow = (members: number[][], from: number, to: number): number => members.filter((m) => m.some((a) => a >= from && a <= to)).length;

describe('cohortRowFromUsers', () => {
  it('builds the tables of a small cohort by hand', () => {
    // Member 1 active at 0 and 1, member 2 at 0 and 2, member 3 only at 0.
    expect(cohortRowFromUsers('2026-01-05', 2, [[0, 1], [0, 2], [0]])).toEqual({
      cohort: '2026-01-05',
      size: 3,
      active: [3, 1, 1],
      lastActiveAge: [1, 1, 1],
      windowActive: [[3, 3, 3], [1, 2], [1]],
    });
  });

  it('agrees with the per-member definitions on seeded random cohorts', () => {
    for (let seed = 1; seed <= 20; seed++) {
      const rand = mulberry32(1000 + seed);
      const lastAge = randInt(rand, 0, 12);
      const members = randomMembers(seed, randInt(rand, 1, 80), lastAge);
      const row = cohortRowFromUsers(`c${seed}`, lastAge, members);
      for (let a = 0; a <= lastAge; a++) {
        expect(row.active[a]).toBe(members.filter((m) => m.includes(a)).length);
        expect(row.lastActiveAge![a]).toBe(members.filter((m) => Math.max(...m) === a).length);
        for (let b = a; b <= lastAge; b++) expect(row.windowActive![a][b - a]).toBe(naiveWindow(members, a, b));
      }
    }
  });

  it('rejects a member not active at age 0 or active beyond lastAge', () => {
    expect(() => cohortRowFromUsers('c', 2, [[1]])).toThrow(expect.objectContaining({ code: 'INPUT_INVALID' }));
    expect(() => cohortRowFromUsers('c', 2, [[0, 3]])).toThrow(TidemarkError);
  });
});

describe('cohortTriangle', () => {
  it('gives share and n per observed age', () => {
    const [row] = cohortTriangle([{ cohort: '2026-01-05', size: 40, active: [40, 22, 18] }]);
    expect(row.cells).toEqual([
      { age: 0, n: 40, active: 40, share: 1 },
      { age: 1, n: 40, active: 22, share: 0.55 },
      { age: 2, n: 40, active: 18, share: 0.45 },
    ]);
  });

  it('has null shares for an empty cohort and [] for no cohorts', () => {
    expect(cohortTriangle([{ cohort: 'x', size: 0, active: [0, 0] }])[0].cells[1].share).toBeNull();
    expect(cohortTriangle([])).toEqual([]);
  });

  it('rejects inconsistent rows, naming the field', () => {
    expect(() => cohortTriangle([{ cohort: 'x', size: 5, active: [4] }])).toThrow(expect.objectContaining({ where: { key: 'cohorts[0].active' } }));
    expect(() => cohortTriangle([{ cohort: 'x', size: 5, active: [5, 6] }])).toThrow(TidemarkError);
    expect(() => cohortTriangle([{ cohort: 'x', size: 1, active: [1] }, { cohort: 'x', size: 1, active: [1] }])).toThrow(TidemarkError);
  });
});

describe('classicRetention', () => {
  const rows = [
    { cohort: '2026-01-05', size: 40, active: [40, 22, 18] },
    { cohort: '2026-01-12', size: 60, active: [60, 30] },
    { cohort: '2026-01-19', size: 10, active: [10] },
  ];
  it('pools cohorts that observed age N: (22 + 30)/(40 + 60) = 0.52', () => {
    const r = classicRetention(rows, 1);
    expect(r.pooled).toMatchObject({ n: 100, retained: 52, rate: 0.52, small: false });
    expect(r.notObserved).toEqual(['2026-01-19']);
    expect(r.cohorts.map((c) => c.rate)).toEqual([0.55, 0.5]);
    // Wilson 52/100 at 95%: centre (52 + 1.92)/103.84, computed from the formula.
    const z = 1.959963984540054;
    const centre = (52 + (z * z) / 2) / (100 + z * z);
    const half = (z * Math.sqrt((52 * 48) / 100 + (z * z) / 4)) / (100 + z * z);
    expect(r.pooled.lower).toBeCloseTo(centre - half, 12);
  });

  it('has a null pooled rate when no cohort is old enough', () => {
    const r = classicRetention(rows, 5);
    expect(r.pooled).toMatchObject({ n: 0, rate: null, lower: null });
    expect(r.cohorts).toEqual([]);
  });

  it('rejects a negative or fractional age', () => {
    expect(() => classicRetention(rows, -1)).toThrow(TidemarkError);
    expect(() => classicRetention(rows, 1.5)).toThrow(TidemarkError);
  });
});

describe('onOrAfterRetention and windowRetention', () => {
  const members = randomMembers(77, 150, 8);
  const full = cohortRowFromUsers('2026-02-02', 8, members);
  const { windowActive: _w, ...onlyLast } = full;
  const { lastActiveAge: _l, ...onlyWindow } = full;

  it('on-or-after matches the per-member count from either table (seeded random cohort)', () => {
    for (let N = 0; N <= 8; N++) {
      const expected = naiveOnOrAfter(members, N);
      expect(onOrAfterRetention([onlyLast], N).pooled.retained).toBe(expected);
      expect(onOrAfterRetention([onlyWindow], N).pooled.retained).toBe(expected);
    }
  });

  it('on-or-after is never below classic retention at the same age', () => {
    for (let N = 0; N <= 8; N++) expect(onOrAfterRetention([full], N).pooled.retained).toBeGreaterThanOrEqual(full.active[N]);
  });

  it('window a…b matches the per-member count (seeded random cohort)', () => {
    for (let a = 0; a <= 8; a++) for (let b = a; b <= 8; b++) {
      expect(windowRetention([onlyWindow], a, b).pooled.retained).toBe(naiveWindow(members, a, b));
    }
  });

  it('a one-age window is classic retention and a window to the last age is on-or-after, without windowActive', () => {
    const plain: CohortRowExt = { cohort: 'p', size: full.size, active: full.active };
    expect(windowRetention([plain], 3, 3).pooled.retained).toBe(full.active[3]);
    expect(windowRetention([onlyLast], 3, 8).pooled.retained).toBe(naiveOnOrAfter(members, 3));
  });

  it('throws INPUT_INVALID naming the table to fill when per-member data are missing', () => {
    const plain: CohortRowExt = { cohort: 'p', size: full.size, active: full.active };
    expect(() => onOrAfterRetention([plain], 2)).toThrow(expect.objectContaining({ code: 'INPUT_INVALID', where: { key: 'cohorts[0].lastActiveAge' } }));
    expect(() => windowRetention([onlyLast], 2, 4)).toThrow(expect.objectContaining({ where: { key: 'cohorts[0].windowActive' } }));
  });

  it('lists cohorts too young for the window', () => {
    const young = cohortRowFromUsers('2026-03-02', 2, [[0, 1], [0]]);
    const r = windowRetention([full, young], 1, 4);
    expect(r.notObserved).toEqual(['2026-03-02']);
    expect(r.cohorts).toHaveLength(1);
  });

  it('rejects from > to and tables that disagree', () => {
    expect(() => windowRetention([full], 4, 2)).toThrow(TidemarkError);
    const broken = { ...full, lastActiveAge: [...full.lastActiveAge!] };
    broken.lastActiveAge[0] += 1;
    broken.lastActiveAge[8] -= 1;
    expect(() => onOrAfterRetention([broken], 1)).toThrow(expect.objectContaining({ code: 'INPUT_INVALID' }));
  });
});
