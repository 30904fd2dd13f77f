/**
 * The engine's cohort extension (lastActiveAge, windowActive) against cohortRowFromUsers
 * (explain/cohortExt.ts, checked against hand-worked values in test/explain/cohorts.test.ts), fed with
 * each member's active ages read straight from the classified rows; on random logs (fast-check).
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { cohortRowFromUsers } from '../../../src/engines/memory/cohortExt.js';
import { aggregate } from '../../../src/engines/memory/aggregate.js';
import type { ActivePeriods } from '../../../src/lifecycle/activity.js';
import { classify } from '../../../src/lifecycle/classify.js';
import { compilePlan } from '../../../src/lifecycle/plan.js';
import { ACTIVE_STATES } from '../../../src/lifecycle/states.js';
import { rulesOf } from '../../core/helpers.js';

function activeOf(sets: number[][], span: number): ActivePeriods {
  const user: number[] = [], offset: number[] = [];
  sets.forEach((s, u) => [...new Set(s)].filter((p) => p < span).sort((a, b) => a - b).forEach((p) => (user.push(u), offset.push(p))));
  return { startKey: 0, span, user: Int32Array.from(user), offset: Int32Array.from(offset), events: Int32Array.from(user.map(() => 1)) };
}

const plan = compilePlan(rulesOf({ grain: 'week', lapseLimit: 2 }));

describe('aggregate: cohort extension', () => {
  it('equals cohortRowFromUsers on each cohort, short and long (over 60 ages) ranges (fast-check)', () => {
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 70 }), fc.array(fc.array(fc.nat(69), { maxLength: 8 }), { maxLength: 40 }), fc.nat(3), fc.nat(2), (span, sets, outStart, warmup) => {
        const out = Math.min(outStart, span - 1);
        const c = classify(activeOf(sets, span), plan, sets.length, out);
        const labels = Array.from({ length: span }, (_, i) => `p${String(i).padStart(3, '0')}`);
        const w = Math.min(warmup, span - out - 1);
        const waist = aggregate(c, { states: plan.states, activeCount: ACTIVE_STATES.length, arrivalState: plan.states[0], exitState: plan.states[plan.states.length - 1], labels, outStart: out, warmup: w, tenureBands: [0, 1, 4, 12] });
        // each member's active ages, by cohort, in one pass over the rows
        const byCohort = new Map<number, number[][]>();
        for (let r = 0; r < c.size; r++) {
          if (r > 0 && c.user[r] === c.user[r - 1]) continue;
          const ages: number[] = [];
          for (let q = r; q < c.size && c.user[q] === c.user[r]; q++) if (c.state[q] < ACTIVE_STATES.length) ages.push(c.tenure[q]);
          const list = byCohort.get(c.cohort[r]) ?? [];
          list.push(ages);
          byCohort.set(c.cohort[r], list);
        }
        for (const row of waist.cohorts) {
          const k = labels.indexOf(row.cohort);
          const members = byCohort.get(k) ?? [];
          const want = cohortRowFromUsers(row.cohort, span - 1 - k, members);
          expect(row.lastActiveAge).toEqual(want.lastActiveAge);
          // the full form of a waist holds windows one age further than the analyses use (61 ages)
          expect(row.windowActive).toEqual(span - 1 - k <= 61 ? want.windowActive : undefined);
          // and each member's last active age before the final one, from the ages directly
          const A = span - 1 - k;
          const before = new Array<number>(A).fill(0);
          for (const ages of members) {
            const earlier = ages.filter((a) => a < A);
            if (A > 0) before[Math.max(...earlier)]++;
          }
          expect(row.lastActiveAgeBeforeFinal).toEqual(before);
          expect(row.active).toEqual(want.active);
          expect(row.size).toBe(want.size);
        }
      }),
      { seed: 6060, numRuns: 200 },
    );
  }, 30_000); // a bound on a hang; the property takes a few seconds on a busy machine
});
