/**
 * Fuzzing the CSV and NDJSON readers with fast-check (seeded): arbitrary bytes, and structured
 * mutations of valid files (quotes, delimiters, line breaks, invalid UTF-8, NULs, huge fields). Every
 * outcome is either a log whose accounting identities hold (rows, and lines: lines read equals the
 * file's physical line count) or a TidemarkError with a clean one-line message — never another
 * exception. Each case has a time bound (fast-check's per-run `timeout`).
 */
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import fc from 'fast-check';
import { afterAll, describe, expect, it } from 'vitest';
import { TidemarkError } from '../../src/errors.js';
import { readEvents } from '../../src/ingest/read.js';
import type { EventLog } from '../../src/ingest/eventLog.js';
import { rulesOf, tempDir } from '../core/helpers.js';
import { expectBalanced, physicalLines, rfc4180Write } from './helpers.js';

const t = tempDir();
afterAll(() => t.done());
let n = 0;

const rules = rulesOf({ grain: 'day', lapseLimit: 2 });
/** Bounds lowered so that small cases reach them; small chunks so that records cross refills. */
const limits = fc.record({ maxRecordBytes: fc.constantFrom(200, 4096, 1 << 20), maxQuotedLines: fc.constantFrom(1, 3, 64), chunk: fc.constantFrom(16, 61, 4096) });

/** Read `bytes` as `ext`; check the contract; return the log (undefined after a TidemarkError). */
async function outcome(bytes: Uint8Array, ext: 'csv' | 'ndjson', skipBadRows: boolean, lim: { maxRecordBytes: number; maxQuotedLines: number; chunk: number }): Promise<EventLog | undefined> {
  const f = join(t.dir, `case${n++}.${ext}`);
  writeFileSync(f, bytes);
  try {
    const log = await readEvents([f], { rules, skipBadRows, limits: lim });
    expectBalanced(log.rows);
    expect(log.rows.lines.read).toBe(physicalLines(bytes));
    return log;
  } catch (err) {
    if (!(err instanceof TidemarkError)) throw err;
    // eslint-disable-next-line no-control-regex
    expect(err.oneLine()).not.toMatch(/[\u0000-\u001f\u007f]/);
    return undefined;
  }
}

// --- valid files and their mutations
const id = fc.constantFrom('m1', 'm2', 'José', 'a,b', 'q"uote', '🛠 7', 'x\ny');
const day = fc.integer({ min: 1, max: 28 }).map((d) => `2026-03-${String(d).padStart(2, '0')}T10:00:00Z`);
const event = fc.constantFrom('booking', 'checked_in', 'tool, reservation');
const events = fc.array(fc.tuple(id, day, event, fc.constantFrom('pro', 'hobby', '', 'long "note", ok')), { minLength: 1, maxLength: 30 });

type Mutation = [number, string];
const ops = ['quote', 'delete', 'delimiter', 'lf', 'crlf', 'cr', 'badutf8', 'surrogate', 'nul', 'huge', 'brace'] as const;
// positions spread evenly (no bias towards the ends); one mutation in ten may land in the header line
const mutation: fc.Arbitrary<Mutation> = fc.tuple(fc.noBias(fc.integer({ min: 0, max: 10_000 })), fc.constantFrom(...ops, 'quote', 'delete', 'delimiter', 'lf'));

function mutate(bytes: Uint8Array, muts: Mutation[], headerEnd: number): Uint8Array {
  let b = Buffer.from(bytes);
  for (const [where, op] of muts) {
    const from = where % 10 === 0 ? 0 : headerEnd;
    const at = Math.min(b.length, from + Math.floor((where / 10_001) * (b.length - from + 1)));
    const insert = (x: Uint8Array | string) => {
      b = Buffer.concat([b.subarray(0, at), Buffer.from(x), b.subarray(at)]);
    };
    if (op === 'delete') b = Buffer.concat([b.subarray(0, at), b.subarray(at + 1)]);
    else if (op === 'quote') insert('"');
    else if (op === 'delimiter') insert(',');
    else if (op === 'lf') insert('\n');
    else if (op === 'crlf') insert('\r\n');
    else if (op === 'cr') insert('\r');
    else if (op === 'badutf8') insert(Uint8Array.from([0xff]));
    else if (op === 'surrogate') insert(Uint8Array.from([0xed, 0xa0, 0x80]));
    else if (op === 'nul') insert(Uint8Array.from([0]));
    else if (op === 'huge') insert('w'.repeat(5000));
    else insert('{');
  }
  return b;
}

const csvOf = (rows: [string, string, string, string][], quoteAll: boolean, eol: string) =>
  Buffer.from(rfc4180Write([['user_id', 'timestamp', 'event', 'plan'], ...rows], { quoteAll, eol, finalEol: true }));
const ndjsonOf = (rows: [string, string, string, string][]) =>
  Buffer.from(`${rows.map(([u, ts, e, p], i) => (i % 3 === 0 && /^m\d$/.test(u) ? `{"user_id":${u.slice(1)},"timestamp":"${ts}","event":${JSON.stringify(e)},"plan":${JSON.stringify(p)}}` : JSON.stringify({ user_id: u, timestamp: ts, event: e, plan: p }))).join('\n')}\n`);

const RUN = { seed: 8, numRuns: 1000, timeout: 5_000 };

describe('CSV reader', () => {
  it('an unmutated file reads back whole', async () => {
    await fc.assert(
      fc.asyncProperty(events, fc.boolean(), fc.constantFrom('\n', '\r\n'), async (rows, quoteAll, eol) => {
        const log = await outcome(csvOf(rows, quoteAll, eol), 'csv', false, { maxRecordBytes: 1 << 20, maxQuotedLines: 64, chunk: 37 });
        expect(log && Array.from(log.user, (u) => log.users[u])).toEqual(rows.map((r) => r[0]));
      }),
      { ...RUN, numRuns: 100 },
    );
  });

  it('structured mutations: a balanced result or a TidemarkError, with and without --skip-bad-rows', async () => {
    // huge fields meet the byte bound (200 bytes, 4 KiB or 1 MiB); NULs always refuse the file
    let results = 0;
    await fc.assert(
      fc.asyncProperty(events, fc.boolean(), fc.array(mutation, { minLength: 1, maxLength: 6 }), fc.boolean(), limits, async (rows, quoteAll, muts, skip, lim) => {
        const file = csvOf(rows, quoteAll, '\n');
        if (await outcome(mutate(file, muts, file.indexOf(10) + 1), 'csv', skip, lim)) results++;
      }),
      RUN,
    );
    // the mutations leave enough files readable for the identities to be tested on real results
    expect(results).toBeGreaterThan(RUN.numRuns / 4);
  }, 120_000); // a bound on the whole property (1,000 cases, a few ms each)

  it('arbitrary bytes: the same', async () => {
    await fc.assert(
      fc.asyncProperty(fc.uint8Array({ maxLength: 400 }), fc.boolean(), limits, async (bytes, skip, lim) => {
        await outcome(bytes, 'csv', skip, lim);
        await outcome(Buffer.concat([Buffer.from('user_id,timestamp,event\n'), bytes]), 'csv', skip, lim);
      }),
      RUN,
    );
  }, 120_000);
});

describe('NDJSON reader', () => {
  it('an unmutated file reads back whole, numeric ids included', async () => {
    await fc.assert(
      fc.asyncProperty(events, async (rows) => {
        const log = await outcome(ndjsonOf(rows), 'ndjson', false, { maxRecordBytes: 1 << 20, maxQuotedLines: 64, chunk: 37 });
        expect(log && Array.from(log.user, (u) => log.users[u])).toEqual(rows.map(([u], i) => (i % 3 === 0 && /^m\d$/.test(u) ? u.slice(1) : u)));
      }),
      { ...RUN, numRuns: 100 },
    );
  });

  it('structured mutations and arbitrary bytes: a balanced result or a TidemarkError', async () => {
    let results = 0;
    await fc.assert(
      fc.asyncProperty(events, fc.array(mutation, { minLength: 1, maxLength: 6 }), fc.boolean(), limits, fc.uint8Array({ maxLength: 300 }), async (rows, muts, skip, lim, bytes) => {
        if (await outcome(mutate(ndjsonOf(rows), muts, 0), 'ndjson', skip, lim)) results++;
        await outcome(bytes, 'ndjson', skip, lim);
      }),
      RUN,
    );
    expect(results).toBeGreaterThan(RUN.numRuns / 4);
  }, 120_000);
});
