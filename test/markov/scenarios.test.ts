import { describe, expect, it } from 'vitest';
import { lifecycleMoves } from '../../src/lifecycle/moves.js';
import { computeProjection } from '../../src/markov/run.js';
import { parseNamedScenario } from '../../src/markov/scenario.js';
import { MAKERSPACE_P, exactTables, expectClose, expectRefusal } from './helpers.js';

const start = [40, 900, 60, 120, 300];
const fresh = [50, 70, 60, 40, 55, 65, 45, 60]; // median 57.5
const tables = exactTables([MAKERSPACE_P], start, fresh);
const base = { horizon: 3, samples: 60, seed: 1, band: [10, 90] as [number, number], backtest: false, fit: 'all' };

/** x(t+1) = x(t)·P + f(t + 1), a plain loop written for the test. */
function loop(P: number[][], x0: number[], f: (t: number) => number[], H: number): number[][] {
  const out = [x0];
  for (let t = 1; t <= H; t++) out.push(P[0].map((_, j) => out[t - 1].reduce((a, xi, i) => a + xi * P[i][j], 0) + f(t)[j]));
  return out;
}
const inflow = (n: number) => () => [n, 0, 0, 0, 0];

describe('named scenarios against an independent computation', () => {
  const x0 = tables.stateCounts[tables.stateCounts.length - 1];
  const baseline = loop(MAKERSPACE_P, x0, inflow(57.5), 3);

  it('lapsing->dormant*0.8: the row is reweighted (0.5 → 0.4, the rest 0.3 : 0.2 fills 0.6) and projected', () => {
    const p = computeProjection({ tables }, { ...base, scenarios: ['keep=lapsing->dormant*0.8'] });
    const P = MAKERSPACE_P.map((r) => r.slice());
    P[3] = [0, 0, 0.36, 0.24, 0.4];
    const expected = loop(P, x0, inflow(57.5), 3);
    const s = p.scenarios![0];
    expect(s.name).toBe('keep');
    expectClose(p.states.map((st) => s.atHorizon.counts[st].value), expected[3], 1e-9);
    expectClose(p.states.map((st) => s.atHorizon.difference[st].value), expected[3].map((v, j) => v - baseline[3][j]), 1e-9);
    expectClose(s.steps.map((st) => st.active!.value), expected.map((x) => x[0] + x[1] + x[2]), 1e-9);
  });

  it('inflow*1.2 and a campaign "+300 fresh at +2" (the baseline plus 20% of inflow, and 300 at step 2)', () => {
    const p = computeProjection({ tables }, { ...base, scenarios: ['more=inflow*1.2', 'launch=+300 fresh at +2'] });
    const more = loop(MAKERSPACE_P, x0, inflow(57.5 * 1.2), 3);
    const launch = loop(MAKERSPACE_P, x0, (t) => [57.5 + (t === 2 ? 300 : 0), 0, 0, 0, 0], 3);
    expectClose(p.states.map((st) => p.scenarios![0].atHorizon.counts[st].value), more[3], 1e-9);
    expectClose(p.states.map((st) => p.scenarios![1].atHorizon.counts[st].value), launch[3], 1e-9);
    expect(p.scenarios![1].edits).toEqual([{ text: '+300 fresh at +2', before: 0, after: 300 }]);
    // every state here moves on, so the 300 newcomers are all still counted: the total's change has no spread
    expect(p.scenarios![1].steps[3].difference.total.outer).toEqual([300, 300]);
    expect(p.scenarios![1].steps[1].difference.total.value).toBe(0);
  });

  it('the difference band of a scenario comes from the same paths as the baseline: a scale of 1 changes nothing', () => {
    const p = computeProjection({ tables }, { ...base, scenarios: ['same=lapsing->dormant*1'] });
    for (const st of p.states) expect(p.scenarios![0].atHorizon.difference[st].outer).toEqual([0, 0]);
  });
});

describe('named scenario texts', () => {
  it('parse NAME=edits with quotes, several edits and a campaign', () => {
    const [s] = parseNamedScenario(['keep="lapsing->dormant*0.8; fresh->engaged=0.6; +3000 fresh at +4"']);
    expect(s.name).toBe('keep');
    expect(s.edits.map((e) => e.target)).toEqual(['transition', 'transition', 'campaign']);
    expect(s.edits[2]).toMatchObject({ state: 'fresh', count: 3000, step: 4 });
  });

  it.each([
    [['lapsing->dormant*0.8'], /has no name/],
    [['2x=inflow*2'], /has no name/],
    [['inflow=500'], /'inflow' cannot name a scenario/],
    [['a=inflow*2', 'a=inflow*3'], /two scenarios are named 'a'/],
    [['a='], /has no edits/],
    [['a=+3000 fresh'], /a campaign is written \+N STATE at \+k/],
    [['a=+3000 fresh at +0'], /from 1/],
    [Array.from({ length: 9 }, (_, i) => `s${i}=inflow*2`), /at most 8 scenarios/],
  ])('%j is refused: %s', (texts, pattern) => {
    expectRefusal(() => parseNamedScenario(texts), 'INPUT_INVALID', pattern);
  });

  it('an impossible move is refused with the reason and a possible move as the suggestion', () => {
    const moves = lifecycleMoves({ lapseLimit: 2 });
    const err = expectRefusal(() => computeProjection({ tables }, { ...base, moves, scenarios: ['x=lapsing->engaged*1.2'] }), 'INPUT_INVALID', /^x: .*lapsing->engaged cannot happen: a lapsing user who is active the next period becomes returned/);
    expect(err.hint).toBe("did you mean 'lapsing->returned*1.2'?");
    expect(moves.allows('lapsing', 'returned')).toBe(true);
    const camp = expectRefusal(() => computeProjection({ tables }, { ...base, moves, scenarios: ['y=+100 engaged at +1'] }), 'INPUT_INVALID', /new users arrive only in fresh/);
    expect(camp.hint).toBe("did you mean '+100 fresh at +1'?");
    expectRefusal(() => computeProjection({ tables }, { ...base, scenarios: ['z=+100 fresh at +9'] }), 'INPUT_INVALID', /beyond the horizon of 3/);
  });
});
