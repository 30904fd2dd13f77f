import { describe, expect, it } from 'vitest';
import type { WaistTables } from '../../src/flows/types.js';
import { computeProjection } from '../../src/markov/run.js';
import { POOLED } from '../../src/markov/segments.js';
import { MAKERSPACE_P, exactTables, expectClose } from './helpers.js';

// Two channels of the makerspace with their own chains, and a tiny third one
const P2 = [[0, 0.7, 0, 0.2, 0.1], [0, 0.8, 0, 0.15, 0.05], [0, 0.7, 0, 0.2, 0.1], [0, 0, 0.4, 0.2, 0.4], [0, 0, 0.15, 0, 0.85]];
const segs = {
  referral: exactTables([MAKERSPACE_P], [40, 900, 60, 120, 300], [50, 70, 60, 40, 55, 65, 45, 60]),
  newsletter: exactTables([P2], [20, 500, 30, 80, 200], [30, 35, 25, 40, 30, 20, 35, 30]),
  flyer: exactTables([P2], [1, 5, 1, 2, 3], [1, 0, 2, 1, 0, 1, 1, 0]),
};
const add = (a: number[][], b: number[][]) => a.map((r, i) => r.map((v, j) => v + b[i][j]));
const all = Object.values(segs);
const tables: WaistTables = {
  ...segs.referral,
  stateCounts: segs.referral.stateCounts.map((_, t) => all.reduce((acc, s) => acc.map((v, j) => v + s.stateCounts[t][j]), [0, 0, 0, 0, 0])),
  transitions: segs.referral.transitions.map((t, k) => ({ ...t, fresh: all.reduce((a, s) => a + s.transitions[k].fresh, 0), counts: all.slice(1).reduce((acc, s) => add(acc, s.transitions[k].counts), t.counts) })),
  segmentTransitions: { by: 'channel', segments: Object.entries(segs).map(([segment, s]) => ({ segment, stateCounts: s.stateCounts, transitions: s.transitions })) },
};
const median = (v: number[]) => { const s = [...v].sort((a, b) => a - b); return (s[3] + s[4]) / 2; };

/** x(t+1) = x(t)·P + f: a plain loop, with P the row-normalised pooled counts of `t`'s transitions. */
function ownProjection(t: WaistTables, H: number): number[][] {
  const pooled = t.transitions.reduce((acc, tr) => add(acc, tr.counts), t.transitions[0].counts.map((r) => r.map(() => 0)));
  const P = pooled.map((r, i) => { const s = r.reduce((a, b) => a + b, 0); return s > 0 ? r.map((v) => v / s) : r.map((_, j) => (i === j ? 1 : 0)); });
  const f = median(t.transitions.map((tr) => tr.fresh));
  const out = [t.stateCounts[t.stateCounts.length - 1]];
  for (let h = 1; h <= H; h++) out.push(P[0].map((_, j) => out[h - 1].reduce((a, xi, i) => a + xi * P[i][j], 0) + (j === 0 ? f : 0)));
  return out;
}

describe('project by segment against an independent computation', () => {
  const p = computeProjection({ tables }, { horizon: 4, samples: 60, seed: 1, band: [10, 90], backtest: false, fit: 'all', minSegment: 30 });
  const seg = p.segments!;
  const counts = (steps: typeof p.projection, t: number) => p.states.map((s) => steps[t].counts[s]);

  it('each segment large enough is projected from its own flows (pooled counts, median inflow)', () => {
    expect(seg.groups.map((g) => g.segment)).toEqual(['referral', 'newsletter', POOLED]);
    for (const name of ['referral', 'newsletter'] as const) {
      const g = seg.groups.find((x) => x.segment === name)!;
      const expected = ownProjection(segs[name], 4);
      for (let t = 0; t <= 4; t++) expectClose(counts(g.projection, t), expected[t], 1e-9);
      expect(g.ownRates).toBe(true);
    }
  });

  it('a segment too small to fit is pooled, and the output says which and why', () => {
    expect(seg.pooled).toEqual([{ segment: 'flyer', reason: expect.stringMatching(/^\d+(\.\d)? users left returned over the fit window, fewer than 30$/) }]);
    expect(seg.groups[2].members).toEqual(['flyer']);
    expect(p.warnings.some((w) => /'flyer'.* pooled/.test(w))).toBe(true);
    // alone it is still too small, so it uses every user's rates with its own start and inflow
    expect(seg.groups[2].ownRates).toBe(false);
    const pooledAll = tables.transitions.reduce((acc, tr) => add(acc, tr.counts), tables.transitions[0].counts.map((r) => r.map(() => 0)));
    const P = pooledAll.map((r) => r.map((v) => v / r.reduce((a, b) => a + b, 0)));
    const f = median(segs.flyer.transitions.map((tr) => tr.fresh));
    let x = segs.flyer.stateCounts[8];
    for (let h = 1; h <= 4; h++) x = P[0].map((_, j) => x.reduce((a, xi, i) => a + xi * P[i][j], 0) + (j === 0 ? f : 0));
    expectClose(counts(seg.groups[2].projection, 4), x, 1e-9);
  });

  it('the sum is the sum of the groups, and its band comes from the summed paths', () => {
    for (let t = 0; t <= 4; t++) expectClose(counts(seg.sum, t), seg.groups.reduce((acc, g) => acc.map((v, j) => v + counts(g.projection, t)[j]), [0, 0, 0, 0, 0]), 1e-9);
    const e = seg.sum[4];
    for (const s of p.states) expect(e.bands!.counts[s][0]).toBeLessThanOrEqual(e.bands!.counts[s][1]);
    expect(seg.sum[0].total).toBe(tables.stateCounts[8].reduce((a, b) => a + b, 0));
  });
});
