/**
 * The store through the library (src/store/update.ts, read.ts) against one run of the memory engine
 * over every applied file (test/core checks that engine against the independent per-user reference):
 * weekly files applied one by one give the same waist, byte for byte as JSON, under several rules;
 * a file applied twice changes nothing; late events restate exactly the periods from the earliest
 * one touched to the last stored, and the users counted as changed are those whose state differs in
 * them by the reference classification (test/core/reference.ts) of the events before and after;
 * rules changes are refused unless reclassified; the stored events read back as files classify the
 * same. Invented data (the makerspace booking app), seeded.
 */
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { createEngine } from '../../src/engines/index.js';
import { filesSource } from '../../src/engines/types.js';
import { runOnLog } from '../../src/engines/memory/index.js';
import { TidemarkError } from '../../src/errors.js';
import { readEvents } from '../../src/ingest/read.js';
import { parseRules } from '../../src/rules/load.js';
import type { Rules } from '../../src/rules/schema.js';
import { openStore, readStore, storeEvents } from '../../src/store/read.js';
import { updateStore } from '../../src/store/update.js';
import { refClassify, type RefRules } from '../core/reference.js';
import { tempDir } from '../core/helpers.js';
import { firstDiff } from './diff.js';
import { fingerprint } from './fingerprint.js';
import { batchesByPeriod, bookings, bookingsCsv, type Booking } from './logs.js';

const t = tempDir();
afterAll(() => t.done());
let n = 0;
const fresh = (name: string) => join(t.dir, `${name}-${n++}`);

/** Write batches as files (every third as NDJSON when `mixed`). */
function files(batches: Booking[][], prefix: string, mixed = false): string[] {
  return batches.map((b, i) => {
    if (mixed && i % 3 === 2) return t.file(`${prefix}-${i}.ndjson`, b.map((e) => JSON.stringify({ user_id: e.user, timestamp: new Date(e.ms).toISOString(), event: e.event, plan: e.plan })).join('\n') + '\n');
    return t.file(`${prefix}-${i}.csv`, bookingsCsv(b));
  });
}

async function fullWaist(paths: string[], rules: Rules, skipBadRows = false) {
  return (await runOnLog(await readEvents(paths, { rules, skipBadRows }), rules)).waist;
}

const VARIANTS: { name: string; rules: string; grain: 'day' | 'week' | 'month'; days: number; sizes: number[]; mixed?: boolean }[] = [
  { name: 'weekly, lapse limit 2, warm-up 1, tenure bands, CSV and NDJSON files', rules: 'grain: week\nlapseLimit: 2\nwarmup: 1\ntenureBands: [0, 2, 5]\nminCell: 5\n', grain: 'week', days: 84, sizes: [1], mixed: true },
  { name: 'daily, two events to be active, lapse limit 3, a week a file', rules: 'grain: day\nlapseLimit: 3\nactivity:\n  minEvents: 2\n', grain: 'day', days: 42, sizes: [7] },
  { name: 'weekly, key events only, a split state, lapse limit 0', rules: 'grain: week\nlapseLimit: 0\nactivity:\n  keyEvents: [booking_made, checked_in]\nsplits:\n  - state: engaged\n    atLeast: 3\n    names: [steady, keen]\n', grain: 'week', days: 70, sizes: [1, 2] },
  { name: 'monthly, a month a file', rules: 'grain: month\nlapseLimit: 1\n', grain: 'month', days: 200, sizes: [1] },
];

describe.each(VARIANTS)('$name: files applied one by one equal one run over all of them', (v) => {
  it('gives the waist of the full run, each update extending the store', async () => {
    const rules = parseRules(v.rules, 'rules.yaml');
    const paths = files(batchesByPeriod(bookings(v.days + 11, 70, v.days), v.grain, v.sizes), `v${n}`, v.mixed);
    const dir = fresh('store');
    for (const [i, p] of paths.entries()) {
      const r = await updateStore({ dir, files: [p], rules: i === 0 ? rules : undefined });
      expect(r.mode).toBe('extend');
      expect(r.applied).toHaveLength(1);
    }
    const full = await fullWaist(paths, rules);
    const got = (await readStore(dir)).waist;
    expect(firstDiff(got, full)).toBeUndefined();
    expect(JSON.stringify(got)).toBe(JSON.stringify(full));
  }, 180_000);
});

describe('a file applied twice', () => {
  it('changes nothing, and says where the same bytes were applied', async () => {
    const rules = parseRules('grain: week\nlapseLimit: 2\n', 'rules.yaml');
    const paths = files(batchesByPeriod(bookings(5, 40, 35), 'week'), 'idem');
    const dir = fresh('idem');
    await updateStore({ dir, files: paths.slice(0, 3), rules });
    const before = await fingerprint(dir);
    const copy = t.file('copy-of-second.csv', bookingsCsv(batchesByPeriod(bookings(5, 40, 35), 'week')[1]));
    const r = await updateStore({ dir, files: [paths[1], copy] });
    expect(r.mode).toBe('none');
    expect(r.applied).toEqual([]);
    expect(r.skipped.map((s) => [s.path, s.appliedAs])).toEqual([[paths[1], paths[1]], [copy, paths[1]]]);
    expect(await fingerprint(dir)).toBe(before);
  }, 60_000);

  it('given twice in one command, is applied once', async () => {
    const rules = parseRules('grain: week\nlapseLimit: 2\n', 'rules.yaml');
    const paths = files(batchesByPeriod(bookings(6, 40, 35), 'week'), 'twice');
    const dir = fresh('twice');
    const r = await updateStore({ dir, files: [paths[0], paths[0], paths[1]], rules });
    expect(r.applied.map((a) => a.path)).toEqual([paths[0], paths[1]]);
    expect(r.skipped).toHaveLength(1);
    expect(JSON.stringify((await readStore(dir)).waist)).toBe(JSON.stringify(await fullWaist([paths[0], paths[1]], rules)));
  }, 60_000);
});

describe('late events', () => {
  const ref: RefRules = { grain: 'week', lapseLimit: 2 };
  const rules = parseRules('grain: week\nlapseLimit: 2\n', 'rules.yaml');
  const refEvents = (evs: readonly Booking[]) => evs.map((e) => ({ user: e.user, timestamp: new Date(e.ms).toISOString(), event: e.event }));
  /** Users whose state differs in any of `periods`, by the reference classification. */
  const changedByReference = (before: readonly Booking[], after: readonly Booking[], periods: string[]) => {
    const a = refClassify(refEvents(before), ref), b = refClassify(refEvents(after), ref);
    let changed = 0;
    for (const [user, states] of b.states) {
      const old = a.states.get(user);
      if (periods.some((p) => states[b.periods.indexOf(p)] !== (old ? old[a.periods.indexOf(p)] : null))) changed++;
    }
    return changed;
  };

  it('restate exactly the periods from the earliest touched to the last stored, and count the users who changed', async () => {
    const events = bookings(21, 60, 70);
    const batches = batchesByPeriod(events, 'week');
    const paths = files(batches, 'late');
    const dir = fresh('late');
    for (const p of paths) await updateStore({ dir, files: [p], rules });
    const stored = (await readStore(dir)).waist.tables.periods;
    // bookings in the 4th and 6th stored weeks: two members seen before, one new
    const wk = (w: number, h: number) => Date.parse(`${stored[w]}T00:00:00Z`) + 2 * 86_400_000 + h * 3_600_000;
    const extra: Booking[] = [
      { user: 'm3', ms: wk(3, 10), event: 'booking_made', plan: 'pro' },
      { user: 'm9', ms: wk(5, 11), event: 'checked_in', plan: 'hobby' },
      { user: 'late-member', ms: wk(5, 12), event: 'booking_made', plan: 'studio' },
    ];
    const latePath = t.file('late-extra.csv', bookingsCsv(extra));
    const r = await updateStore({ dir, files: [latePath] });
    expect(r.mode).toBe('rebuild');
    expect(r.restated?.periods).toEqual(stored.slice(3));
    expect(r.restated?.added).toEqual([]);
    expect(r.restated?.usersChanged).toBe(changedByReference(events, [...events, ...extra], stored.slice(3)));
    expect(r.restated?.usersChanged).toBeGreaterThan(0);
    expect(JSON.stringify((await readStore(dir)).waist)).toBe(JSON.stringify(await fullWaist([...paths, latePath], rules)));
    // the next week extends again
    const next = t.file('late-next.csv', bookingsCsv([{ user: 'm3', ms: wk(stored.length - 1, 0) + 7 * 86_400_000, event: 'booking_made', plan: 'pro' }]));
    const r2 = await updateStore({ dir, files: [next] });
    expect(r2.mode).toBe('extend');
    expect(JSON.stringify((await readStore(dir)).waist)).toBe(JSON.stringify(await fullWaist([...paths, latePath, next], rules)));
  }, 180_000);

  it('before the first stored period add periods in front and restate every stored one', async () => {
    const events = bookings(22, 30, 35);
    const paths = files(batchesByPeriod(events, 'week'), 'early');
    const dir = fresh('early');
    for (const p of paths) await updateStore({ dir, files: [p], rules });
    const stored = (await readStore(dir)).waist.tables.periods;
    const early: Booking[] = [{ user: 'm1', ms: Date.parse(`${stored[0]}T10:00:00Z`) - 14 * 86_400_000, event: 'booking_made', plan: 'pro' }];
    const p = t.file('early-extra.csv', bookingsCsv(early));
    const r = await updateStore({ dir, files: [p] });
    expect(r.mode).toBe('rebuild');
    expect(r.restated?.periods).toEqual(stored);
    expect(r.restated?.added).toHaveLength(2);
    expect(r.restated?.usersChanged).toBe(changedByReference(events, [...events, ...early], stored));
    expect(JSON.stringify((await readStore(dir)).waist)).toBe(JSON.stringify(await fullWaist([...paths, p], rules)));
  }, 120_000);
});

describe('rules', () => {
  it('a change is refused without reclassify, and leaves the store as it was', async () => {
    const rules = parseRules('grain: week\nlapseLimit: 2\n', 'rules.yaml');
    const paths = files(batchesByPeriod(bookings(31, 40, 42), 'week'), 'rules');
    const dir = fresh('rules');
    await updateStore({ dir, files: paths.slice(0, 4), rules });
    const before = await fingerprint(dir);
    const other = parseRules('grain: week\nlapseLimit: 3\n', 'rules.yaml');
    const e = await updateStore({ dir, files: paths.slice(4), rules: other }).then(() => undefined, (x: unknown) => x);
    expect(e).toBeInstanceOf(TidemarkError);
    expect((e as TidemarkError).code).toBe('USAGE');
    expect((e as TidemarkError).message).toMatch(/lapseLimit 2 → 3/);
    expect(await fingerprint(dir)).toBe(before);
    // reclassify: the store equals a full run under the new rules; later updates keep them
    const r = await updateStore({ dir, files: paths.slice(4, 5), rules: other, reclassify: true });
    expect(r.mode).toBe('reclassify');
    expect(JSON.stringify((await readStore(dir)).waist)).toBe(JSON.stringify(await fullWaist(paths.slice(0, 5), other)));
    const r2 = await updateStore({ dir, files: paths.slice(5) });
    expect(r2.mode).toBe('extend');
    expect(JSON.stringify((await readStore(dir)).waist)).toBe(JSON.stringify(await fullWaist(paths, other)));
  }, 120_000);
});

describe('what a full run counts beyond the states', () => {
  it('rejected rows (skipped and counted), rows that are no key events, a file with no row to use', async () => {
    const rules = parseRules('grain: week\nlapseLimit: 2\nactivity:\n  keyEvents: [booking_made, checked_in]\n', 'rules.yaml');
    const batches = batchesByPeriod(bookings(41, 40, 49), 'week');
    const paths = files(batches, 'rows');
    // a file with bad rows, and one with nothing but viewing events
    const bad = t.file('rows-bad.csv', `${bookingsCsv(batches[2]).trimEnd()}\nm1,not a time,booking_made,pro\nm2,2026-05-01T10:00:00Z\n\nm3,"2026-05-01T10:00:00Z"x,booking_made,pro\n`);
    const quiet = t.file('rows-quiet.csv', 'user_id,timestamp,event,plan\nm1,2026-04-01T10:00:00Z,profile_viewed,pro\n');
    const order = [paths[0], paths[1], bad, quiet, ...paths.slice(3)];
    const dir = fresh('rows');
    for (const [i, p] of order.entries()) await updateStore({ dir, files: [p], rules: i === 0 ? rules : undefined, read: { skipBadRows: true } });
    const full = await fullWaist(order, rules, true);
    expect(full.manifest.rows.rejected).toEqual({ 'bad timestamp': 1, 'wrong number of fields': 1, 'stray quote': 1 });
    expect(full.manifest.rows.notKeyEvent).toBeGreaterThan(0);
    const got = (await readStore(dir)).waist;
    expect(firstDiff(got, full)).toBeUndefined();
  }, 120_000);

  it('a bad row without skipping refuses the file, and nothing of it is kept', async () => {
    const rules = parseRules('grain: week\nlapseLimit: 2\n', 'rules.yaml');
    const paths = files(batchesByPeriod(bookings(42, 30, 28), 'week'), 'refuse');
    const dir = fresh('refuse');
    await updateStore({ dir, files: paths.slice(0, 2), rules });
    const before = await fingerprint(dir);
    const bad = t.file('refuse-bad.csv', 'user_id,timestamp,event,plan\nm1,2026-06-01T10:00:00Z,booking_made,pro\nm2,yesterday,booking_made,pro\n');
    const e = await updateStore({ dir, files: [paths[2], bad] }).then(() => undefined, (x: unknown) => x);
    expect((e as TidemarkError).code).toBe('EVENTS_BAD_ROW');
    expect((e as TidemarkError).where).toMatchObject({ file: bad, line: 3 });
    expect(await fingerprint(dir)).toBe(before);
  }, 60_000);
});

describe('a warm-up longer than the stored periods', () => {
  it('keeps no waist until a period is past it, then equals the full run', async () => {
    const rules = parseRules('grain: week\nlapseLimit: 2\nwarmup: 3\n', 'rules.yaml');
    const paths = files(batchesByPeriod(bookings(51, 30, 42), 'week'), 'warm');
    const dir = fresh('warm');
    const r = await updateStore({ dir, files: paths.slice(0, 2), rules });
    expect(r.waist).toBeNull();
    expect(r.digest).toBeNull();
    const fromStore = await readStore(dir).then(() => undefined, (x: unknown) => x as TidemarkError);
    const fromRun = await fullWaist(paths.slice(0, 2), rules).then(() => undefined, (x: unknown) => x as TidemarkError);
    expect(fromStore?.code).toBe('RANGE_INVALID');
    expect(fromStore?.oneLine()).toBe(fromRun?.oneLine());
    await updateStore({ dir, files: paths.slice(2) });
    expect(JSON.stringify((await readStore(dir)).waist)).toBe(JSON.stringify(await fullWaist(paths, rules)));
  }, 60_000);
});

describe('storeEvents', () => {
  it('gives the stored events as files the memory engine classifies as the store did, with the store\'s rules', async () => {
    const rules = parseRules('grain: week\nlapseLimit: 1\ncolumns: { user: member }\n', 'rules.yaml');
    const batches = batchesByPeriod(bookings(61, 40, 42), 'week');
    const paths = batches.map((b, i) => t.file(`se-${i}.csv`, bookingsCsv(b).replace('user_id,', 'member,').replace(/,pro\n/g, ',"pro, ""plus"""\n')));
    const dir = fresh('se');
    for (const [i, p] of paths.entries()) await updateStore({ dir, files: [p], rules: i === 0 ? rules : undefined });
    const { source, rules: stored, cleanup } = await storeEvents(dir);
    try {
      expect(stored).toEqual(rules);
      const { waist } = await createEngine('memory').run(source, stored);
      const mine = (await readStore(dir)).waist;
      expect(JSON.stringify(waist.tables)).toBe(JSON.stringify(mine.tables));
      expect(waist.manifest.attributes).toEqual(mine.manifest.attributes);
      const direct = await createEngine('memory').run(filesSource(paths), rules);
      expect(JSON.stringify(direct.waist.tables)).toBe(JSON.stringify(waist.tables));
    } finally {
      cleanup();
    }
  }, 60_000);
});

describe('per-user state', () => {
  it('the users view holds what the per-user reference says of each user after the last week, update after update', async () => {
    const ref: RefRules = { grain: 'week', lapseLimit: 2 };
    const rules = parseRules('grain: week\nlapseLimit: 2\n', 'rules.yaml');
    const events = bookings(71, 60, 63);
    const paths = files(batchesByPeriod(events, 'week'), 'users');
    const dir = fresh('users');
    for (const p of paths) await updateStore({ dir, files: [p], rules });
    const r = refClassify(events.map((e) => ({ user: e.user, timestamp: new Date(e.ms).toISOString(), event: e.event })), ref);
    const last = r.periods.length - 1;
    const expected = [...r.states].map(([user, st]) => {
      const first = st.findIndex((x) => x !== null);
      const active = (x: string | null) => x === 'fresh' || x === 'engaged' || x === 'returned';
      let lastActive = last;
      while (!active(st[lastActive])) lastActive--;
      const dormant = st.indexOf('dormant');
      return {
        id: user, first_period: r.periods[first], state: st[last], previous_state: st[last - 1] ?? null, last_active: r.periods[lastActive],
        quiet: Math.min(last - lastActive, 2), tenure: last - first, first_dormant: dormant < 0 ? null : r.periods[dormant],
        attributes: JSON.stringify({ plan: events.find((e) => e.user === user)!.plan }),
      };
    }).sort((a, b) => (a.id < b.id ? -1 : 1));
    const { db } = await openStore(dir);
    try {
      const got = (await db.con.runAndReadAll("SELECT id, strftime(first_period, '%Y-%m-%d') AS first_period, state, previous_state, strftime(last_active, '%Y-%m-%d') AS last_active, quiet, tenure, strftime(first_dormant, '%Y-%m-%d') AS first_dormant, attributes FROM users ORDER BY id")).getRowObjectsJson();
      expect(got).toEqual(expected);
    } finally {
      db.close();
    }
  }, 120_000);
});
