import { describe, expect, it } from 'vitest';
import { project } from '../../src/markov/project.js';
import { columnToRow } from '../../src/markov/validate.js';
import { expectClose, expectRefusal } from './helpers.js';

// How the known values were confirmed: every Grinstead & Snell, Strang and Lay value below is listed
// in test/fixtures/published-values.md, where each was recomputed independently (numpy) from
// secondary copies of the example; Lay's example numbers are from memory (marked in the test title).
describe('project: x(t+1) = x(t)·P + f', () => {
  it('a hand-computed 3-state projection with inflow (makerspace members: fresh, engaged, dormant)', () => {
    // P rows: fresh → (0, .6, .4), engaged → (0, .7, .3), dormant → (0, .2, .8); x0 = (50, 200, 100);
    // 40 new members a week arrive in fresh.
    // Step 1: fresh   = 40
    //         engaged = 50·.6 + 200·.7 + 100·.2 = 30 + 140 + 20 = 190
    //         dormant = 50·.4 + 200·.3 + 100·.8 = 20 + 60 + 80 = 160      total 390 = 350 + 40
    // Step 2: fresh   = 40
    //         engaged = 40·.6 + 190·.7 + 160·.2 = 24 + 133 + 32 = 189
    //         dormant = 40·.4 + 190·.3 + 160·.8 = 16 + 57 + 128 = 201     total 430 = 390 + 40
    const p = [[0, 0.6, 0.4], [0, 0.7, 0.3], [0, 0.2, 0.8]];
    const r = project(p, [50, 200, 100], [40, 0, 0], 2);
    expectClose(r.counts, [[50, 200, 100], [40, 190, 160], [40, 189, 201]], 1e-12);
    expectClose(r.totals, [350, 390, 430], 1e-12);
    expectClose(r.shares[2], [40 / 430, 189 / 430, 201 / 430], 1e-12);
  });

  it('Strang §10.3 Example 1 (column-stochastic, converted): u0 = (.02,.98) → u1 = (.065,.935) → u2 = (.09875,.90125)', () => {
    const p = columnToRow([[0.8, 0.05], [0.2, 0.95]]);
    const r = project(p, [0.02, 0.98], [0, 0], 2);
    expectClose(r.counts, [[0.02, 0.98], [0.065, 0.935], [0.09875, 0.90125]], 1e-12);
  });

  it('Strang §10.3 Example 3: u0 = (8,16,32) → (24,20,12) → (16,18,22) → (20,19,17)', () => {
    const p = columnToRow([[0, 0.5, 0.5], [0.5, 0, 0.5], [0.5, 0.5, 0]]);
    const r = project(p, [8, 16, 32], [0, 0, 0], 3);
    expectClose(r.counts, [[8, 16, 32], [24, 20, 12], [16, 18, 22], [20, 19, 17]], 1e-12);
    expectClose(r.totals, [56, 56, 56, 56], 1e-12);
  });

  it('horizon 0 returns the start only; an all-zero start has zero shares, not NaN', () => {
    expect(project([[1]], [5], [0], 0).counts).toEqual([[5]]);
    const r = project([[0.5, 0.5], [0, 1]], [0, 0], [0, 0], 1);
    expect(r.shares).toEqual([[0, 0], [0, 0]]);
  });

  it('does not modify the start vector', () => {
    const start = [1, 2];
    project([[0.5, 0.5], [0, 1]], start, [1, 0], 3);
    expect(start).toEqual([1, 2]);
  });

  it('refuses a bad horizon, start, inflow or matrix', () => {
    const p = [[0.5, 0.5], [0, 1]];
    expectRefusal(() => project(p, [1, 1], [0, 0], 1.5), 'INPUT_INVALID', /horizon/);
    expectRefusal(() => project(p, [1, 1], [0, 0], -1), 'INPUT_INVALID', /horizon/);
    expectRefusal(() => project(p, [1], [0, 0], 1), 'INPUT_INVALID', /start has 1 entries for 2 states/);
    expectRefusal(() => project(p, [1, 1], [0, -3], 1), 'INPUT_INVALID', /inflow for #1/);
    expectRefusal(() => project([[0.5, 0.4], [0, 1]], [1, 1], [0, 0], 1), 'MATRIX_INVALID', /row 0 sums to 0\.9/);
  });
});
