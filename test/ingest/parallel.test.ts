/**
 * Reading a file in two parts (this thread up to a line start, another reader from there) must give
 * what one reader gives: the same log, codes, accounting, lines and extremes, or the same first error.
 * The reference is the one-thread read of the same bytes. Cases: valid files, and files with quoted
 * line breaks, stray quotes, invalid UTF-8 and other damage placed anywhere (the split often lands
 * inside a quoted field, where the two-part read must notice and read on alone), split at every kind of
 * offset; with and without --skip-bad-rows. The second part is read on this thread (readPartHere,
 * what the worker runs); one case runs a real worker thread.
 */
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import fc from 'fast-check';
import { afterAll, describe, expect, it } from 'vitest';
import { TidemarkError } from '../../src/errors.js';
import type { EventLog } from '../../src/ingest/eventLog.js';
import { headerPlan } from '../../src/ingest/header.js';
import { DEFAULT_LIMITS } from '../../src/ingest/limits.js';
import { readPartHere, twoThreadSplit } from '../../src/ingest/parallel.js';
import { readEvents, type ReadEventsOptions } from '../../src/ingest/read.js';
import { lastPeriodOf } from '../../src/ingest/lastPeriod.js';
import { activePeriods } from '../../src/lifecycle/activity.js';
import { runOnLog } from '../../src/engines/memory/index.js';
import { rulesOf, tempDir } from '../core/helpers.js';
import { rfc4180Write } from './helpers.js';

const t = tempDir();
afterAll(() => t.done());
let n = 0;

/** A log as plain data (the extremes' line resolvers made into lines). */
function plain(log: EventLog) {
  const rows = (list: EventLog['extremes']['earliest']) => list.map((r) => [r.wallMs, r.text, r.file, r.lineOf(r.ref)]);
  return { ...log, extremes: { earliest: rows(log.extremes.earliest), latest: rows(log.extremes.latest) } };
}

async function outcome(file: string, opts: ReadEventsOptions): Promise<unknown> {
  try {
    return plain(await readEvents([file], opts));
  } catch (e) {
    if (!(e instanceof TidemarkError)) throw e;
    return { code: e.code, message: e.message, where: e.where, hint: e.hint };
  }
}

const rules = rulesOf({ grain: 'week', lapseLimit: 2, keyEvents: ['booking', 'checked_in'] });
const id = fc.constantFrom('m1', 'm2', 'm3', 'José', 'a,b', 'q"uote', 'x\ny', ' ');
const ts = fc.integer({ min: 1, max: 60 }).map((d) => new Date(Date.UTC(2026, 2, 1) + d * 86_400_000 + d * 3_600_123).toISOString());
const event = fc.constantFrom('booking', 'checked_in', 'browse', '');
const row = fc.tuple(id, fc.oneof(ts, fc.constantFrom('2026-03-04 10:00:00', '1777919400', 'not a time')), event, fc.constantFrom('pro', 'hobby', '', 'note\n"x"'));
const damage = fc.array(fc.tuple(fc.nat(10_000), fc.constantFrom('"', '\n', ',', '\r\n', '\xff', '\u0000', '')), { maxLength: 4 });

function fileOf(rows: [string, string, string, string][], dmg: [number, string][]): Buffer {
  let b = Buffer.from(rfc4180Write([['user_id', 'timestamp', 'event', 'plan'], ...rows], { eol: '\n', finalEol: true }));
  const headerEnd = b.indexOf(10) + 1;
  for (const [where, what] of dmg) {
    const at = headerEnd + Math.floor((where / 10_001) * (b.length - headerEnd));
    const ins = what === '\xff' ? Buffer.from([0xff]) : Buffer.from(what);
    b = Buffer.concat([b.subarray(0, at), ins, b.subarray(what === '' ? at + 1 : at)]);
  }
  return b;
}

describe('two-part reading', () => {
  it('gives the one-thread log or error, wherever the split falls (fast-check)', async () => {
    let split = 0, alone = 0;
    await fc.assert(
      fc.asyncProperty(fc.array(row, { minLength: 1, maxLength: 40 }), damage, fc.nat(10_000), fc.boolean(), async (rows, dmg, where, skipBadRows) => {
        const bytes = fileOf(rows, dmg);
        const file = join(t.dir, `p${n++}.csv`);
        writeFileSync(file, bytes);
        const near = Math.floor((where / 10_001) * bytes.length);
        const one = await outcome(file, { rules, skipBadRows, parallel: false });
        let used = false;
        const two = await outcome(file, {
          rules,
          skipBadRows,
          parallel: { minBytes: 0, splitNear: () => near, readPart: (job) => ((used = true), readPartHere(job)) },
        });
        expect(two).toEqual(one);
        if (used) split++;
        else alone++;
      }),
      { seed: 2026, numRuns: 400 },
    );
    // both ways are exercised: a split handed to the second reader, and none (no line start after it)
    expect(split).toBeGreaterThan(100);
    expect(alone).toBeGreaterThan(0);
  }, 60_000);

  it('a real worker thread reads the second part: the same log as one thread', async () => {
    const lines = ['user_id,timestamp,event,plan'];
    for (let i = 0; i < 20_000; i++) lines.push(`m${(i * 7919) % 3001},${new Date(Date.UTC(2026, 0, 5) + ((i * 104_729) % 5_000_000) * 3600).toISOString()},${i % 3 ? 'booking' : 'browse'},${i % 5 ? 'pro' : '"hob""by"'}`);
    const file = t.file('worker.csv', `${lines.join('\n')}\n`);
    const one = await outcome(file, { rules, parallel: false });
    const two = await outcome(file, { rules, parallel: { minBytes: 0, splitNear: (size) => size / 2 } });
    expect(two).toEqual(one);
    // and the worker itself answers (a worker that cannot start would leave this thread to read alone)
    const start = Buffer.from(`${lines.slice(0, 10_001).join('\n')}\n`).length;
    const plan = headerPlan(['user_id', 'timestamp', 'event', 'plan'], rules.columns, true, file);
    const got = await twoThreadSplit({ rules, skipBadRows: false })!.readPart({ file, start, plan, delimiter: ',', limits: DEFAULT_LIMITS }).result;
    expect(got.ok && got.partial.user.length).toBe(6_667); // rows 10,001–20,000 less the 'browse' ones (i % 3 = 0)
  }, 30_000); // a bound on a worker that never answers

  it('a read for the waist only (waistOnly) equals the full read less its wall-clock and attribute columns, on one thread or two, and gives the same last period and waist (fast-check; the full read is the reference)', async () => {
    /** The full log as a waistOnly read should give it: no wall clock and no attribute code per row. */
    const lean = (full: unknown) => {
      if (!full || typeof full !== 'object' || !('wallMs' in full)) return full; // an error: the same one
      const log = full as EventLog;
      return { ...log, wallMs: new Float64Array(0), attributes: log.attributes.map((a) => ({ ...a, codes: new Int32Array(0) })) };
    };
    await fc.assert(
      fc.asyncProperty(fc.array(row, { minLength: 1, maxLength: 40 }), damage, fc.nat(10_000), fc.boolean(), async (rows, dmg, where, skipBadRows) => {
        const bytes = fileOf(rows, dmg);
        const file = join(t.dir, `w${n++}.csv`);
        writeFileSync(file, bytes);
        const near = Math.floor((where / 10_001) * bytes.length);
        const full = await outcome(file, { rules, skipBadRows, parallel: false });
        const split = { minBytes: 0, splitNear: () => near, readPart: readPartHere };
        expect(await outcome(file, { rules, skipBadRows, parallel: false, waistOnly: true })).toEqual(lean(full));
        expect(await outcome(file, { rules, skipBadRows, parallel: split, waistOnly: true })).toEqual(lean(full));
        if (!full || typeof full !== 'object' || !('wallMs' in full)) return;
        // the last period's coverage: from the latest row when there is no wall-clock column, from the column otherwise
        const a = await readEvents([file], { rules, skipBadRows, parallel: false });
        const b = await readEvents([file], { rules, skipBadRows, parallel: split, waistOnly: true });
        let minKey = Infinity, maxKey = -Infinity;
        for (let i = 0; i < a.size; i++) {
          minKey = Math.min(minKey, a.period[i]);
          maxKey = Math.max(maxKey, a.period[i]);
        }
        // the key range told by the earliest and latest rows is the rows' own
        expect(a.keyRange).toEqual({ min: minKey, max: maxKey });
        expect(b.keyRange).toEqual({ min: minKey, max: maxKey });
        for (const k of [maxKey - 1, maxKey, maxKey + 1]) {
          expect(lastPeriodOf(b, k, b.scheme)).toEqual(lastPeriodOf(a, k, a.scheme));
          // the last period's rows as the activity count gives them (grid, blocked grid, sort): no pass over the rows
          for (const [grid, bits] of [[true, 0], [true, 1], [false, 0]] as const) {
            const counted = activePeriods(b, 2, minKey, k - minKey + 1, grid, bits).lastRows;
            expect(lastPeriodOf(b, k, b.scheme, counted)).toEqual(lastPeriodOf(a, k, a.scheme));
          }
        }
        const waist = (await runOnLog(a, rules)).waist;
        expect((await runOnLog(b, rules)).waist).toEqual(waist);
        // and the engine's own run, which spends the log's columns (last: b is spent after it)
        expect((await runOnLog(b, rules, {}, { spendLog: true })).waist).toEqual(waist);
      }),
      { seed: 2027, numRuns: 150 },
    );
  }, 60_000);

  it('a real worker thread reads the second part for the waist only: the same log as one thread', async () => {
    const lines = ['user_id,timestamp,event,plan'];
    for (let i = 0; i < 20_000; i++) lines.push(`m${(i * 7919) % 3001},${new Date(Date.UTC(2026, 0, 5) + ((i * 104_729) % 5_000_000) * 3600).toISOString()},${i % 3 ? 'booking' : 'browse'},${i % 5 ? 'pro' : '"hob""by"'}`);
    const file = t.file('worker-waist.csv', `${lines.join('\n')}\n`);
    const one = await outcome(file, { rules, parallel: false, waistOnly: true });
    const two = await outcome(file, { rules, parallel: { minBytes: 0, splitNear: (size) => size / 2 }, waistOnly: true });
    expect(two).toEqual(one);
    expect((one as EventLog).size).toBe(13_333);
    expect((one as EventLog).wallMs.length).toBe(0);
  }, 30_000);

  it('a split offset that is not a whole number (size / 4) is taken as its floor: the same log as one thread, past the first chunk too', async () => {
    const lines = ['user_id,timestamp,event,plan'];
    for (let i = 0; i < 40_000; i++) lines.push(`m${(i * 7919) % 3001},${new Date(Date.UTC(2026, 0, 5) + ((i * 104_729) % 5_000_000) * 3600).toISOString()},${i % 3 ? 'booking' : 'browse'},pro`);
    const text = `${lines.join('\n')}\n`;
    expect(text.length % 4).not.toBe(0);
    const file = t.file('fraction.csv', text);
    const one = await outcome(file, { rules, parallel: false });
    expect(await outcome(file, { rules, parallel: { minBytes: 0, splitNear: (size) => size / 4, readPart: readPartHere } })).toEqual(one);
  });
});
