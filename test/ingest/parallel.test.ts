/**
 * Reading a file in two parts (this thread up to a line start, another reader from there) must give
 * what one reader gives: the same log, codes, accounting, lines and extremes, or the same first error.
 * The reference is the one-thread read of the same bytes. Cases: valid files, and files with quoted
 * line breaks, stray quotes, invalid UTF-8 and other damage placed anywhere (the split often lands
 * inside a quoted field, where the two-part read must notice and read on alone), split at every kind of
 * offset; with and without --skip-bad-rows. The second part is read on this thread (readPartHere,
 * what the worker runs); one case runs a real worker thread.
 *
 * The split that balances itself (this thread asks the worker to stop at a later line start and reads
 * from there itself) is held to the same reference: the take-over offset, the moment the worker sees
 * the request (before it starts, after it has read past the offset, never) and the chunk size are
 * chosen by the test, so every way it can go is exercised: the worker stops there and the third part
 * is used, or it is past the offset or a record runs across it and it reads on to the end.
 */
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import fc from 'fast-check';
import { afterAll, describe, expect, it } from 'vitest';
import { TidemarkError } from '../../src/errors.js';
import type { EventLog } from '../../src/ingest/eventLog.js';
import { headerPlan } from '../../src/ingest/header.js';
import { DEFAULT_LIMITS } from '../../src/ingest/limits.js';
import { PartSignal } from '../../src/ingest/csv.js';
import { readPartHere, twoThreadSplit, type PartReader } from '../../src/ingest/parallel.js';
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

  describe('a split that balances itself', () => {
    // no NUL byte: a NUL refuses the file when the chunk holding it is read, before that chunk's rows, so
    // with small chunks a part that starts elsewhere may name it before a bad row just ahead of it (by
    // design, see DEVELOPERS.md: both ways refuse the file)
    const damageNoNul = fc.array(fc.tuple(fc.nat(10_000), fc.constantFrom('"', '\n', ',', '\r\n', '\xff', '')), { maxLength: 4 });
    // mostly good rows (the bad ones of `row` now and then), so that the first bad row falls in any part
    const good = fc.tuple(fc.constantFrom('m1', 'm2', 'm3', 'José', 'a,b'), ts, fc.constantFrom('booking', 'checked_in', 'browse'), fc.constantFrom('pro', 'hobby', 'note\n"x"'));
    const rowsOf = fc.array(fc.oneof({ weight: 12, arbitrary: good }, { weight: 1, arbitrary: row }), { minLength: 1, maxLength: 60 });
    const at = (frac: number, from: number, to: number) => from + Math.floor((frac / 10_001) * (to - from));
    /** The 1-based physical line of byte `offset`. */
    const lineOf = (b: Buffer, offset: number) => {
      let n = 1;
      for (let i = b.indexOf(10); i >= 0 && i < offset; i = b.indexOf(10, i + 1)) n++;
      return n;
    };

    it('gives the one-thread log, waist or first error wherever the split and the take-over fall and whenever the worker sees it (fast-check)', async () => {
      const paths = { stopped: 0, readOn: 0, straddled: 0, errorInWorker: 0, errorInThird: 0, skippedInThird: 0 };
      await fc.assert(
        fc.asyncProperty(
          rowsOf, damageNoNul, fc.nat(10_000), fc.nat(10_000), fc.option(fc.nat(10_000), { nil: undefined }),
          fc.constantFrom(16, 64, 1 << 20), fc.boolean(), fc.boolean(),
          async (rows, dmg, where, where2, seen, chunk, skipBadRows, waistOnly) => {
            const bytes = fileOf(rows, dmg);
            const file = join(t.dir, `b${n++}.csv`);
            writeFileSync(file, bytes);
            const near = at(where, 0, bytes.length);
            const opts = { rules, skipBadRows, waistOnly, limits: { chunk } };
            const one = await outcome(file, { ...opts, parallel: false });
            // the worker (on this thread) starts only once this thread has asked it to stop, or decided not to
            let release!: () => void;
            const gate = new Promise<void>((r) => (release = r));
            let mid = -1, end: number | undefined, workerError = false, thirdSkipped = false, seenFirst: boolean | undefined;
            const readPart: PartReader = async (job, onBytes) => {
              await gate;
              const split = job.part.start;
              const real = new PartSignal(job.part.signal), late = new PartSignal();
              // it sees the request only once it has read up to `seenAt` (never, without `seen`)
              const seenAt = seen === undefined ? Infinity : at(seen, split, bytes.length);
              let readTo = split;
              const got = await readPartHere({ ...job, part: { ...job.part, signal: late.memory } }, (k) => {
                readTo += k;
                if (readTo >= seenAt && real.asked() >= 0) late.ask(real.asked());
                seenFirst ??= late.asked() >= 0;
                onBytes?.(k);
              });
              mid = real.asked();
              if (got.ok) end = got.end;
              else workerError = true;
              return got;
            };
            const readHere: PartReader = async (job, onBytes) => {
              release();
              const got = await readPartHere(job, onBytes);
              thirdSkipped = got.ok && Object.keys(got.partial.rows.rejected).length > 0;
              return got;
            };
            const balanceNear = (size: number, from: number) => {
              const take = at(where2, from, size);
              // as readCsv goes on: a line start at or after it, before the end, or no third part
              const lf = bytes.indexOf(10, Math.max(take, from + 1));
              if (lf < 0 || lf + 1 >= size) release();
              return take;
            };
            const two = await outcome(file, { ...opts, parallel: { minBytes: 0, splitNear: () => near, readPart, readHere, balanceNear } });
            expect(two).toEqual(one);
            // (an error in this thread's part comes before any balancing: the fast-check above and the cases here with no split)
            if (mid < 0) return;
            if (workerError) return void paths.errorInWorker++;
            if (end !== mid) {
              // seen from the worker's first read, it still read on: a record of its runs across mid
              if (seenFirst) paths.straddled++;
              return void paths.readOn++;
            }
            paths.stopped++;
            const isError = one && typeof one === 'object' && 'where' in one;
            if (isError && (one as { where: { line?: number } }).where.line !== undefined) {
              // the first error is past the worker's part: at or after mid's line
              expect((one as { where: { line: number } }).where.line).toBeGreaterThanOrEqual(lineOf(bytes, mid));
              paths.errorInThird++;
            }
            if (thirdSkipped) paths.skippedInThird++;
            if (!waistOnly && one && typeof one === 'object' && 'wallMs' in one) {
              const a = await readEvents([file], { ...opts, parallel: false });
              const b = await readEvents([file], { ...opts, parallel: { minBytes: 0, splitNear: () => near, balanceNear: (size, from) => at(where2, from, size), readPart: readPartHere } });
              expect((await runOnLog(b, rules)).waist).toEqual((await runOnLog(a, rules)).waist);
            }
          },
        ),
        { seed: 2028, numRuns: 800 },
      );
      // every way is exercised: the worker stopped where asked (third part used) or read on past it,
      // and the first error fell in the worker's part or in the third (rows skipped there too)
      expect(paths.stopped).toBeGreaterThan(50);
      expect(paths.readOn).toBeGreaterThan(20);
      expect(paths.straddled).toBeGreaterThan(0);
      expect(paths.errorInWorker).toBeGreaterThan(0);
      expect(paths.errorInThird).toBeGreaterThan(0);
      expect(paths.skippedInThird).toBeGreaterThan(0);
    }, 120_000);

    it('the worker, done first, takes over the end of this thread\'s part: the one-thread log, waist or first error (fast-check)', async () => {
      const paths = { toSplit: 0, toEnd: 0, errorInTaken: 0 };
      await fc.assert(
        fc.asyncProperty(rowsOf, damageNoNul, fc.nat(10_000), fc.nat(10_000), fc.constantFrom(16, 64), fc.boolean(), fc.boolean(), async (rows, dmg, where, where2, chunk, skipBadRows, waistOnly) => {
          const bytes = fileOf(rows, dmg);
          const file = join(t.dir, `r${n++}.csv`);
          writeFileSync(file, bytes);
          const near = at(where, 0, bytes.length);
          const opts = { rules, skipBadRows, waistOnly, limits: { chunk } };
          const one = await outcome(file, { ...opts, parallel: false });
          let calls = 0, split = -1, end: number | undefined, failed = false;
          const readPart: PartReader = async (job, onBytes) => {
            // the worker's own part, read in one chunk: it is done long before this thread (small chunks)
            if (calls++ === 0) return readPartHere({ ...job, part: { ...job.part, limits: { ...job.part.limits, chunk: 1 << 20 } } }, onBytes);
            split = new PartSignal(job.part.signal).asked();
            const got = await readPartHere(job, onBytes);
            if (got.ok) end = got.end;
            else failed = true;
            return got;
          };
          const two = await outcome(file, { ...opts, parallel: { minBytes: 0, splitNear: () => near, readPart, takeNear: (from, to) => at(where2, from, to), balanceNear: () => undefined } });
          expect(two).toEqual(one);
          if (failed) paths.errorInTaken++;
          else if (end !== undefined && end === split) paths.toSplit++;
          else if (end === -1) paths.toEnd++;
        }),
        { seed: 2029, numRuns: 800 },
      );
      // it stopped at the split (the worker's first part follows), or read on to the end (a record ran
      // across the split: the first part is dropped), or its part held the first error
      expect(paths.toSplit).toBeGreaterThan(5);
      expect(paths.toEnd).toBeGreaterThan(0);
      expect(paths.errorInTaken).toBeGreaterThan(0);
    }, 120_000);

    it('a real worker thread asked to stop early, or to take over the end of this thread\'s part: the same log as one thread', async () => {
      const lines = ['user_id,timestamp,event,plan'];
      for (let i = 0; i < 40_000; i++) lines.push(`m${(i * 7919) % 3001},${new Date(Date.UTC(2026, 0, 5) + ((i * 104_729) % 5_000_000) * 3600).toISOString()},${i % 3 ? 'booking' : 'browse'},${i % 5 ? 'pro' : '"hob""by"'}`);
      const file = t.file('worker-balance.csv', `${lines.join('\n')}\n`);
      let asked = 0, taken = 0;
      const parallel = { minBytes: 0, splitNear: (size: number) => size / 4, balanceNear: (size: number, from: number) => (asked++, from + (size - from) / 2) };
      // and the other way: this thread reads 90% in small chunks, the worker (done first) takes over half of what is left
      const reverse = { minBytes: 0, splitNear: (size: number) => size * 0.9, takeNear: (from: number, split: number) => (taken++, from + (split - from) / 2) };
      for (const waistOnly of [false, true]) {
        const one = await outcome(file, { rules, parallel: false, waistOnly });
        expect(await outcome(file, { rules, parallel, waistOnly })).toEqual(one);
        expect(await outcome(file, { rules, parallel: reverse, waistOnly, limits: { chunk: 256 } })).toEqual(one);
      }
      expect(asked).toBeGreaterThan(0);
      expect(taken).toBeGreaterThan(0);
    }, 30_000);
  });
});
