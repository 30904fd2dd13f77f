import { describe, expect, it } from 'vitest';
import { TidemarkError } from '../../src/errors.js';
import type { RetentionCell } from '../../src/flows/types.js';
import { kitagawaFromCounts } from '../../src/explain/kitagawa.js';
import { decomposeRetention, kitagawaInputs, retentionChanges, retentionRates } from '../../src/explain/retention.js';

const W1 = '2026-03-02';
const W2 = '2026-03-09';
const cell = (to: string, state: string, segment: string, n: number, retained: number): RetentionCell => ({ to, state, segment, n, retained });

describe('retentionRates', () => {
  it('gives the Wilson interval of each cell (Newcombe 1998a: 81/263 → 0.2553–0.3662)', () => {
    const [r] = retentionRates([cell(W1, 'engaged', '', 263, 81)]);
    expect(r.rate).toBeCloseTo(81 / 263, 15);
    expect(r.lower).toBeCloseTo(0.2553, 4);
    expect(r.upper).toBeCloseTo(0.3662, 4);
    expect(r.small).toBe(false);
  });

  it('returns null rate and interval with n for an empty cell, and flags small cells', () => {
    const [empty, few] = retentionRates([cell(W1, 'returned', '', 0, 0), cell(W1, 'fresh', '', 29, 1)], { minN: 30 });
    expect(empty).toMatchObject({ n: 0, rate: null, lower: null, upper: null, small: true });
    expect(few.small).toBe(true);
    // Newcombe (1998a): 1/29 → 0.0061–0.1718
    expect(few.lower).toBeCloseTo(0.0061, 4);
  });

  it('adds cells with the same key', () => {
    const rates = retentionRates([cell(W1, 'engaged', 'a', 100, 40), cell(W1, 'engaged', 'a', 63, 41)]);
    expect(rates).toHaveLength(1);
    expect(rates[0]).toMatchObject({ n: 163, retained: 81 });
  });

  it('rejects impossible cells and options', () => {
    expect(() => retentionRates([cell(W1, 'engaged', '', 5, 6)])).toThrow(expect.objectContaining({ code: 'INPUT_INVALID' }));
    expect(() => retentionRates([], { confidence: 95 })).toThrow(TidemarkError);
    expect(retentionRates([])).toEqual([]);
  });
});

describe('retentionChanges', () => {
  // p-values and BH adjustment computed with scipy 1.17.1:
  //   chi2_contingency([[x1, n1 − x1], [x2, n2 − x2]], correction=False)[1]  (= pooled z-test p)
  //   false_discovery_control(ps, method='bh')
  const cells = [
    cell(W1, 'engaged', '', 80, 48), cell(W2, 'engaged', '', 70, 56),
    cell(W1, 'fresh', '', 50, 18), cell(W2, 'fresh', '', 50, 30),
    cell(W1, 'returned', '', 200, 95), cell(W2, 'returned', '', 200, 120),
    cell(W1, 'engaged', 'veteran', 40, 20), cell(W2, 'engaged', 'veteran', 40, 21),
    cell(W1, 'fresh', 'veteran', 12, 2), cell(W2, 'fresh', 'veteran', 12, 9),
    cell(W2, 'returned', 'veteran', 15, 5),
    cell('2026-03-16', 'engaged', '', 1000, 10),
  ];
  const changes = retentionChanges(cells, { base: W1, compare: W2 });

  it('has one change per (state, segment) seen in either period', () => {
    expect(changes.map((c) => `${c.state}/${c.segment}`)).toEqual(['engaged/', 'fresh/', 'returned/', 'engaged/veteran', 'fresh/veteran', 'returned/veteran']);
  });

  it('gives Newcombe method-10 intervals (Newcombe 1998b: 56/70 − 48/80 → (.0524, .3339))', () => {
    const c = changes[0];
    expect(c.change).toBeCloseTo(0.2, 15);
    expect(c.lower).toBeCloseTo(0.0524, 4);
    expect(c.upper).toBeCloseTo(0.3339, 4);
  });

  it('gives pooled z-test p-values and BH-adjusted p across the family (scipy references)', () => {
    const p = [0.008045081368196585, 0.01630917187775496, 0.012173968206197643, 0.823008871370276, 0.004134507669588784];
    const adj = [0.020112703420491464, 0.0203864648471937, 0.020289947010329407, 0.823008871370276, 0.020112703420491464];
    changes.slice(0, 5).forEach((c, i) => {
      expect(c.p).toBeCloseTo(p[i], 14);
      expect(c.pAdjusted).toBeCloseTo(adj[i], 14);
      expect(c.significant).toBe(adj[i] <= 0.05);
    });
    expect(changes[0].z).toBeCloseTo(2.650171951258532, 12);
  });

  it('leaves a change with an empty side out of the family, with nulls and its n', () => {
    const c = changes[5];
    expect(c).toMatchObject({ change: null, lower: null, z: null, p: null, pAdjusted: null, significant: false, small: true });
    expect(c.base.n).toBe(0);
    expect(c.compare).toMatchObject({ n: 15, retained: 5 });
  });

  it('flags a change as small when either side is small', () => {
    expect(changes[4].small).toBe(true);
    expect(changes[2].small).toBe(false);
  });

  it('is empty for periods without cells', () => {
    expect(retentionChanges(cells, { base: '2025-01-06', compare: '2025-01-13' })).toEqual([]);
  });
});

describe('kitagawaInputs / decomposeRetention', () => {
  const cells = [
    cell(W1, 'engaged', 'veteran', 300, 210), cell(W1, 'engaged', 'newcomer', 100, 40),
    cell(W1, 'fresh', 'newcomer', 200, 50),
    cell(W2, 'engaged', 'veteran', 280, 190), cell(W2, 'engaged', 'newcomer', 150, 66),
    cell(W2, 'fresh', 'newcomer', 250, 70),
    cell('2026-03-16', 'fresh', 'newcomer', 999, 1),
  ];

  it('groups by state, summing segments', () => {
    expect(kitagawaInputs(cells, { base: W1, compare: W2, by: 'state' })).toEqual([
      { key: 'engaged', n0: 400, retained0: 250, n1: 430, retained1: 256 },
      { key: 'fresh', n0: 200, retained0: 50, n1: 250, retained1: 70 },
    ]);
  });

  it('groups by segment, optionally within one state', () => {
    expect(kitagawaInputs(cells, { base: W1, compare: W2, by: 'segment' })).toEqual([
      { key: 'veteran', n0: 300, retained0: 210, n1: 280, retained1: 190 },
      { key: 'newcomer', n0: 300, retained0: 90, n1: 400, retained1: 136 },
    ]);
    expect(kitagawaInputs(cells, { base: W1, compare: W2, by: 'segment', where: { state: 'engaged' } })).toEqual([
      { key: 'veteran', n0: 300, retained0: 210, n1: 280, retained1: 190 },
      { key: 'newcomer', n0: 100, retained0: 40, n1: 150, retained1: 66 },
    ]);
  });

  it('decomposes the overall change: base 300/600, compare 326/680', () => {
    const r = decomposeRetention(cells, { base: W1, compare: W2, by: 'state' });
    expect(r.base).toBeCloseTo(300 / 600, 15);
    expect(r.compare).toBeCloseTo(326 / 680, 15);
    expect(r).toEqual(kitagawaFromCounts(kitagawaInputs(cells, { base: W1, compare: W2, by: 'state' })));
  });

  it('rejects an unknown grouping', () => {
    expect(() => kitagawaInputs(cells, { base: W1, compare: W2, by: 'tenure' as 'state' })).toThrow(expect.objectContaining({ code: 'INPUT_INVALID' }));
  });
});
