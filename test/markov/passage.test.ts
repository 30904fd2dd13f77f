import { describe, expect, it } from 'vitest';
import { meanFirstPassage } from '../../src/markov/ergodic.js';
import { firstPassage } from '../../src/markov/passage.js';
import { MAKERSPACE_P, STATES, expectClose, expectRefusal } from './helpers.js';

const oz = { states: ['rain', 'nice', 'snow'], matrix: [[1 / 2, 1 / 4, 1 / 4], [1 / 2, 0, 1 / 2], [1 / 4, 1 / 4, 1 / 2]] };
const drunkard = {
  states: ['0', '1', '2', '3', '4'],
  matrix: [[1, 0, 0, 0, 0], [0.5, 0, 0.5, 0, 0], [0, 0.5, 0, 0.5, 0], [0, 0, 0.5, 0, 0.5], [0, 0, 0, 0, 1]],
};

describe('firstPassage: drunkard\'s walk (Grinstead & Snell, Example 11.14; values confirmed by recomputation, see published-values.md)', () => {
  const r = firstPassage(drunkard, ['0', '4']);

  it('fundamental matrix N = [[3/2,1,1/2],[1,2,1],[1/2,1,3/2]] over states 1, 2, 3', () => {
    expect(r.transient).toEqual([1, 2, 3]);
    expectClose(r.fundamental, [[1.5, 1, 0.5], [1, 2, 1], [0.5, 1, 1.5]], 1e-12);
  });

  it('expected steps to absorption t = (3, 4, 3); 0 on the targets', () => {
    expectClose(r.expected, [0, 3, 4, 3, 0], 1e-12);
  });

  it('absorption probabilities B (columns 0, 4) = [[3/4,1/4],[1/2,1/2],[1/4,3/4]]', () => {
    expectClose(r.absorption, [[0.75, 0.25], [0.5, 0.5], [0.25, 0.75]], 1e-12);
    expect(r.infinite).toEqual([]);
  });
});

describe('firstPassage: Land of Oz single targets agree with the columns of M (Grinstead & Snell §11.5)', () => {
  it('to nice: 4 from rain and from snow', () => {
    expectClose(firstPassage(oz, 'nice').expected, [4, 0, 4], 1e-12);
  });
  it('to snow: 10/3 from rain, 8/3 from nice', () => {
    expectClose(firstPassage(oz, 'snow').expected, [10 / 3, 8 / 3, 0], 1e-12);
  });
});

describe('firstPassage: infinite expectations are null with a reason', () => {
  it('a state that can never reach the target, and one that reaches it with probability < 1', () => {
    // Target 4 only: 0 is absorbing elsewhere (never reaches 4); 1, 2, 3 reach 4 with the B column above.
    const r = firstPassage(drunkard, '4');
    expect(r.expected).toEqual([null, null, null, null, 0]);
    expectClose(r.reach, [0, 0.25, 0.5, 0.75, 1], 1e-12);
    expect(r.infinite.map((x) => x.state)).toEqual([0, 1, 2, 3]);
    expect(r.infinite[0].reason).toBe("'0' can never reach {4}");
    expect(r.infinite[2].reason).toMatch(/'2' reaches \{4\} with probability 0\.5 only/);
  });

  it('lifecycle: every state reaches dormant surely, and fresh takes longer than engaged', () => {
    const r = firstPassage({ states: STATES, matrix: MAKERSPACE_P }, 'dormant');
    expect(r.infinite).toEqual([]);
    expect(r.expected.every((x) => x !== null && x >= 0)).toBe(true);
    // Hand check of the defining equations t_i = 1 + Σ_{j not target} P_ij t_j.
    const t = r.expected as number[];
    for (const i of [0, 1, 2, 3]) {
      expectClose(t[i], 1 + [0, 1, 2, 3].reduce((s, j) => s + MAKERSPACE_P[i][j] * t[j], 0), 1e-9);
    }
  });

  it('nobody moves into fresh: fresh cannot be reached from any other state', () => {
    const r = firstPassage({ states: STATES, matrix: MAKERSPACE_P }, 'fresh');
    expect(r.expected).toEqual([0, null, null, null, null]);
    expect(r.infinite.every((x) => x.reach === 0 && /can never reach \{fresh\}/.test(x.reason))).toBe(true);
  });

  it('refuses an unknown target with did-you-mean, and an empty target', () => {
    const e = expectRefusal(() => firstPassage({ states: STATES, matrix: MAKERSPACE_P }, 'dormnt'), 'INPUT_INVALID', /unknown target state 'dormnt'/);
    expect(e.hint).toMatch(/did you mean 'dormant'/);
    expectRefusal(() => firstPassage({ states: STATES, matrix: MAKERSPACE_P }, []), 'INPUT_INVALID', /at least one target/);
  });
});

describe('meanFirstPassage: Land of Oz (Grinstead & Snell, Example 11.1, §11.5; values confirmed by recomputation, see published-values.md)', () => {
  const r = meanFirstPassage(oz);

  it('M = [[0,4,10/3],[8/3,0,8/3],[10/3,4,0]]', () => {
    expectClose(r.passage, [[0, 4, 10 / 3], [8 / 3, 0, 8 / 3], [10 / 3, 4, 0]], 1e-12);
  });

  it('mean recurrence times r = (2.5, 5, 2.5)', () => {
    expectClose(r.recurrence, [2.5, 5, 2.5], 1e-12);
  });

  it('Z = (I − P + W)⁻¹ = (1/75)·[[86,3,−14],[6,63,6],[−14,3,86]] (computed)', () => {
    expectClose(r.fundamental, [[86, 3, -14], [6, 63, 6], [-14, 3, 86]].map((row) => row.map((v) => v / 75)), 1e-12);
    expectClose(r.w, [0.4, 0.2, 0.4], 1e-12);
  });

  it('works for a periodic ergodic chain: the 2-cycle takes 1 step each way and returns in 2', () => {
    const c = meanFirstPassage({ states: ['a', 'b'], matrix: [[0, 1], [1, 0]] });
    expectClose(c.passage, [[0, 1], [1, 0]], 1e-12);
    expectClose(c.recurrence, [2, 2], 1e-12);
  });

  it('refuses a chain where some state cannot reach another, naming both', () => {
    expectRefusal(() => meanFirstPassage({ states: STATES, matrix: MAKERSPACE_P }), 'MATRIX_INVALID', /'engaged' can never reach 'fresh'/);
  });
});
