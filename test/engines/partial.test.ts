/**
 * An incomplete last period is left out of the waist an analysis reads (src/waist/derive.ts), from the
 * waist the engine made of the log it holds: the tables equal those of the same log with that period's
 * rows removed before reading (an independent filter in the test), and the row accounting says how
 * many rows it held.
 */
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { runOnLog } from '../../src/engines/memory/index.js';
import type { RangeOptions } from '../../src/engines/types.js';
import type { EventLog } from '../../src/ingest/eventLog.js';
import { analysisWaist } from '../../src/waist/derive.js';
import type { RowAccount } from '../../src/ingest/eventLog.js';
import { readEvents } from '../../src/ingest/read.js';
import { parseRules } from '../../src/rules/load.js';
import { tempDir } from '../report/fixtures.js';

const dir = tempDir('tidemark-partial-');
const rules = parseRules('grain: week\nweekStart: monday\nlapseLimit: 2\n');
const MONDAY = Date.UTC(2026, 4, 4); // 2026-05-04, a Monday
/** A time in week w on weekday d (0 = Monday) at hour h, UTC. */
const at = (w: number, d: number, h = 10) => new Date(MONDAY + ((w * 7 + d) * 24 + h) * 3_600_000).toISOString();

let files = 0;
async function logOf(rows: [string, string][]) {
  const f = join(dir, `e${files++}.csv`);
  writeFileSync(f, ['user_id,timestamp,event', ...rows.map(([u, t]) => `${u},${t},booking_made`)].join('\n'));
  return readEvents([f], { rules });
}

/** What an analysis reads: left out unless `keep`; `leftOut` says whether it was. */
async function analysed(log: EventLog, range: RangeOptions = {}, keep = false) {
  const full = (await runOnLog(log, rules, range)).waist;
  const { waist, dropped } = analysisWaist(full, { includePartial: keep });
  return { waist: waist.tables, rows: waist.manifest.rows as unknown as RowAccount, users: waist.manifest.users, lastPeriod: { ...full.manifest.lastPeriod, leftOut: dropped !== undefined } };
}

/** read = used + notKeyEvent + afterRange + partial + Σ rejected (the identity of RowAccount). */
function balanced(r: RowAccount): boolean {
  return r.read === r.used + r.notKeyEvent + r.afterRange + r.partial + Object.values(r.rejected).reduce((a, b) => a + (b ?? 0), 0);
}

describe('leaving out an incomplete last period', () => {
  it('gives the tables of the log without that period, and counts its rows (seeded random logs)', async () => {
    // members active in weeks 0 … W−1 on any weekday; in week W only on Monday morning (the data stop
    // there: 1/7 of the way through at most, so the week is incomplete)
    const member = fc.record({ weeks: fc.uniqueArray(fc.integer({ min: 0, max: 7 }), { minLength: 1, maxLength: 6 }), day: fc.integer({ min: 0, max: 6 }) });
    await fc.assert(
      fc.asyncProperty(fc.integer({ min: 3, max: 7 }), fc.array(member, { minLength: 2, maxLength: 30 }), async (W, members) => {
        const rows: [string, string][] = [];
        members.forEach((m, i) => m.weeks.filter((w) => w <= W).forEach((w) => rows.push([`m${i}`, w === W ? at(w, 0, 1 + (i % 5)) : at(w, m.day)])));
        // the range runs from week 0 to week W, and without week W to week W − 1
        rows.push(['anchor', at(0, 0)], ['anchor', at(W - 1, 6, 20)], ['anchor', at(W, 0, 0)]);
        const dropped = await logOf(rows);
        const r = await analysed(dropped);
        const inLast = rows.filter(([, t]) => t >= at(W, 0, 0)).length;
        const without = await analysed(await logOf(rows.filter(([, t]) => t < at(W, 0, 0))), {}, true);
        expect(r.lastPeriod).toMatchObject({ label: at(W, 0, 0).slice(0, 10), complete: false, leftOut: true });
        expect(r.waist).toEqual(without.waist);
        expect(r.users).toBe(without.users);
        expect(r.rows.partial).toBe(inLast);
        expect(r.rows.used).toBe(rows.length - inLast);
        expect(balanced(r.rows)).toBe(true);
      }),
      { seed: 7, numRuns: 25 },
    );
  }, 30_000); // a bound on a hang (25 logs, read from disk), not a timing assertion

  it('keeps it when asked, and then says it is incomplete', async () => {
    const log = await logOf([['a', at(0, 2)], ['a', at(1, 2)], ['b', at(2, 3)], ['a', at(3, 0)]]);
    const r = await analysed(log, {}, true);
    expect(r.lastPeriod).toMatchObject({ label: '2026-05-25', complete: false, leftOut: false });
    expect(r.waist.periods).toHaveLength(4);
    expect(r.rows).toMatchObject({ read: 4, used: 4, partial: 0 });
  });

  it('a last period with an event in its last seventh is complete and stays', async () => {
    const log = await logOf([['a', at(0, 2)], ['a', at(1, 2)], ['b', at(2, 3)], ['a', at(3, 6, 12)]]);
    const r = await analysed(log);
    expect(r.lastPeriod).toMatchObject({ complete: true, leftOut: false });
    expect(r.waist.periods).toHaveLength(4);
  });

  it('a --to period that the data run past is complete, even when its own events stop early', async () => {
    // week 2 has one Monday event only, but week 3 holds events: the data did not stop in week 2
    const rows: [string, string][] = [['a', at(0, 2)], ['a', at(1, 2)], ['b', at(2, 0)], ['a', at(3, 4)], ['b', at(3, 5)]];
    const f = join(dir, 'to.csv');
    writeFileSync(f, ['user_id,timestamp,event', ...rows.map(([u, t]) => `${u},${t},booking_made`)].join('\n'));
    const toKey = 2942; // the week of 2026-05-18: floor((20591 + 3) / 7), 2026-05-18 being day 20591
    const log = await readEvents([f], { rules, toKey });
    expect(log.rows.afterRange).toBe(2);
    const r = await analysed(log, { to: '2026-05-18' });
    expect(r.lastPeriod).toMatchObject({ label: '2026-05-18', complete: true, leftOut: false });
    expect(r.waist.periods).toEqual(['2026-05-04', '2026-05-11', '2026-05-18']);
    expect(balanced(r.rows)).toBe(true);
  });

  it('is kept when leaving it out would leave fewer than two periods, or none past the warm-up', async () => {
    const two = await logOf([['a', at(0, 2)], ['a', at(1, 0)]]);
    expect((await analysed(two)).lastPeriod).toMatchObject({ complete: false, leftOut: false });
    const three = await logOf([['a', at(0, 2)], ['a', at(1, 2)], ['a', at(2, 0)]]);
    expect((await analysed(three)).lastPeriod.leftOut).toBe(true);
    const warm = await analysed(three, { warmup: 2 });
    expect(warm.lastPeriod.leftOut).toBe(false);
    expect(warm.rows.partial).toBe(0);
  });
});
