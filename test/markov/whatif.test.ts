import { describe, expect, it } from 'vitest';
import { project } from '../../src/markov/project.js';
import { reweightRow } from '../../src/markov/reweight.js';
import { parseScenario } from '../../src/markov/scenario.js';
import { applyScenario, whatIf } from '../../src/markov/whatif.js';
import { lifecycleMoves } from '../../src/lifecycle/moves.js';
import { MAKERSPACE_P, STATES, expectClose, expectRefusal } from './helpers.js';

const model = { states: STATES, matrix: MAKERSPACE_P, inflow: [50, 0, 0, 0, 0] };
const start = [40, 300, 60, 120, 500];
const apply = (...texts: string[]) => applyScenario(model, parseScenario(texts));

describe('parseScenario', () => {
  it('reads transition scale/set and inflow forms, several per text', () => {
    expect(parseScenario(['lapsing->dormant*0.8', ' lapsing -> dormant = 0.3 ; inflow*1.2', 'inflow=500, inflow.fresh=500'])).toEqual([
      { target: 'transition', from: 'lapsing', to: 'dormant', op: 'scale', value: 0.8, text: 'lapsing->dormant*0.8' },
      { target: 'transition', from: 'lapsing', to: 'dormant', op: 'set', value: 0.3, text: 'lapsing -> dormant = 0.3' },
      { target: 'inflow', state: undefined, op: 'scale', value: 1.2, text: 'inflow*1.2' },
      { target: 'inflow', state: undefined, op: 'set', value: 500, text: 'inflow=500' },
      { target: 'inflow', state: 'fresh', op: 'set', value: 500, text: 'inflow.fresh=500' },
    ]);
  });

  it('refuses pieces it cannot read, quoting them', () => {
    expectRefusal(() => parseScenario(['lapsing->dormant']), 'INPUT_INVALID', /"lapsing->dormant": no \* or =/);
    expectRefusal(() => parseScenario(['lapsing->dormant*lots']), 'INPUT_INVALID', /"lots" is not a number/);
    expectRefusal(() => parseScenario(['lapsing->*2']), 'INPUT_INVALID', /one FROM->TO pair/);
    expectRefusal(() => parseScenario(['outflow*2']), 'INPUT_INVALID', /"outflow" is neither/);
    expectRefusal(() => parseScenario(['inflow=1e999']), 'INPUT_INVALID', /too large/);
    const e = expectRefusal(() => parseScenario(['inflow*2', 'a->b->c=0.1']), 'INPUT_INVALID', /"a->b->c=0.1"/);
    expect(e.where.key).toBe('scenario[1]');
  });
});

describe('reweightRow: edited entries kept, the rest rescaled proportionally', () => {
  it('hand example: set entry 2 to 0.4; the others (0.5, 0.3) fill 0.6 in proportion 5:3', () => {
    // 0.5 · 0.6/0.8 = 0.375, 0.3 · 0.6/0.8 = 0.225.
    expectClose(reweightRow([0.5, 0.3, 0.2], new Map([[2, 0.4]]), 0, 'x'), [0.375, 0.225, 0.4], 1e-12);
  });
  it('when the rest is all 0, the remainder goes to the diagonal', () => {
    expectClose(reweightRow([0, 1, 0], new Map([[1, 0.7]]), 0, 'x'), [0.3, 0.7, 0], 1e-12);
  });
  it('refuses when the remainder has nowhere to go (rest 0 and the diagonal pinned), naming the row', () => {
    expectRefusal(() => reweightRow([0, 0, 1], new Map([[2, 0.8]]), 2, 'dormant'), 'INPUT_INVALID', /0\.2 of row 'dormant' has nowhere to go/);
  });
  it('refuses pinned values adding to more than 1', () => {
    expectRefusal(() => reweightRow([0.5, 0.5, 0], new Map([[0, 0.7], [1, 0.6]]), 0, 'lapsing'), 'INPUT_INVALID', /row 'lapsing' add up to 1\.3/);
  });
});

describe('applyScenario', () => {
  it('lapsing->dormant=0.3: the entry is set, the rest of the lapsing row rescaled to 0.7 (hand: returned .3→.42, lapsing .2→.28)', () => {
    const s = apply('lapsing->dormant=0.3');
    expectClose(s.matrix[3], [0, 0, 0.3 * 0.7 / 0.5, 0.2 * 0.7 / 0.5, 0.3], 1e-12);
    expect(s.matrix.filter((_, i) => i !== 3)).toEqual(MAKERSPACE_P.filter((_, i) => i !== 3));
    expect(s.changes).toEqual([{ text: 'lapsing->dormant=0.3', before: 0.5, after: 0.3 }]);
  });

  it('lapsing->dormant*0.8 scales 0.5 to 0.4 and rescales the rest to 0.6', () => {
    const s = apply('lapsing->dormant*0.8');
    expectClose(s.matrix[3], [0, 0, 0.36, 0.24, 0.4], 1e-12);
  });

  it('several edits of one row are pinned together; the same entry twice applies in order', () => {
    const s = apply('lapsing->dormant=0.3, lapsing->returned=0.4');
    expectClose(s.matrix[3], [0, 0, 0.4, 0.3, 0.3], 1e-12);
    const t = apply('lapsing->dormant=0.2', 'lapsing->dormant*2');
    expectClose(t.matrix[3][4], 0.4, 1e-12);
  });

  it('setting a transition that is 0 in the model is allowed (a deliberate new route)', () => {
    const s = apply('dormant->engaged=0.05');
    // dormant row (0, 0, .1, 0, .9) → rest scaled by .95: returned .095, dormant .855.
    expectClose(s.matrix[4], [0, 0.05, 0.095, 0, 0.855], 1e-12);
  });

  it('inflow*1.2, inflow=500 (keeps the split), inflow.fresh=500', () => {
    expectClose(apply('inflow*1.2').inflow, [60, 0, 0, 0, 0], 1e-12);
    const split = applyScenario({ ...model, inflow: [30, 10, 0, 0, 0] }, parseScenario(['inflow=500']));
    expectClose(split.inflow, [375, 125, 0, 0, 0], 1e-12);
    expect(apply('inflow.fresh=500').inflow).toEqual([500, 0, 0, 0, 0]);
    expect(apply('inflow.engaged=20').inflow).toEqual([50, 20, 0, 0, 0]);
  });

  it('leaves the input model unchanged', () => {
    const before = JSON.stringify(model);
    apply('lapsing->dormant=0.3', 'inflow*2');
    expect(JSON.stringify(model)).toBe(before);
  });

  it('refuses unknown states with did-you-mean', () => {
    const e = expectRefusal(() => apply('lapsng->dormant*0.8'), 'INPUT_INVALID', /'lapsng' is not a state/);
    expect(e.hint).toMatch(/did you mean 'lapsing'/);
    expectRefusal(() => apply('lapsing->dormnt=0.1'), 'INPUT_INVALID', /'dormnt' is not a state/);
    expectRefusal(() => apply('inflow.frsh=10'), 'INPUT_INVALID', /'frsh' is not a state/);
  });

  it('refuses scaling a transition that is 0 in the model, naming it', () => {
    const e = expectRefusal(() => apply('engaged->fresh*2'), 'INPUT_INVALID', /engaged->fresh is 0 in the model/);
    expect(e.hint).toMatch(/engaged->fresh=0\.1/);
  });

  it('refuses probabilities outside [0, 1], negative factors, and scaled values above 1', () => {
    expectRefusal(() => apply('lapsing->dormant=1.5'), 'INPUT_INVALID', /probability 1\.5 for lapsing->dormant is outside \[0, 1\]/);
    expectRefusal(() => apply('lapsing->dormant=-0.1'), 'INPUT_INVALID', /outside \[0, 1\]/);
    expectRefusal(() => apply('lapsing->dormant*-1'), 'INPUT_INVALID', /factor -1 for lapsing->dormant is negative/);
    const e = expectRefusal(() => apply('lapsing->dormant*3'), 'INPUT_INVALID', /lapsing->dormant would become 1\.5, above 1/);
    expect(e.hint).toMatch(/at most 2/);
  });

  it('refuses edits of one row that add up to more than 1, naming the row', () => {
    expectRefusal(() => apply('lapsing->dormant=0.7, lapsing->returned=0.5'), 'INPUT_INVALID', /row 'lapsing' add up to 1\.2/);
  });

  it('refuses an edit whose remainder has nowhere to go', () => {
    const absorbing = { states: ['engaged', 'dormant'], matrix: [[0.8, 0.2], [0, 1]], inflow: [0, 0] };
    expectRefusal(() => applyScenario(absorbing, parseScenario(['dormant->dormant=0.9'])), 'INPUT_INVALID', /row 'dormant' has nowhere to go/);
    // Setting the way out instead works: the remaining 0.9 stays on the diagonal.
    expectClose(applyScenario(absorbing, parseScenario(['dormant->engaged=0.1'])).matrix[1], [0.1, 0.9], 1e-12);
  });

  it('refuses inflow edits that cannot apply: zero inflow, negative values', () => {
    const none = { ...model, inflow: [0, 0, 0, 0, 0] };
    const e = expectRefusal(() => applyScenario(none, parseScenario(['inflow=500'])), 'INPUT_INVALID', /inflow is 0 in every state/);
    expect(e.hint).toMatch(/inflow\.fresh=500/);
    expectRefusal(() => applyScenario(none, parseScenario(['inflow*2'])), 'INPUT_INVALID', /no split to keep/);
    expectRefusal(() => apply('inflow.engaged*2'), 'INPUT_INVALID', /inflow into 'engaged' is 0/);
    expectRefusal(() => apply('inflow=-5'), 'INPUT_INVALID', /inflow -5 is negative/);
    expectRefusal(() => apply('inflow*-2'), 'INPUT_INVALID', /factor -2 is negative/);
  });
});

describe('whatIf', () => {
  it('baseline equals the plain projection; difference = scenario − baseline', () => {
    const w = whatIf(model, ['lapsing->dormant*0.8', 'inflow*1.2'], start, 6);
    expect(w.baseline).toEqual(project(MAKERSPACE_P, start, model.inflow, 6));
    expect(w.projected).toEqual(project(w.scenario.matrix, start, w.scenario.inflow, 6));
    w.difference.counts.forEach((row, t) => row.forEach((d, s) => expectClose(d, w.projected.counts[t][s] - w.baseline.counts[t][s], 1e-12)));
  });

  it('inflow*1.2 adds 0.2 × 50 = 10 users a step to the total (hand: total difference 10·t)', () => {
    const w = whatIf(model, ['inflow*1.2'], start, 4);
    expectClose(w.difference.totals, [0, 10, 20, 30, 40], 1e-9);
  });

  it('fewer lapsing users going dormant means fewer dormant users at every later step', () => {
    const w = whatIf(model, ['lapsing->dormant*0.8'], start, 5);
    expect(w.difference.counts[0][4]).toBe(0);
    for (let t = 1; t <= 5; t++) expect(w.difference.counts[t][4]).toBeLessThan(0);
  });

  it('refuses a bad start or horizon', () => {
    expectRefusal(() => whatIf(model, ['inflow*2'], [1, 2], 3), 'INPUT_INVALID', /start has 2 entries/);
    expectRefusal(() => whatIf(model, ['inflow*2'], start, -1), 'INPUT_INVALID', /horizon/);
  });
});

describe('what-ifs on lifecycle states: only moves the rules allow (moves from the lifecycle machine)', () => {
  // a chain that respects lapseLimit 2: fresh, engaged and returned go to engaged or lapsing; lapsing to
  // returned, lapsing or dormant; dormant to returned or dormant (the state table in the README)
  const P = [
    [0, 0.55, 0, 0.45, 0],
    [0, 0.7, 0, 0.3, 0],
    [0, 0.6, 0, 0.4, 0],
    [0, 0, 0.3, 0.2, 0.5],
    [0, 0, 0.1, 0, 0.9],
  ];
  const moves = lifecycleMoves({ lapseLimit: 2 });
  const lifecycle = { states: STATES, matrix: P, inflow: [50, 0, 0, 0, 0], moves };
  const applyL = (...texts: string[]) => applyScenario(lifecycle, parseScenario(texts));
  /** The move a "did you mean" names, if any. */
  const suggested = (hint: string | undefined) => /'([a-z]+)->([a-z]+)[*=]/.exec(hint ?? '');

  it('refuses lapsing->engaged, scaled or set, with the reason, and suggests lapsing->returned', () => {
    for (const text of ['lapsing->engaged*1.2', 'lapsing->engaged=0.1']) {
      const e = expectRefusal(() => applyL(text), 'INPUT_INVALID', /lapsing->engaged cannot happen: a lapsing user who is active the next period becomes returned/);
      expect(e.hint).toBe(`did you mean '${text.replace('engaged', 'returned')}'?`);
    }
  });

  it('the same edits pass on a planner\'s chain without move rules (a deliberate new route)', () => {
    expect(applyScenario({ ...lifecycle, moves: undefined }, parseScenario(['lapsing->engaged=0.1'])).matrix[3][1]).toBe(0.1);
  });

  it('a misspelt state suggests only possible moves, with the edit\'s operation', () => {
    const e = expectRefusal(() => applyL('lapsng->dormant*0.8'), 'INPUT_INVALID', /'lapsng' is not a state/);
    expect(e.hint).toBe("did you mean 'lapsing->dormant*0.8'?");
    for (const text of ['lapsing->engagd=0.1', 'fressh->lapsing*0.9', 'dormant->lapsin=0.2', 'egaged->returned*2']) {
      try {
        applyL(text);
        expect.unreachable(text);
      } catch (err) {
        const m = suggested((err as { hint?: string }).hint);
        if (m) expect(moves.allows(m[1], m[2]), `${text} suggests ${m[0]}`).toBe(true);
      }
    }
  });

  it('new users arrive only in fresh', () => {
    const e = expectRefusal(() => applyL('inflow.engaged=100'), 'INPUT_INVALID', /new users arrive only in fresh, not in engaged/);
    expect(e.hint).toBe("did you mean 'inflow.fresh=100'?");
    expect(applyL('inflow.fresh=100').inflow).toEqual([100, 0, 0, 0, 0]);
  });

  it('refuses a rescaled row whose remainder would go to an impossible move (fresh->fresh)', () => {
    // fresh goes only to engaged here; setting it to 0.6 leaves 0.4 that reweightRow would put on the
    // diagonal, fresh->fresh, which no user can make
    const only = { ...lifecycle, matrix: [[0, 1, 0, 0, 0], ...P.slice(1)] };
    expectRefusal(() => applyScenario(only, parseScenario(['fresh->engaged=0.6'])), 'INPUT_INVALID', /fresh->fresh, which cannot happen/);
    // naming where the rest goes is fine
    expect(applyScenario(only, parseScenario(['fresh->engaged=0.6', 'fresh->lapsing=0.4'])).matrix[0]).toEqual([0, 0.6, 0, 0.4, 0]);
  });

  it('possible moves work as before', () => {
    const s = applyL('lapsing->dormant*0.8');
    expect(s.matrix[3][4]).toBeCloseTo(0.4, 12);
    expect(s.matrix[3].reduce((a, b) => a + b, 0)).toBeCloseTo(1, 12);
  });
});
