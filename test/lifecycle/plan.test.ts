import { initialTransition, transition } from 'xstate';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { lifecycleMachine } from '../../src/lifecycle/machine.js';
import { compilePlan, planStep } from '../../src/lifecycle/plan.js';

const NAMES = ['unseen', 'fresh', 'engaged', 'returned', 'lapsing', 'dormant'];
// one plan and one machine per lapse limit: building them is the slow part, walking is cheap
const memo = <T>(make: (L: number) => T) => {
  const m = new Map<number, T>();
  return (L: number) => m.get(L) ?? (m.set(L, make(L)), m.get(L)!);
};
const planFor = memo((lapseLimit) => compilePlan({ lapseLimit }));
const machineFor = memo((lapseLimit) => lifecycleMachine({ lapseLimit }));

/** Walk a sequence through the tabulated plan from (code, idle). */
function walkPlan(lapseLimit: number, seq: boolean[], code = 0, idle = 0): { state: string; idle: number }[] {
  const p = planFor(lapseLimit);
  let cur: [number, number] = [code, Math.min(idle, lapseLimit)];
  return seq.map((a) => {
    cur = planStep(p, cur[0], cur[1], a ? 1 : 0);
    return { state: NAMES[cur[0]], idle: cur[1] };
  });
}

/**
 * Walk the same sequence through the xstate machine itself (the reference: the plan must agree with
 * the machine it tabulates). The plan's idle count saturates at the lapse limit, so the machine's is
 * shown clamped there.
 */
function walkMachine(lapseLimit: number, seq: boolean[], state = 'unseen', idle = 0): { state: string; idle: number }[] {
  const m = machineFor(lapseLimit);
  let snap = state === 'unseen' && idle === 0 ? initialTransition(m)[0] : m.resolveState({ value: state, context: { idle } });
  return seq.map((active) => {
    [snap] = transition(m, snap, { type: 'PERIOD', active, events: 0 });
    return { state: String(snap.value), idle: Math.min(snap.context.idle, lapseLimit) };
  });
}

describe('the tabulated plan', () => {
  it('agrees with the xstate machine on every path from unseen (model-based, seeded)', () => {
    fc.assert(
      fc.property(fc.integer({ min: 0, max: 4 }), fc.array(fc.boolean(), { minLength: 1, maxLength: 24 }), (L, seq) => {
        expect(walkPlan(L, seq)).toEqual(walkMachine(L, seq));
      }),
      { seed: 42, numRuns: 150 },
    );
  });

  it('agrees with the machine for large lapse limits, on paths that start near the limit (seeded)', () => {
    // a path from unseen would need lapseLimit quiet periods to reach the boundary, so each path
    // starts in a state with an idle count a few periods either side of it
    fc.assert(
      fc.property(
        fc.constantFrom(50, 100_000, 1_000_000_000),
        fc.constantFrom(...NAMES.slice(1)),
        fc.integer({ min: -3, max: 3 }),
        fc.array(fc.boolean(), { minLength: 1, maxLength: 12 }),
        (L, state, delta, seq) => {
          const idle = state === 'lapsing' || state === 'dormant' ? Math.max(0, L + delta) : 0;
          expect(walkPlan(L, seq, NAMES.indexOf(state), idle)).toEqual(walkMachine(L, seq, state, idle));
        },
      ),
      { seed: 7, numRuns: 150 },
    );
  });

  it('has the same size for every lapse limit (it is filled per idle class, not per idle value)', () => {
    const sizes = [0, 2, 100_000, 1_000_000_000].map((L) => compilePlan({ lapseLimit: L }).nextState.length);
    // 6 machine states (unseen + 5) × 2 idle classes × 2 levels
    expect(sizes).toEqual([24, 24, 24, 24]);
  });

  it('walks every allowed transition of the table in the machine doc (lapseLimit 2)', () => {
    // hand-worked: a, a, -, -, -, -, a, -, a, a
    expect(walkPlan(2, [true, true, false, false, false, false, true, false, true, true]).map((s) => s.state)).toEqual([
      'fresh', 'engaged', 'lapsing', 'lapsing', 'dormant', 'dormant', 'returned', 'lapsing', 'returned', 'engaged',
    ]);
  });

  it('with lapseLimit 0 an inactive period is dormant at once', () => {
    expect(walkPlan(0, [true, false, true, false]).map((s) => s.state)).toEqual(['fresh', 'dormant', 'returned', 'dormant']);
  });

  it('stays unseen before the first active period', () => {
    expect(walkPlan(1, [false, false, true]).map((s) => s.state)).toEqual(['unseen', 'unseen', 'fresh']);
  });

  it('counts quiet periods up to the lapse limit and holds there (saturating)', () => {
    // hand-worked, lapseLimit 3: fresh, then quiet periods 1, 2, 3 (lapsing), 4, 5 (dormant, held at 3)
    expect(walkPlan(3, [true, false, false, false, false, false]).map((s) => s.idle)).toEqual([0, 1, 2, 3, 3, 3]);
  });
});
