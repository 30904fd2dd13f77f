import { describe, expect, it } from 'vitest';
import { projectionBands } from '../../src/markov/bands.js';
import { normaliseCounts } from '../../src/markov/fit.js';
import { project } from '../../src/markov/project.js';
import { STATES, expectClose, expectRefusal } from './helpers.js';

// Pooled weekly counts of the makerspace booking app (rows: fresh, engaged, returned, lapsing, dormant).
const counts = [
  [0, 110, 0, 60, 30],
  [0, 1400, 0, 400, 200],
  [0, 90, 0, 40, 20],
  [0, 0, 150, 100, 250],
  [0, 0, 80, 0, 720],
];
const start = [50, 700, 60, 180, 900];
const inflow = [50, 0, 0, 0, 0];

describe('projectionBands', () => {
  it('the same seed reproduces the output exactly; another seed differs', () => {
    const a = projectionBands(counts, start, inflow, 4, { samples: 200, seed: 42 });
    expect(projectionBands(counts, start, inflow, 4, { samples: 200, seed: 42 })).toEqual(a);
    expect(projectionBands(counts, start, inflow, 4, { samples: 200, seed: 43 }).counts).not.toEqual(a.counts);
  });

  it('defaults: 500 samples, seed 1, percentiles 10/50/90; step 0 is the start with zero width', () => {
    const b = projectionBands(counts, start, inflow, 3);
    expect([b.samples, b.seed, b.percentiles]).toEqual([500, 1, [10, 50, 90]]);
    for (const k of [0, 1, 2]) expect(b.counts[k][0]).toEqual(start);
  });

  it('the median is inside the 10–90 band and close to the point projection of the fitted matrix', () => {
    const b = projectionBands(counts, start, inflow, 6, { seed: 7 });
    const point = project(normaliseCounts(counts, STATES).matrix, start, inflow, 6);
    for (let t = 0; t <= 6; t++) {
      for (let s = 0; s < 5; s++) {
        expect(b.counts[0][t][s]).toBeLessThanOrEqual(b.counts[1][t][s]);
        expect(b.counts[1][t][s]).toBeLessThanOrEqual(b.counts[2][t][s]);
        // Posterior means are within a few percent of the fitted P for counts this large.
        expect(Math.abs(b.counts[1][t][s] - point.counts[t][s])).toBeLessThanOrEqual(0.03 * point.totals[t]);
      }
    }
    expect(b.counts[2][6][4] - b.counts[0][6][4]).toBeGreaterThan(0);
  });

  it('bands narrow as counts grow (10× the counts, narrower 10–90 width)', () => {
    const wide = projectionBands(counts, start, inflow, 4, { seed: 3 });
    const narrow = projectionBands(counts.map((r) => r.map((v) => v * 10)), start, inflow, 4, { seed: 3 });
    const width = (b: typeof wide): number => b.counts[2][4][4] - b.counts[0][4][4];
    expect(width(narrow)).toBeLessThan(width(wide) / 2);
  });

  it('deterministic rows (one observed move each) give bands of zero width equal to the projection', () => {
    const c = [[0, 5, 0], [0, 0, 9], [0, 0, 4]];
    const b = projectionBands(c, [10, 20, 30], [3, 0, 0], 3, { samples: 50 });
    const point = project(normaliseCounts(c, ['a', 'b', 'c']).matrix, [10, 20, 30], [3, 0, 0], 3);
    for (const k of [0, 1, 2]) expectClose(b.counts[k], point.counts, 1e-9);
  });

  it('an allowed mask lets an unobserved move carry posterior mass', () => {
    const c = [[0, 5, 0], [0, 0, 9], [0, 0, 4]];
    const mask = [[false, true, true], [false, true, true], [false, true, true]];
    const b = projectionBands(c, [10, 20, 30], [0, 0, 0], 1, { samples: 200, allowed: mask });
    expect(b.counts[2][1][1]).toBeGreaterThan(0); // c → b now possible
  });

  it('refuses bad options: samples, percentiles, horizon, seed', () => {
    expectRefusal(() => projectionBands(counts, start, inflow, 2, { samples: 0 }), 'INPUT_INVALID', /samples/);
    expectRefusal(() => projectionBands(counts, start, inflow, 2, { percentiles: [90, 10] }), 'INPUT_INVALID', /ascending/);
    expectRefusal(() => projectionBands(counts, start, inflow, 2, { percentiles: [10, 120] }), 'INPUT_INVALID', /\[0, 100\]/);
    expectRefusal(() => projectionBands(counts, start, inflow, 2.5), 'INPUT_INVALID', /horizon/);
    expectRefusal(() => projectionBands(counts, start, inflow, 2, { seed: -4 }), 'INPUT_INVALID', /seed/);
  });
});
