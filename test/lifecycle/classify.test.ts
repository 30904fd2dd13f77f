import { transition, initialTransition } from 'xstate';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import type { ActivePeriods } from '../../src/lifecycle/activity.js';
import { classify } from '../../src/lifecycle/classify.js';
import { lifecycleMachine } from '../../src/lifecycle/machine.js';
import { compilePlan } from '../../src/lifecycle/plan.js';

/** Active periods from per-user sets of offsets (users with none are left out, as activity.ts does). */
function activeOf(sets: number[][], span: number): ActivePeriods {
  const user: number[] = [];
  const offset: number[] = [];
  sets.forEach((s, u) => [...new Set(s)].sort((a, b) => a - b).forEach((p) => (user.push(u), offset.push(p))));
  return { startKey: 0, span, user: Int32Array.from(user), offset: Int32Array.from(offset), events: Int32Array.from(user.map(() => 1)) };
}

/**
 * The reference: each user walked one period at a time through the xstate machine itself, from the
 * first active period to the end of the range; rows from `outStart` on.
 */
const machines = new Map<number, ReturnType<typeof lifecycleMachine>>();
function machineRows(sets: number[][], span: number, lapseLimit: number, outStart: number) {
  if (!machines.has(lapseLimit)) machines.set(lapseLimit, lifecycleMachine({ lapseLimit }));
  const m = machines.get(lapseLimit)!;
  const rows: string[] = [];
  const firstDormant: number[] = [];
  sets.forEach((s, u) => {
    const on = new Set(s);
    if (on.size === 0) return void (firstDormant[u] = -2);
    const first = Math.min(...on);
    let [snap] = initialTransition(m);
    let dormantAt = -1;
    for (let p = first; p < span; p++) {
      const before = String(snap.value);
      [snap] = transition(m, snap, { type: 'PERIOD', active: on.has(p), events: on.has(p) ? 1 : 0 });
      if (snap.value === 'dormant' && dormantAt < 0) dormantAt = p;
      if (p >= outStart) rows.push(`${u} ${p} ${before} ${String(snap.value)} ${p - first}`);
    }
    firstDormant[u] = dormantAt;
  });
  return { rows, firstDormant };
}

const NAMES = ['unseen', 'fresh', 'engaged', 'returned', 'lapsing', 'dormant'];

describe('classify', () => {
  it('gives the machine’s states from outStart on, however long the history before it (seeded)', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 0, max: 6 }),
        fc.integer({ min: 1, max: 60 }),
        fc.array(fc.array(fc.nat({ max: 59 }), { maxLength: 6 }), { minLength: 1, maxLength: 4 }),
        fc.nat({ max: 59 }),
        (L, span, raw, out) => {
          const sets = raw.map((s) => s.filter((p) => p < span));
          const outStart = Math.min(out, span - 1);
          const c = classify(activeOf(sets, span), compilePlan({ lapseLimit: L }), sets.length, outStart);
          const got = Array.from({ length: c.size }, (_, r) => `${c.user[r]} ${c.period[r]} ${NAMES[c.prev[r] + 1]} ${NAMES[c.state[r] + 1]} ${c.tenure[r]}`);
          const want = machineRows(sets, span, L, outStart);
          expect(got).toEqual(want.rows);
          expect(Array.from(c.firstDormant)).toEqual(want.firstDormant);
        },
      ),
      { seed: 11, numRuns: 120 },
    );
  });

  it('crosses a century of daily history before --from in a few steps (hand-worked)', () => {
    // one member active on day 0 and on day 40,000; lapseLimit 7; output from day 39,999 on
    const c = classify(activeOf([[0, 40_000]], 40_002), compilePlan({ lapseLimit: 7 }), 1, 39_999);
    // day 39,999: dormant since day 8 (eight quiet days), then returned, then lapsing
    expect(Array.from(c.state)).toEqual([4, 2, 3]);
    expect(Array.from(c.prev)).toEqual([4, 4, 2]);
    expect(c.firstDormant[0]).toBe(8);
  });
});
