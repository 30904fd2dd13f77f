import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { TidemarkError } from '../../src/errors.js';
import { kitagawa, kitagawaFromCounts, type KitagawaCounts } from '../../src/explain/kitagawa.js';

// Bickel, Hammel & O'Connell (1975), Science 187:398–403, six departments (R's UCBAdmissions):
// admitted/rejected for men then women. Base = men, compare = women.
const UCB: [string, number, number, number, number][] = [
  ['A', 512, 313, 89, 19],
  ['B', 353, 207, 17, 8],
  ['C', 120, 205, 202, 391],
  ['D', 138, 279, 131, 244],
  ['E', 53, 138, 94, 299],
  ['F', 22, 351, 24, 317],
];
const berkeley: KitagawaCounts[] = UCB.map(([key, ma, mr, wa, wr]) => ({ key, n0: ma + mr, retained0: ma, n1: wa + wr, retained1: wa }));

// Preston, Heuveline & Guillot (2001), Demography, Table 2.1: mid-year population / deaths by age
// (0, 1–4, 5–9, …, 80–84, 85+), as listed in test/fixtures/published-values.md.
const KAZ = [[174078, 3720], [754758, 1220], [879129, 396], [808510, 298], [720161, 561], [622988, 673], [733057, 752], [732312, 965], [612825, 1113], [487996, 1405], [284799, 1226], [503608, 2878], [301879, 3266], [374317, 5212], [256247, 6866], [154623, 6182], [149917, 8199], [88716, 9013], [58940, 10627]];
const SWE = [[59727, 279], [229775, 42], [245172, 31], [240110, 33], [264957, 61], [287176, 87], [311111, 98], [280991, 140], [286899, 197], [308238, 362], [320172, 643], [242230, 738], [210785, 972], [216058, 1640], [224479, 2752], [222578, 4509], [184102, 6745], [140667, 9587], [110242, 17340]];

describe('kitagawaFromCounts — published decompositions', () => {
  it('Bickel et al. (1975): women − men = −0.141645 = rate +0.036028 + composition −0.177674 (published-values.md, recomputed with numpy)', () => {
    const r = kitagawaFromCounts(berkeley);
    expect(r.base).toBeCloseTo(1198 / 2691, 12);
    expect(r.compare).toBeCloseTo(557 / 1835, 12);
    expect(r.change).toBeCloseTo(-0.141645, 6);
    expect(r.rateEffect).toBeCloseTo(0.036028, 6);
    expect(r.mixEffect).toBeCloseTo(-0.177674, 6);
    // Per-department admission rates from the table.
    const a = r.groups.find((g) => g.key === 'A')!;
    expect(a.rateBase).toBeCloseTo(512 / 825, 12);
    expect(a.rateCompare).toBeCloseTo(89 / 108, 12);
    expect(r.groups.find((g) => g.key === 'F')!.rateCompare).toBeCloseTo(24 / 341, 12);
    // Department C's women are admitted less often than its men, so not every department reverses.
    expect(r.simpson).toBe(false);
  });

  it('Preston et al. (2001) Table 2.1: Sweden − Kazakhstan CDR 3.124519 = composition +7.632422 + rates −4.507903 per 1000', () => {
    const groups = KAZ.map(([pk, dk], i) => ({ key: `age${i}`, n0: pk, retained0: dk, n1: SWE[i][0], retained1: SWE[i][1] }));
    const r = kitagawaFromCounts(groups);
    expect(r.base! * 1000).toBeCloseTo(7.423042, 6);
    expect(r.compare! * 1000).toBeCloseTo(10.547561, 6);
    expect(r.change! * 1000).toBeCloseTo(3.124519, 6);
    expect(r.mixEffect! * 1000).toBeCloseTo(7.632422, 6);
    expect(r.rateEffect! * 1000).toBeCloseTo(-4.507903, 6);
  });
});

describe('kitagawa — conventions', () => {
  it('a small case by hand: shares .5/.5 → .75/.25, rates .5→.6 and .3→.3', () => {
    // rate effect = (.6 − .5)(.5 + .75)/2 = .0625; mix = (.25)(1.1)/2 + (−.25)(.6)/2 = .0625
    const r = kitagawa([
      { key: 'a', weightBase: 1, rateBase: 0.5, weightCompare: 3, rateCompare: 0.6 },
      { key: 'b', weightBase: 1, rateBase: 0.3, weightCompare: 1, rateCompare: 0.3 },
    ]);
    expect(r.base).toBeCloseTo(0.4, 15);
    expect(r.compare).toBeCloseTo(0.525, 15);
    expect(r.rateEffect).toBeCloseTo(0.0625, 15);
    expect(r.mixEffect).toBeCloseTo(0.0625, 15);
  });

  it('a group absent from the base has a null base rate, no rate effect, and all its contribution as mix', () => {
    const r = kitagawaFromCounts([
      { key: 'regular', n0: 100, retained0: 60, n1: 100, retained1: 60 },
      { key: 'new', n0: 0, retained0: 0, n1: 100, retained1: 20 },
    ]);
    const g = r.groups.find((x) => x.key === 'new')!;
    expect(g.rateBase).toBeNull();
    expect(g.rateEffect).toBe(0);
    // c1·r1 − c0·r0 = 0.5 × 0.2 − 0 = 0.1
    expect(g.mixEffect).toBeCloseTo(0.1, 15);
    expect(r.change).toBeCloseTo(0.4 - 0.6, 15);
    expect(r.rateEffect! + r.mixEffect!).toBeCloseTo(r.change!, 15);
    expect(r.simpson).toBe(false);
  });

  it('a group absent from both sides contributes nothing', () => {
    const r = kitagawaFromCounts([
      { key: 'a', n0: 10, retained0: 5, n1: 10, retained1: 6 },
      { key: 'ghost', n0: 0, retained0: 0, n1: 0, retained1: 0 },
    ]);
    const g = r.groups[1];
    expect(g).toMatchObject({ rateBase: null, rateCompare: null, rateEffect: 0, mixEffect: 0 });
    expect(r.change).toBeCloseTo(0.1, 15);
  });

  it('an empty side gives null rates, change and effects, with the totals kept', () => {
    const r = kitagawaFromCounts([{ key: 'a', n0: 0, retained0: 0, n1: 10, retained1: 4 }]);
    expect(r).toMatchObject({ totalBase: 0, totalCompare: 10, base: null, change: null, rateEffect: null, mixEffect: null, simpson: false });
    expect(r.compare).toBeCloseTo(0.4, 15);
    expect(r.groups[0].rateEffect).toBeNull();
    expect(kitagawaFromCounts([]).change).toBeNull();
  });

  it("flags Simpson's paradox when every group rises and the aggregate falls", () => {
    // Each group's rate rises by 0.05, but the mix moves to the low-rate group.
    const r = kitagawaFromCounts([
      { key: 'high', n0: 90, retained0: 72, n1: 10, retained1: 8.5 },
      { key: 'low', n0: 10, retained0: 2, n1: 90, retained1: 22.5 },
    ]);
    expect(r.change!).toBeLessThan(0);
    expect(r.simpson).toBe(true);
  });

  it('does not flag when a group rate is unchanged', () => {
    const r = kitagawaFromCounts([
      { key: 'high', n0: 90, retained0: 72, n1: 10, retained1: 8 },
      { key: 'low', n0: 10, retained0: 2, n1: 90, retained1: 22.5 },
    ]);
    expect(r.simpson).toBe(false);
  });

  it('rejects duplicates, bad counts and missing rates', () => {
    expect(() => kitagawaFromCounts([{ key: 'a', n0: 1, retained0: 1, n1: 1, retained1: 1 }, { key: 'a', n0: 1, retained0: 1, n1: 1, retained1: 1 }])).toThrow(TidemarkError);
    expect(() => kitagawaFromCounts([{ key: 'a', n0: 1, retained0: 2, n1: 1, retained1: 1 }])).toThrow(expect.objectContaining({ code: 'INPUT_INVALID' }));
    expect(() => kitagawa([{ key: 'a', weightBase: 2, rateBase: null, weightCompare: 1, rateCompare: 0.5 }])).toThrow(expect.objectContaining({ code: 'INPUT_INVALID' }));
    expect(() => kitagawa([{ key: 'a', weightBase: -1, rateBase: 0.1, weightCompare: 1, rateCompare: 0.5 }])).toThrow(TidemarkError);
  });
});

describe('kitagawa — properties (seeded)', () => {
  const group = fc.record({
    n0: fc.integer({ min: 0, max: 5000 }),
    f0: fc.double({ min: 0, max: 1, noNaN: true }),
    n1: fc.integer({ min: 0, max: 5000 }),
    f1: fc.double({ min: 0, max: 1, noNaN: true }),
  });
  const groups = fc.array(group, { minLength: 1, maxLength: 8 }).map((gs) =>
    gs.map((g, i) => ({ key: `g${i}`, n0: g.n0, retained0: Math.round(g.f0 * g.n0), n1: g.n1, retained1: Math.round(g.f1 * g.n1) })),
  );

  it('rate + mix = change to 1e-12, and per-group effects add up to the totals', () => {
    fc.assert(
      fc.property(groups, (gs) => {
        const r = kitagawaFromCounts(gs);
        if (r.change === null) return;
        expect(Math.abs(r.rateEffect! + r.mixEffect! - r.change)).toBeLessThan(1e-12);
        const sumRate = r.groups.reduce((s, g) => s + g.rateEffect!, 0);
        expect(Math.abs(sumRate - r.rateEffect!)).toBeLessThan(1e-12);
      }),
      { seed: 1955, numRuns: 500 },
    );
  });

  it('swapping base and compare negates both effects', () => {
    fc.assert(
      fc.property(groups, (gs) => {
        const a = kitagawaFromCounts(gs);
        const b = kitagawaFromCounts(gs.map((g) => ({ key: g.key, n0: g.n1, retained0: g.retained1, n1: g.n0, retained1: g.retained0 })));
        if (a.change === null) return expect(b.change).toBeNull();
        expect(b.rateEffect!).toBeCloseTo(-a.rateEffect!, 12);
        expect(b.mixEffect!).toBeCloseTo(-a.mixEffect!, 12);
      }),
      { seed: 1956, numRuns: 500 },
    );
  });

  it('an unchanged mix (compare counts a multiple of the base counts) gives exactly zero mix effect', () => {
    fc.assert(
      fc.property(groups, fc.integer({ min: 1, max: 9 }), (gs, k) => {
        const same = gs.map((g) => ({ ...g, n0: g.n0 + 1, retained0: Math.min(g.retained0, g.n0 + 1), n1: k * (g.n0 + 1), retained1: Math.min(g.retained1, k * (g.n0 + 1)) }));
        const r = kitagawaFromCounts(same);
        for (const g of r.groups) expect(g.mixEffect).toBe(0);
        expect(r.mixEffect).toBe(0);
      }),
      { seed: 1957, numRuns: 300 },
    );
  });
});
