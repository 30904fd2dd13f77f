/**
 * The extension of the waist by whole periods (src/store/extend.ts) against one run of the memory
 * engine over the whole log (runOnLog), which test/core checks against the independent per-user
 * reference: a log cut into batches of whole periods and fed one batch at a time gives the same tables,
 * byte for byte as JSON. Seeded (fast-check), over varied rules: lapse limits 0–3, warm-ups, tenure
 * bands, minimum events, a split state, day grain past the 61 ages that keep window counts, and
 * week and month grain; batches of one or several periods, with quiet periods between them.
 */
import fc from 'fast-check';
import { afterAll, describe, expect, it } from 'vitest';
import { runOnLog } from '../../src/engines/memory/index.js';
import type { EventLog } from '../../src/ingest/eventLog.js';
import { readEvents } from '../../src/ingest/read.js';
import { compilePlan } from '../../src/lifecycle/plan.js';
import { parseRules } from '../../src/rules/load.js';
import type { Rules } from '../../src/rules/schema.js';
import { emptyTables, extend, periodActivity, type Ledger } from '../../src/store/extend.js';
import { NO_PERIOD, UserState } from '../../src/store/users.js';
import { tempDir } from '../core/helpers.js';
import { firstDiff } from './diff.js';
import { batchesByPeriod, bookings, bookingsCsv, type Booking } from './logs.js';

const t = tempDir();
afterAll(() => t.done());

async function logOf(events: readonly Booking[], rules: Rules, name: string): Promise<EventLog> {
  return readEvents([t.file(name, bookingsCsv(events))], { rules });
}

/** Feed the batches one by one; returns the ledger and users. */
async function fed(batches: Booking[][], rules: Rules): Promise<{ ledger: Ledger; users: UserState }> {
  const plan = compilePlan(rules);
  const users = new UserState();
  const ledger: Ledger = { tables: emptyTables(rules, plan) };
  for (let i = 0; i < batches.length; i++) {
    const log = await logOf(batches[i], rules, `b${i}.csv`);
    let lo = Infinity, hi = -Infinity;
    for (let k = 0; k < log.size; k++) {
      lo = Math.min(lo, log.period[k]);
      hi = Math.max(hi, log.period[k]);
    }
    const from = ledger.lastKey === undefined ? lo : ledger.lastKey + 1;
    const { activity } = periodActivity(log, users, rules.activity.minEvents, from, hi);
    extend(ledger, users, rules, plan, activity, hi);
  }
  return { ledger, users };
}

interface Variant {
  grain: 'day' | 'week' | 'month';
  lapseLimit: number;
  warmup: number;
  minEvents: number;
  bands: number[];
  split: boolean;
  seed: number;
  sizes: number[];
}

const variantArb: fc.Arbitrary<Variant> = fc.record({
  grain: fc.constantFrom('day' as const, 'week' as const, 'week' as const, 'month' as const),
  lapseLimit: fc.integer({ min: 0, max: 3 }),
  warmup: fc.integer({ min: 0, max: 2 }),
  minEvents: fc.constantFrom(1, 1, 2),
  bands: fc.constantFrom([0], [0, 1, 4, 12], [0, 2, 5]),
  split: fc.boolean(),
  seed: fc.integer({ min: 1, max: 1_000_000 }),
  sizes: fc.constantFrom([1], [1, 2], [3, 1], [2]),
});

function rulesOf(v: Variant): Rules {
  return parseRules(JSON.stringify({
    grain: v.grain, lapseLimit: v.lapseLimit, warmup: v.warmup, tenureBands: v.bands, activity: { minEvents: v.minEvents },
    ...(v.split ? { splits: [{ state: 'engaged', atLeast: v.minEvents + 2, names: ['steady', 'keen'] }] } : {}),
  }), 'rules.json');
}

describe('extending by batches of periods equals one run over the whole log', () => {
  it('on seeded random logs and rules (fast-check, 25 cases)', async () => {
    await fc.assert(
      fc.asyncProperty(variantArb, async (v) => {
        const rules = rulesOf(v);
        const days = v.grain === 'day' ? 90 : v.grain === 'week' ? 120 : 300;
        const events = bookings(v.seed, 60, days);
        const full = (await runOnLog(await logOf(events, rules, 'all.csv'), rules)).waist.tables;
        const { ledger } = await fed(batchesByPeriod(events, v.grain, v.sizes), rules);
        expect(firstDiff(ledger.tables, full)).toBeUndefined();
        expect(JSON.stringify(ledger.tables)).toBe(JSON.stringify(full));
      }),
      { seed: 20261202, numRuns: 25 },
    );
  }, 300_000);

  it('drops a cohort\'s window counts once it is observed over more than 61 ages, as the engine does', async () => {
    const rules = rulesOf({ grain: 'day', lapseLimit: 2, warmup: 0, minEvents: 1, bands: [0], split: false, seed: 7, sizes: [1] });
    const events = bookings(7, 40, 80);
    const full = (await runOnLog(await logOf(events, rules, 'all.csv'), rules)).waist.tables;
    const { ledger } = await fed(batchesByPeriod(events, 'day', [5, 1]), rules);
    const old = ledger.tables.cohorts.filter((c) => c.active.length - 1 > 61);
    expect(old.length).toBeGreaterThan(0);
    for (const c of old) expect(c.windowActive).toBeUndefined();
    expect(ledger.tables.cohorts.some((c) => c.windowActive !== undefined)).toBe(true);
    expect(JSON.stringify(ledger.tables)).toBe(JSON.stringify(full));
  }, 120_000);
});

describe('per-user state', () => {
  it('holds what the next period needs, for a hand-walked member (lapse limit 1)', async () => {
    // m1, weekly: active weeks 0 and 1, quiet weeks 2 and 3, active week 4, quiet week 5; by the
    // README's table: fresh, engaged, lapsing (1 quiet), dormant (2 quiet > 1), returned, lapsing.
    // m2: active weeks 3 and 5: fresh, lapsing, returned.
    const rules = parseRules('grain: week\nlapseLimit: 1\n', 'rules.yaml');
    const at = (w: number) => ({ user: 'm1', ms: Date.UTC(2026, 2, 2) + w * 7 * 86_400_000 + 36_000_000, event: 'booking_made', plan: 'pro' });
    const other = (w: number) => ({ user: 'm2', ms: Date.UTC(2026, 2, 2) + w * 7 * 86_400_000 + 36_000_000, event: 'booking_made', plan: 'pro' });
    const { ledger, users } = await fed([[at(0)], [at(1)], [other(3)], [at(4)], [other(5)]], rules);
    const plan = compilePlan(rules);
    const u = users.uidOf('m1');
    const key0 = ledger.startKey as number;
    expect(plan.states[users.code[u] - 1]).toBe('lapsing');
    expect(plan.states[users.prevCode[u] - 1]).toBe('returned');
    expect(users.first[u]).toBe(key0);
    expect(users.lastActive[u]).toBe(key0 + 4);
    expect(users.firstDormant[u]).toBe(key0 + 3);
    expect(users.idle[u]).toBe(1);
    const v = users.uidOf('m2');
    expect(users.first[v]).toBe(key0 + 3);
    expect(users.firstDormant[v]).toBe(NO_PERIOD);
    // state counts by hand: weeks 0..5
    const s = (w: number) => Object.fromEntries(ledger.tables.states.map((n, i) => [n, ledger.tables.stateCounts[w][i]]).filter(([, c]) => c));
    expect([0, 1, 2, 3, 4, 5].map(s)).toEqual([
      { fresh: 1 }, { engaged: 1 }, { lapsing: 1 }, { fresh: 1, dormant: 1 }, { returned: 1, lapsing: 1 }, { returned: 1, lapsing: 1 },
    ]);
  });
});
