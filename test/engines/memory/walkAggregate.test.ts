/**
 * The engine's fused pass (walkAggregate: the tables counted while the users are walked, no rows kept)
 * against the reference it replaces on the engine's path, aggregate(classify(…)), which the
 * conformance tests check against an independent walk of the xstate machine: same tables, first active
 * and first dormant periods, on random active sets (fast-check, seeded) with random lapse limits,
 * split states, --from (outStart), warm-up and tenure bands, short ranges and ranges over 62 periods
 * (where the cohort windows stop).
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { aggregate, type AggregateOptions } from '../../../src/engines/memory/aggregate.js';
import { walkAggregate } from '../../../src/engines/memory/walkAggregate.js';
import type { ActivePeriods } from '../../../src/lifecycle/activity.js';
import { classify } from '../../../src/lifecycle/classify.js';
import { compilePlan } from '../../../src/lifecycle/plan.js';
import { lifecycleStates } from '../../../src/lifecycle/states.js';
import { rulesOf } from '../../core/helpers.js';

/** Active periods from per-user maps of offset → key events (users with none are left out, as activity.ts does). */
function activeOf(sets: [number, number][][], span: number): ActivePeriods {
  const user: number[] = [], offset: number[] = [], events: number[] = [];
  sets.forEach((s, u) => {
    const byOffset = new Map<number, number>();
    for (const [p, e] of s) if (p < span) byOffset.set(p, (byOffset.get(p) ?? 0) + e);
    [...byOffset.keys()].sort((a, b) => a - b).forEach((p) => (user.push(u), offset.push(p), events.push(byOffset.get(p)!)));
  });
  return { startKey: 0, span, user: Int32Array.from(user), offset: Int32Array.from(offset), events: Int32Array.from(events) };
}

const SPLITS = [
  undefined,
  [{ state: 'engaged' as const, atLeast: 3, names: ['steady', 'keen'] as [string, string] }],
  [{ state: 'engaged' as const, atLeast: 3, names: ['steady', 'keen'] as [string, string] }, { state: 'returned' as const, atLeast: 2, names: ['back_light', 'back_busy'] as [string, string] }],
];
const BANDS = [[0], [0, 1, 4, 12], [0, 2, 3]];

describe('walkAggregate: the fused pass equals aggregate(classify(…))', () => {
  it('on random logs, rules, ranges, warm-ups and bands (fast-check)', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 75 }),
        fc.array(fc.array(fc.tuple(fc.nat(74), fc.integer({ min: 1, max: 4 })), { maxLength: 10 }), { maxLength: 40 }),
        fc.nat(5),
        fc.nat(3),
        fc.integer({ min: 1, max: 4 }),
        fc.nat(SPLITS.length - 1),
        fc.nat(BANDS.length - 1),
        (span, sets, outStart, warmup, lapseLimit, splitAt, bandsAt) => {
          const rules = rulesOf({ grain: 'week', lapseLimit, splits: SPLITS[splitAt] });
          const plan = compilePlan(rules);
          const out = Math.min(outStart, span - 1);
          const w = Math.min(warmup, span - out - 1);
          const table = lifecycleStates(rules);
          const roleName = (role: string) => table.find((s) => s.role === role)!.name;
          const o: AggregateOptions = {
            states: plan.states,
            activeCount: table.filter((s) => s.active).length,
            arrivalState: roleName('arrival'),
            exitState: roleName('exit'),
            labels: Array.from({ length: span }, (_, i) => `p${String(i).padStart(3, '0')}`),
            outStart: out,
            warmup: w,
            tenureBands: BANDS[bandsAt],
          };
          const active = activeOf(sets, span);
          const c = classify(active, plan, sets.length, out);
          const walked = walkAggregate(active, plan, sets.length, o);
          expect(walked.tables).toEqual(aggregate(c, o));
          expect(walked.firstActive).toEqual(c.firstActive);
          expect(walked.firstDormant).toEqual(c.firstDormant);
        },
      ),
      { seed: 1010, numRuns: 400 },
    );
  }, 60_000); // a bound on a hang; the property takes a few seconds on a busy machine

  it('a log whose cohort triangle is laid out sparsely (a long range, few rows)', () => {
    // 3 users over 3,000 periods: the triangle (4.5M cells) is far larger than the rows, so both keep a Map
    const rules = rulesOf({ grain: 'week', lapseLimit: 2 });
    const plan = compilePlan(rules);
    const span = 3000;
    const active = activeOf([[[0, 1], [5, 1], [2990, 1]], [[1500, 1]], [[2999, 1]]], span);
    const table = lifecycleStates(rules);
    const o: AggregateOptions = {
      states: plan.states, activeCount: table.filter((s) => s.active).length, arrivalState: table[0].name, exitState: table.find((s) => s.role === 'exit')!.name,
      labels: Array.from({ length: span }, (_, i) => `p${String(i).padStart(4, '0')}`), outStart: 0, warmup: 0, tenureBands: [0, 1, 4, 12],
    };
    const walked = walkAggregate(active, plan, 3, o);
    expect(walked.tables).toEqual(aggregate(classify(active, plan, 3, 0), o));
    expect(walked.tables.cohorts.map((r) => r.size)).toEqual([1, 1, 1]);
  });
});
