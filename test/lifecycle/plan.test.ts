import { initialTransition, transition } from 'xstate';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { lifecycleMachine } from '../../src/lifecycle/machine.js';
import { compilePlan } from '../../src/lifecycle/plan.js';

const NAMES = ['unseen', 'fresh', 'engaged', 'returned', 'lapsing', 'dormant'];

// One plan and one machine per lapse limit, built once: compiling them for each of the 400 random
// paths made this file take seconds on a busy machine. The walks themselves are unchanged.
const plans = new Map<number, ReturnType<typeof compilePlan>>();
const machines = new Map<number, ReturnType<typeof lifecycleMachine>>();
const planFor = (L: number) => plans.get(L) ?? plans.set(L, compilePlan({ lapseLimit: L })).get(L)!;
const machineFor = (L: number) => machines.get(L) ?? machines.set(L, lifecycleMachine({ lapseLimit: L })).get(L)!;

/** Walk a sequence through the tabulated plan. */
function walkPlan(lapseLimit: number, seq: boolean[]): string[] {
  const p = planFor(lapseLimit);
  let cur = 0;
  return seq.map((a) => {
    cur = p.next[cur * 2 + (a ? 1 : 0)];
    return NAMES[Math.floor(cur / p.idleLevels)];
  });
}

/** Walk the same sequence through the xstate machine itself. */
function walkMachine(lapseLimit: number, seq: boolean[]): string[] {
  const m = machineFor(lapseLimit);
  let [snap] = initialTransition(m);
  return seq.map((active) => {
    [snap] = transition(m, snap, { type: 'PERIOD', active });
    return String(snap.value);
  });
}

describe('the tabulated plan', () => {
  it('agrees with the xstate machine on every path (model-based, seeded)', () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 4 }), fc.array(fc.boolean(), { minLength: 1, maxLength: 30 }), (L, seq) => {
        expect(walkPlan(L, seq)).toEqual(walkMachine(L, seq));
      }),
      { seed: 42, numRuns: 400 },
    );
  });

  it('walks every allowed transition of the table in the machine doc (lapseLimit 2)', () => {
    // hand-worked: a, a, -, -, -, -, a, -, a, a
    expect(walkPlan(2, [true, true, false, false, false, false, true, false, true, true])).toEqual([
      'fresh', 'engaged', 'lapsing', 'lapsing', 'dormant', 'dormant', 'returned', 'lapsing', 'returned', 'engaged',
    ]);
  });

  it('with lapseLimit 0 an inactive period is dormant at once', () => {
    expect(walkPlan(0, [true, false, true, false])).toEqual(['fresh', 'dormant', 'returned', 'dormant']);
  });

  it('stays unseen before the first active period', () => {
    expect(walkPlan(1, [false, false, true])).toEqual(['unseen', 'unseen', 'fresh']);
  });
});
