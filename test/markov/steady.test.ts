import { describe, expect, it } from 'vitest';
import { project } from '../../src/markov/project.js';
import { steadyCounts } from '../../src/markov/steady.js';
import { MAKERSPACE_P, STATES, expectClose, expectRefusal } from './helpers.js';

describe('steadyCounts', () => {
  it('hand example: transient limits are finite, the closed class grows by the whole inflow', () => {
    // fresh → (0, .8, .2), engaged → (0, .5, .5), dormant absorbing; 100 new users a period.
    // Transient limit: fresh* = 100; engaged* = .8·100 + .5·engaged* → engaged* = 160.
    // Dormant gains .2·100 + .5·160 = 100 a period.
    const r = steadyCounts({ states: ['fresh', 'engaged', 'dormant'], matrix: [[0, 0.8, 0.2], [0, 0.5, 0.5], [0, 0, 1]] }, [100, 0, 0]);
    expect(r.kind).toBe('growing');
    expectClose(r.transient, [100, 160, null], 1e-12);
    expect(r.closed).toHaveLength(1);
    expect(r.closed[0].states).toEqual([2]);
    expectClose(r.closed[0].growthPerPeriod, 100, 1e-12);
    expect(r.sentence).toMatch(/never settle.*\{dormant\} by 100 a period/);
  });

  it('agrees with a long projection: transient counts converge, closed-class counts rise by the growth rate', () => {
    const chain = { states: STATES, matrix: MAKERSPACE_P };
    const f = [60, 0, 0, 0, 0];
    const r = steadyCounts(chain, f);
    const far = project(MAKERSPACE_P, [10, 300, 50, 80, 400], f, 400).counts;
    expectClose(far[400][0], r.transient[0] as number, 1e-9);
    const closedNow = (t: number): number => [1, 2, 3, 4].reduce((s, i) => s + far[t][i], 0);
    expectClose(closedNow(400) - closedNow(399), r.closed[0].growthPerPeriod, 1e-9);
    expectClose(r.closed[0].growthPerPeriod, 60, 1e-9);
  });

  it('with two closed classes, inflow splits by absorption probability (drunkard\'s walk B, Grinstead & Snell Example 11.14)', () => {
    const drunkard = { states: ['0', '1', '2', '3', '4'], matrix: [[1, 0, 0, 0, 0], [0.5, 0, 0.5, 0, 0], [0, 0.5, 0, 0.5, 0], [0, 0, 0.5, 0, 0.5], [0, 0, 0, 0, 1]] };
    // 100 a period into state 1: B row 1 = (3/4, 1/4).
    const r = steadyCounts(drunkard, [0, 100, 0, 0, 0]);
    expectClose(r.closed.map((c) => c.growthPerPeriod), [75, 25], 1e-9);
    // Transient limit = 100 · N row 1 = 100 · (3/2, 1, 1/2).
    expectClose(r.transient, [null, 150, 100, 50, null], 1e-9);
  });

  it('no inflow: kind no-inflow, transient states tend to 0', () => {
    const r = steadyCounts({ states: STATES, matrix: MAKERSPACE_P }, [0, 0, 0, 0, 0]);
    expect(r.kind).toBe('no-inflow');
    expect(r.transient[0]).toBe(0);
    expect(r.closed[0].growthPerPeriod).toBe(0);
  });

  it('refuses an inflow of the wrong length or with a negative count', () => {
    expectRefusal(() => steadyCounts({ states: STATES, matrix: MAKERSPACE_P }, [1, 2]), 'INPUT_INVALID', /inflow has 2 entries for 5 states/);
    expectRefusal(() => steadyCounts({ states: STATES, matrix: MAKERSPACE_P }, [1, 0, 0, -1, 0]), 'INPUT_INVALID', /inflow for 'lapsing'/);
  });
});
