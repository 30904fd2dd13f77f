/**
 * Rules that split an active state by key events in the period: the engine's classification and
 * waist equal the independent per-user reference (reference.ts, written from the specification), on
 * seeded random booking logs of the makerspace app, for every engine of the conformance list.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { filesSource } from '../../src/engines/types.js';
import { ENGINES, classifyWith } from './engines.js';
import { eventsCsv, rulesOf, tempDir } from './helpers.js';
import { refClassify, refRows, type RefEvent, type RefRules, type RefSplit } from './reference.js';

const DAY = 86_400_000;
const START = Date.UTC(2026, 2, 2); // a Monday

const splitArb: fc.Arbitrary<RefSplit[]> = fc.subarray(['engaged', 'returned'] as const, { minLength: 1 }).chain((states) =>
  fc.tuple(...states.map((state) => fc.integer({ min: 2, max: 4 }).map((atLeast): RefSplit => ({ state, atLeast, names: [`${state}_light`, `${state}_keen`] })))),
);

const caseArb = fc.record({
  rules: fc.record({ grain: fc.constantFrom('day' as const, 'week' as const), lapseLimit: fc.integer({ min: 0, max: 3 }), splits: splitArb }),
  rows: fc.array(fc.record({ user: fc.constantFrom('m1', 'm2', 'm3', 'm4', 'm5', 'm6'), day: fc.integer({ min: 0, max: 40 }), hour: fc.integer({ min: 0, max: 23 }), repeat: fc.integer({ min: 1, max: 4 }) }), { minLength: 1, maxLength: 40 }),
});

describe.each(ENGINES)('%s engine: split states against the reference', (engine) => {
  it('classification, state counts and transitions', async () => {
    const seen = new Set<string>();
    await fc.assert(
      fc.asyncProperty(caseArb, async ({ rules, rows }) => {
        const events: RefEvent[] = rows.flatMap((r) => Array.from({ length: r.repeat }, () => ({ user: r.user, timestamp: new Date(START + r.day * DAY + r.hour * 3_600_000).toISOString(), event: 'booking' })));
        const r: RefRules = rules;
        const ref = refClassify(events, r);
        const t = tempDir();
        try {
          const { rows: got, result } = await classifyWith(engine, filesSource([t.file('b.csv', eventsCsv(events))]), rulesOf(r));
          expect(got).toEqual(refRows(ref));
          for (const g of got) seen.add(g.state);
          expect(result.waist.states).toEqual(ref.stateList);
          expect(result.waist.stateCounts).toEqual(ref.stateCounts);
          expect(result.waist.transitions).toEqual(ref.transitions);
        } finally {
          t.done();
        }
      }),
      { seed: 20261202, numRuns: 80 },
    );
    // the logs reach both sub-states of both splittable states
    for (const s of ['engaged_light', 'engaged_keen', 'returned_light', 'returned_keen']) expect(seen, s).toContain(s);
  }, 120_000); // a bound on a hang (80 engine runs on a shared machine), not a timing
});
