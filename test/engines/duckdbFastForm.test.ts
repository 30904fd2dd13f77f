/**
 * The DuckDB engine's pass for CSV files whose first rows all have their timestamps in the commonest
 * form (`YYYY-MM-DDTHH:MM:SS[.sss]Z`): only that form is read, and a row in any other form, however far
 * down the file, sends the whole pass to the full parse. Checked against the memory engine (the
 * reference semantics, src/ingest/timestamp.ts) on the same files: the waist with its row accounting,
 * and the one-line error of a bad row. Each odd row sits past the rows the engine looks at first.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { runDuckdb } from '../../src/engines/duckdb/run.js';
import { fastTimestampForm, SAMPLE_ROWS } from '../../src/engines/duckdb/source.js';
import { parseRules } from '../../src/rules/load.js';
import type { Rules } from '../../src/rules/schema.js';
import { mulberry32 } from '../stats/prng.js';
import { tempDir } from '../core/helpers.js';
import { comparable, memoryWaist } from './sqlEngines.js';

const t = tempDir();
afterAll(() => t.done());

const CHICAGO = parseRules('grain: week\ntimezone: America/Chicago\nlapseLimit: 1\n');
const UTC = parseRules('grain: week\nlapseLimit: 2\n');
// 2026-02-02 on: crosses the 2026-03-08 change of America/Chicago (IANA tz database)
const START = Date.UTC(2026, 1, 2);

/** A seeded log of `n` rows, timestamps as toISOString() gives them (the fast form, with milliseconds). */
function lines(n: number, seed: number): string[] {
  const rng = mulberry32(seed);
  const out: string[] = [];
  for (let i = 0; i < n; i++) {
    const ms = START + Math.floor(rng() * 90 * 86_400_000);
    out.push(`m${Math.floor(rng() * 300)},${new Date(ms).toISOString()},${['booking_made', 'checked_in'][i % 2]},${['hobby', 'pro'][Math.floor(rng() * 2)]}`);
  }
  return out;
}

function csv(name: string, rows: string[]): string {
  return t.file(name, ['user_id,timestamp,event,plan', ...rows].join('\n') + '\n');
}

/** The duckdb engine's waist and the names of the stages it ran. */
async function duckdb(file: string, rules: Rules, skipBadRows: boolean): Promise<{ waist: unknown; stages: string[] }> {
  const stages: string[] = [];
  const w = await runDuckdb({ files: [file], skipBadRows }, rules, {}, { onStage: (s) => stages.push(s) });
  return { waist: comparable(w), stages };
}

const FULL = 'tm_rowpass (full parse)';

describe('fastTimestampForm, the guess from the first rows', () => {
  it('takes the two shapes JavaScript\'s toISOString and most exporters write, and nothing looser', () => {
    expect(fastTimestampForm('2026-03-05T02:03:31.544Z')).toBe(true);
    expect(fastTimestampForm('2026-03-05T02:03:31Z')).toBe(true);
    for (const s of ['2026-03-05T24:00:00Z', '2026-03-05 02:03:31Z', '2026-03-05T02:03:31.544z', '2026-03-05T02:03:31+00:00', '2026-3-05T02:03:31Z', ' 2026-03-05T02:03:31Z', '2026-03-05T02:03:31.5Z', '1772676211', '2026-03-05', '']) {
      expect(fastTimestampForm(s), s).toBe(false);
    }
  });
});

describe('a file in the fast form gives the memory engine\'s waist in one pass', () => {
  it.each([['UTC', UTC], ['America/Chicago', CHICAGO]])('rules in %s', async (_zone, rules) => {
    const file = csv(`clean-${_zone.replace('/', '-')}.csv`, lines(3000, 11));
    const got = await duckdb(file, rules, false);
    expect(got.stages).toContain('tm_rowpass');
    expect(got.stages).not.toContain(FULL);
    expect(got.waist).toEqual(comparable(await memoryWaist(file, rules)));
  });

  it('a file whose first rows are in another form is read by the full parse from the start (one pass)', async () => {
    const rows = lines(3000, 16).map((r, i) => (i % 7 === 0 ? r.replace(/\.\d{3}Z/, '+00:00') : r));
    const file = csv('offsets.csv', rows);
    const got = await duckdb(file, CHICAGO, false);
    expect(got.stages).toContain('tm_rowpass');
    expect(got.stages).not.toContain(FULL);
    expect(got.waist).toEqual(comparable(await memoryWaist(file, CHICAGO)));
  });

  it('a fast-form timestamp out of the years 1900–2199 is a bad timestamp without the full parse', async () => {
    const rows = lines(3000, 12);
    rows.splice(2500, 0, 'm7,1899-12-31T23:59:59.999Z,checked_in,pro', 'm8,2200-01-01T00:00:00Z,checked_in,pro');
    const file = csv('range.csv', rows);
    const got = await duckdb(file, UTC, true);
    expect(got.stages).not.toContain(FULL);
    expect(got.waist).toEqual(comparable(await memoryWaist(file, UTC, {}, true)));
  });
});

describe('one row in another form, past the first rows, sends the pass to the full parse', () => {
  // each accepted by the memory engine (src/ingest/timestamp.ts) or refused by it as a bad timestamp
  const ODD: [string, string][] = [
    ['an offset', '2026-03-05T02:03:31+05:30'],
    ['a date only', '2026-03-05'],
    ['epoch seconds', '1772676211'],
    ['epoch milliseconds', '1772676211544'],
    ['a space for the T, no zone (local time)', '2026-03-05 02:03:31'],
    ['a lowercase z', '2026-03-05T02:03:31.544z'],
    ['white space around it', ' 2026-03-05T02:03:31.544Z '],
    ['a leap second', '2026-03-05T23:59:60Z'],
    ['a day the month lacks (bad)', '2026-02-30T10:00:00Z'],
    ['text that is no time (bad)', 'not a time'],
    ['an empty field (bad)', ''],
    // the shape of the form, but DuckDB's timestamp cast alone would read them
    ['white space before a one-digit hour (bad)', '2026-03-05T 2:03:31Z'],
    ['a one-digit second before a dot (bad)', '2026-03-05T02:03:3.Z'],
    ['hour 24 (bad)', '2026-03-05T24:00:00.000Z'],
  ];
  it.each(ODD)('%s', async (_what, stamp) => {
    const rows = lines(SAMPLE_ROWS + 2000, 13);
    rows.splice(SAMPLE_ROWS + 1500, 0, `m9,${stamp},checked_in,pro`);
    const file = csv(`odd-${ODD.findIndex((o) => o[1] === stamp)}.csv`, rows);
    for (const rules of [UTC, CHICAGO]) {
      const got = await duckdb(file, rules, true);
      expect(got.stages).toContain(FULL);
      expect(got.waist).toEqual(comparable(await memoryWaist(file, rules, {}, true)));
    }
  });

  it('without skipBadRows a bad one stops the run with the memory engine\'s one-line message', async () => {
    const rows = lines(SAMPLE_ROWS + 2000, 14);
    rows.splice(SAMPLE_ROWS + 1500, 0, 'm9,2026-02-30T10:00:00Z,checked_in,pro');
    const file = csv('bad.csv', rows);
    const want = await memoryWaist(file, UTC).then(() => undefined, (e: Error) => e.message);
    expect(want).toMatch(/timestamp/);
    await expect(runDuckdb({ files: [file] }, UTC)).rejects.toThrow(want as string);
  });

  it('one bad timestamp in a million rows is counted as the memory engine counts it (skipBadRows)', async () => {
    const rows = lines(1_000_000, 15);
    rows[700_000] = 'm5,2026-03-05T02:03:31.544Q,checked_in,pro';
    const file = csv('million.csv', rows);
    const got = await duckdb(file, UTC, true);
    expect(got.stages).toContain(FULL);
    const want = comparable(await memoryWaist(file, UTC, {}, true));
    expect(got.waist).toEqual(want);
    expect((want as { manifest: { rows: { rejected: Record<string, number> } } }).manifest.rows.rejected).toEqual({ 'bad timestamp': 1 });
  }, 180_000);
});
