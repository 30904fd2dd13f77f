/**
 * Audience lists against a hand-worked log, and against an independent per-user computation on seeded
 * random logs: the states come from the per-user reference (test/core/reference.ts, written from the
 * specification), and who entered, the previous state, tenure, last active period and the attribute
 * value are recomputed here with plain loops over the raw event objects, never from the EventLog.
 */
import fc from 'fast-check';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { entryNames, entrySpec } from '../../src/audience/entry.js';
import type { AudienceRow } from '../../src/audience/list.js';
import { audienceFromEvents } from '../../src/audience/run.js';
import { parseWhere } from '../../src/audience/where.js';
import { filesSource, type RangeOptions } from '../../src/engines/types.js';
import { TidemarkError } from '../../src/errors.js';
import { refClassify, refInstant, refLabel, type RefRules } from '../core/reference.js';
import { rulesOf, tempDir } from '../core/helpers.js';

/** An event of the makerspace booking app with a plan attribute ('' for none). */
interface PlanEvent {
  user: string;
  timestamp: string;
  event: string;
  plan: string;
}

const csv = (events: readonly PlanEvent[]) => ['user_id,timestamp,event,plan', ...events.map((e) => `${e.user},${e.timestamp},${e.event},${e.plan}`)].join('\n') + '\n';

let t: ReturnType<typeof tempDir>;
beforeAll(() => {
  t = tempDir();
});
afterAll(() => t.done());

async function listOf(events: readonly PlanEvent[], rules: RefRules, q: { period: string; entered: string; fromState?: string; where?: string[] }, range: RangeOptions = {}, includePartial = true) {
  const f = t.file(`e${Math.random().toString(36).slice(2)}.csv`, csv(events));
  const r = rulesOf(rules);
  return audienceFromEvents(filesSource([f]), r, range, { period: q.period, entry: entrySpec(r, q.entered, q.fromState), where: parseWhere(q.where ?? []), includePartial });
}

// Weeks from Monday 2026-03-02 (UTC), lapse limit 1. Worked by hand from the README's state table:
//   ada: w0 fresh, w1 engaged (hobby, then pro later that week), w2 lapsing, w3 returned (no plan)
//   bo:  w0 fresh (studio), w1 lapsing, w2 dormant, w3 dormant
//   cy:  w2 fresh (pro and studio at the same instant: the later row, studio), w3 engaged (pro)
//   dee: w0 fresh, w1 engaged, w2 engaged (hobby), w3 lapsing
const WORKED: PlanEvent[] = [
  { user: 'ada', timestamp: '2026-03-02T10:00:00Z', event: 'booking', plan: 'hobby' },
  { user: 'ada', timestamp: '2026-03-12T18:00:00Z', event: 'checked_in', plan: 'pro' },
  { user: 'ada', timestamp: '2026-03-10T09:00:00Z', event: 'booking', plan: 'hobby' },
  { user: 'ada', timestamp: '2026-03-24T09:00:00Z', event: 'booking', plan: '' },
  { user: 'bo', timestamp: '2026-03-03T08:00:00Z', event: 'booking', plan: 'studio' },
  { user: 'cy', timestamp: '2026-03-17T12:00:00Z', event: 'booking', plan: 'pro' },
  { user: 'cy', timestamp: '2026-03-17T12:00:00Z', event: 'booking', plan: 'studio' },
  { user: 'cy', timestamp: '2026-03-29T20:00:00Z', event: 'booking', plan: 'pro' },
  { user: 'dee', timestamp: '2026-03-04T10:00:00Z', event: 'booking', plan: 'hobby' },
  { user: 'dee', timestamp: '2026-03-11T10:00:00Z', event: 'booking', plan: 'hobby' },
  { user: 'dee', timestamp: '2026-03-18T10:00:00Z', event: 'booking', plan: 'hobby' },
];
const WEEKLY: RefRules = { grain: 'week', lapseLimit: 1 };
const row = (user: string, state: string, previousState: string | null, tenure: number, lastActive: string, plan: string | null): AudienceRow => ({ user, state, previousState, tenure, lastActive, attributes: [plan] });

describe('audience lists: a worked example (weeks from 2026-03-02, lapse limit 1)', () => {
  it.each([
    ['lapsing', '2026-03-16', undefined, [row('ada', 'lapsing', 'engaged', 2, '2026-03-09', 'pro')]],
    ['dormant', '2026-03-18', undefined, [row('bo', 'dormant', 'lapsing', 2, '2026-03-02', 'studio')]],
    ['returned', '2026-03-23', 'lapsing', [row('ada', 'returned', 'lapsing', 3, '2026-03-23', null)]],
    ['fresh', '2026-03-16', undefined, [row('cy', 'fresh', null, 0, '2026-03-16', 'studio')]],
    ['lapsing', '2026-03-29', 'engaged', [row('dee', 'lapsing', 'engaged', 3, '2026-03-16', 'hobby')]],
    ['engaged', '2026-03-23', undefined, [row('cy', 'engaged', 'fresh', 1, '2026-03-23', 'pro')]],
    ['engaged', '2026-03-09', undefined, [row('ada', 'engaged', 'fresh', 1, '2026-03-09', 'pro'), row('dee', 'engaged', 'fresh', 1, '2026-03-09', 'hobby')]],
    ['dormant', '2026-03-23', undefined, []], // bo stayed dormant: no entry
  ] as const)('entered %s at %s (from %s)', async (entered, period, fromState, want) => {
    const { list } = await listOf(WORKED, WEEKLY, { period, entered, fromState });
    expect(list.period).toBe(period === '2026-03-18' ? '2026-03-16' : period === '2026-03-29' ? '2026-03-23' : period);
    expect(list.attributes).toEqual(['plan']);
    expect(list.rows).toEqual(want);
  });

  it('--where: one value, several values of a column, and "no value"', async () => {
    const q = { period: '2026-03-09', entered: 'engaged' };
    expect((await listOf(WORKED, WEEKLY, { ...q, where: ['plan=pro'] })).list.rows.map((r) => r.user)).toEqual(['ada']);
    expect((await listOf(WORKED, WEEKLY, { ...q, where: ['plan=pro', 'plan=hobby'] })).list.rows.map((r) => r.user)).toEqual(['ada', 'dee']);
    expect((await listOf(WORKED, WEEKLY, { period: '2026-03-23', entered: 'returned', where: ['plan='] })).list.rows.map((r) => r.user)).toEqual(['ada']);
    expect((await listOf(WORKED, WEEKLY, { period: '2026-03-23', entered: 'returned', where: ['plan=pro'] })).list.rows).toEqual([]);
  });

  it('--from: history before it still gives the previous state and the tenure', async () => {
    const { list } = await listOf(WORKED, WEEKLY, { period: '2026-03-16', entered: 'lapsing' }, { from: '2026-03-16' });
    expect(list.rows).toEqual([row('ada', 'lapsing', 'engaged', 2, '2026-03-09', 'pro')]);
  });

  it('refuses a period in the warm-up, outside the data, and an incomplete last period left out', async () => {
    const err = async (p: Promise<unknown>) => p.then(() => 'none', (e: TidemarkError) => `${e.where.key}: ${e.message}`);
    expect(await err(listOf(WORKED, { ...WEEKLY, warmup: 1 }, { period: '2026-03-02', entered: 'fresh' }))).toMatch(/^period: 2026-03-02 is inside the warm-up/);
    expect(await err(listOf(WORKED, WEEKLY, { period: '2026-04-06', entered: 'fresh' }))).toBe('period: the period of 2026-04-06 (2026-04-06) is not a period of the data');
    // without cy's Sunday booking the data stop on Tuesday 2026-03-24: the last week is incomplete
    const partial = WORKED.filter((e) => e.timestamp !== '2026-03-29T20:00:00Z');
    expect(await err(listOf(partial, WEEKLY, { period: '2026-03-23', entered: 'returned' }, {}, false))).toBe('period: 2026-03-23 is the incomplete last period, left out');
    expect((await listOf(partial, WEEKLY, { period: '2026-03-23', entered: 'returned' }, {}, true)).list.rows.map((r) => r.user)).toEqual(['ada']);
  });
});

// ---------------------------------------------------------------------------------------------
// Seeded random logs against plain loops

const START = Date.UTC(2026, 2, 2);
const WEEK = 7 * 86_400_000;
const PLANS = ['hobby', 'studio', 'pro', ''];

/** The states a name stands for: itself, or a split state's two names. */
const namesOf = (rules: RefRules, name: string) => rules.splits?.find((s) => s.state === name)?.names ?? [name];
const isActive = (rules: RefRules, s: string | null) => s !== null && ['fresh', 'engaged', 'returned', ...(rules.splits ?? []).flatMap((x) => x.names)].includes(s);

/**
 * Who entered, by plain loops: the reference states per user and period; the last active period by
 * walking back; the plan of the user's latest key event (by instant; on ties the later row) in it.
 */
function refAudience(events: readonly PlanEvent[], rules: RefRules, periodIndex: number, entered: string, fromState: string | undefined, where: { plan?: string[] }): AudienceRow[] {
  const ref = refClassify(events, rules);
  const into = namesOf(rules, entered);
  const from = fromState === undefined ? undefined : namesOf(rules, fromState).filter((s) => !into.includes(s));
  const keys = rules.keyEvents ? new Set(rules.keyEvents) : null;
  const out: AudienceRow[] = [];
  for (const [user, states] of ref.states) {
    const s = states[periodIndex];
    const prev = periodIndex > 0 ? states[periodIndex - 1] : null;
    if (s === null || !into.includes(s)) continue;
    if (prev !== null && into.includes(prev)) continue;
    if (from && (prev === null || !from.includes(prev))) continue;
    let last = periodIndex;
    while (!isActive(rules, states[last])) last--;
    const first = states.findIndex((x) => x !== null);
    let plan: string | null = null;
    let bestMs = -Infinity;
    events.forEach((e) => {
      if (e.user !== user || (keys && !keys.has(e.event)) || refLabel(e.timestamp, rules) !== ref.periods[last]) return;
      const ms = refInstant(e.timestamp, rules.timezone ?? 'UTC').toMillis();
      if (ms >= bestMs) {
        bestMs = ms;
        plan = e.plan === '' ? null : e.plan;
      }
    });
    if (where.plan && !where.plan.includes(plan ?? '')) continue;
    out.push({ user, state: s, previousState: prev, tenure: periodIndex - first, lastActive: ref.periods[last], attributes: [plan] });
  }
  return out.sort((a, b) => (a.user < b.user ? -1 : 1));
}

const rulesArb: fc.Arbitrary<RefRules> = fc.record({
  grain: fc.constant('week' as const),
  lapseLimit: fc.integer({ min: 0, max: 3 }),
  minEvents: fc.constantFrom(1, 1, 2),
  keyEvents: fc.constantFrom(undefined, ['booking', 'checked_in']),
  splits: fc.constantFrom(undefined, [{ state: 'engaged' as const, atLeast: 3, names: ['steady', 'keen'] as [string, string] }]),
}).map((r) => Object.fromEntries(Object.entries(r).filter(([, v]) => v !== undefined)) as unknown as RefRules);

const eventsArb = fc.array(
  fc.record({
    user: fc.constantFrom('m0', 'm1', 'm2', 'm3', 'm4', 'm5', 'm6', 'm7'),
    at: fc.integer({ min: 0, max: 9 * WEEK - 1 }),
    event: fc.constantFrom('booking', 'checked_in', 'page_viewed'),
    plan: fc.constantFrom(...PLANS),
    // bursts at one instant (ties on time, so the later row must win) and minEvents 2 reached
    repeat: fc.constantFrom(1, 1, 1, 2, 3),
    plan2: fc.constantFrom(...PLANS),
  }),
  { minLength: 1, maxLength: 60 },
).map((raw) => {
  const out: PlanEvent[] = [{ user: 'm0', timestamp: new Date(START).toISOString(), event: 'booking', plan: 'hobby' }, { user: 'm0', timestamp: new Date(START + 1).toISOString(), event: 'booking', plan: 'hobby' }];
  for (const r of raw) for (let k = 0; k < r.repeat; k++) out.push({ user: r.user, timestamp: new Date(START + r.at).toISOString(), event: r.event, plan: k === 0 ? r.plan : r.plan2 });
  return out;
});

describe('audience lists against plain loops on seeded random logs', () => {
  it('every (period, entered, from-state, where): the list equals the per-user computation; a refused entry never happens', async () => {
    await fc.assert(
      fc.asyncProperty(rulesArb, eventsArb, fc.nat(), fc.nat(), fc.nat(), fc.option(fc.constantFrom(...PLANS.map((p) => [p]), ['hobby', 'pro'])), async (rules, events, pi, ei, fi, plans) => {
        const ref = refClassify(events, rules);
        const r = rulesOf(rules);
        const names = entryNames(r);
        const p = pi % ref.periods.length;
        const entered = names[ei % names.length];
        const fromState = fi % (names.length + 1) === names.length ? undefined : names[fi % (names.length + 1)];
        const where = plans ? plans.map((v) => `plan=${v}`) : [];
        let spec;
        try {
          spec = entrySpec(r, entered, fromState);
        } catch (e) {
          // a refused entry: no user makes it in any period of the reference
          expect(e).toBeInstanceOf(TidemarkError);
          for (let k = 0; k < ref.periods.length; k++) expect(refAudience(events, rules, k, entered, fromState, {}), `${entered} from ${fromState}`).toEqual([]);
          return;
        }
        const want = refAudience(events, rules, p, entered, fromState, { plan: plans ?? undefined });
        const { list } = await listOf(events, rules, { period: ref.periods[p], entered, fromState, where });
        expect(list.period).toBe(ref.periods[p]);
        expect(list.entry).toEqual(spec);
        expect(list.rows, `${JSON.stringify(rules)} ${ref.periods[p]} ${entered} from ${fromState} ${where}\n${csv(events)}`).toEqual(want);
      }),
      { seed: 20261211, numRuns: 150 },
    );
  }, 120_000);
});
