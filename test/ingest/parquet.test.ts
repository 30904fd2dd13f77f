/**
 * Parquet and gzip in the memory engine, against files written by independent writers: DuckDB's COPY …
 * TO (FORMAT parquet) (@duckdb/node-api, a general-purpose reference implementation of the Parquet
 * format) and GNU gzip (RFC 1952). The reference for every value is the CSV reader on the same events,
 * and hand-worked dates where a type carries a meaning of its own (a local TIMESTAMP, a DATE).
 */
import { execFileSync } from 'node:child_process';
import { copyFileSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { gzipSync } from 'node:zlib';
import { DuckDBInstance } from '@duckdb/node-api';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { TidemarkError } from '../../src/errors.js';
import type { EventLog } from '../../src/ingest/eventLog.js';
import { readEvents } from '../../src/ingest/read.js';
import { periodLabel } from '../../src/periods/calendar.js';
import { rulesOf, tempDir } from '../core/helpers.js';

const t = tempDir();
afterAll(() => t.done());
const rules = rulesOf({ grain: 'week', lapseLimit: 2 });
let db: Awaited<ReturnType<DuckDBInstance['connect']>>;

beforeAll(async () => {
  const inst = await DuckDBInstance.create(':memory:');
  db = await inst.connect();
  await db.run("SET TimeZone='UTC'");
});

/** What a test compares: each row's user id, period label, wall ms and attribute values, and the accounts. */
function rowsOf(log: EventLog) {
  return Array.from(log.user, (u, i) => [log.users[u], periodLabel(log.period[i], log.scheme), log.wallMs[i], ...log.attributes.map((a) => a.values[a.codes[i]])]);
}

const EVENTS = `SELECT 'm' || (i % 37) AS user_id, TIMESTAMPTZ '2026-03-01 00:00:00+00' + to_milliseconds(i * 7_654_321) AS timestamp,
  ['booking_made', 'checked_in', 'class_enrolled'][i % 3 + 1] AS event, CASE WHEN i % 4 = 0 THEN NULL ELSE ['pro', 'hobby', 'José'][i % 3 + 1] END AS plan
  FROM range(5000) r(i)`;

describe('Parquet written by DuckDB', () => {
  it('gives the rows the CSV reader gives for the same events, for each compression and with small row groups', async () => {
    const csv = join(t.dir, 'ref.csv');
    await db.run(`COPY (${EVENTS}) TO '${csv}' (HEADER, FORMAT csv)`);
    const want = await readEvents([csv], { rules, parallel: false });
    for (const codec of ['snappy', 'zstd', 'gzip', 'uncompressed']) {
      const pq = join(t.dir, `events-${codec}.parquet`);
      await db.run(`COPY (${EVENTS}) TO '${pq}' (FORMAT parquet, COMPRESSION ${codec}, ROW_GROUP_SIZE 1024)`);
      const got = await readEvents([pq], { rules });
      expect(rowsOf(got), codec).toEqual(rowsOf(want));
      expect(got.rows).toEqual({ ...want.rows, lines: { read: 5000, header: 0, blank: 0, records: 5000, rejected: 0 } });
      expect([...got.eventNames]).toEqual([...want.eventNames]);
    }
  }, 30_000); // a bound on a hang: DuckDB writes eight files

  it('integer ids are their digits (one id with a CSV "123"), a local TIMESTAMP is wall-clock time, a DATE its day', async () => {
    const pq = join(t.dir, 'types.parquet');
    await db.run(`COPY (SELECT * FROM (VALUES (123::BIGINT, TIMESTAMP '2026-03-01 23:30:00', DATE '2026-03-02', 1772407800::BIGINT, '2026-03-01T23:30:00-06:00'),
      (7::BIGINT, TIMESTAMP '2026-03-08 00:30:00', DATE '2026-03-08', 1772929800000::BIGINT, '2026-03-08T00:30:00Z')) v(user_id, local_ts, day, epoch, text))
      TO '${pq}' (FORMAT parquet)`);
    const chicago = { ...rulesOf({ grain: 'day', lapseLimit: 2 }), timezone: 'America/Chicago' };
    const read = (ts: string) => readEvents([pq], { rules: { ...chicago, columns: { ...chicago.columns, timestamp: ts } } });
    const local = await read('local_ts');
    expect(local.users).toEqual(['123', '7']);
    // a TIMESTAMP without time zone is local time in the rules' zone, as an ISO text without offset is
    expect(Array.from(local.period, (k) => periodLabel(k, local.scheme))).toEqual(['2026-03-01', '2026-03-08']);
    const day = await read('day');
    expect(Array.from(day.period, (k) => periodLabel(k, day.scheme))).toEqual(['2026-03-02', '2026-03-08']);
    // epoch seconds and ms (the CSV rule): 1772407800 s = 2026-03-01T23:30Z = 17:30 in Chicago (CST, −06:00)
    const epoch = await read('epoch');
    expect(Array.from(epoch.wallMs)).toEqual([Date.UTC(2026, 2, 1, 17, 30), Date.UTC(2026, 2, 7, 18, 30)]);
    // text is read as in a CSV: 23:30 at −06:00 is 23:30 in Chicago
    const text = await read('text');
    expect(Array.from(text.wallMs)).toEqual([Date.UTC(2026, 2, 1, 23, 30), Date.UTC(2026, 2, 7, 18, 30)]);
  });

  it('rejects rows with a null id, a NaN id or a null timestamp, and counts them (row numbers as lines)', async () => {
    const pq = join(t.dir, 'bad.parquet');
    await db.run(`COPY (SELECT * FROM (VALUES ('m1', TIMESTAMPTZ '2026-03-02 10:00:00+00'), (NULL, TIMESTAMPTZ '2026-03-02 10:00:00+00'), ('m2', NULL), ('m3', TIMESTAMPTZ '1850-01-01 00:00:00+00')) v(user_id, timestamp)) TO '${pq}' (FORMAT parquet)`);
    const log = await readEvents([pq], { rules, skipBadRows: true });
    expect(log.rows.rejected).toEqual({ 'missing user id': 1, 'bad timestamp': 2 });
    expect(log.rows.lines).toEqual({ read: 4, header: 0, blank: 0, records: 1, rejected: 3 });
    await expect(readEvents([pq], { rules })).rejects.toMatchObject({ code: 'EVENTS_BAD_ROW', where: { line: 2 } });
    const dbl = join(t.dir, 'double.parquet');
    await db.run(`COPY (SELECT 1.5::DOUBLE AS user_id, TIMESTAMPTZ '2026-03-02 10:00:00+00' AS timestamp) TO '${dbl}' (FORMAT parquet)`);
    await expect(readEvents([dbl], { rules })).rejects.toMatchObject({ code: 'EVENTS_BAD_ROW', message: "bad user id: '1.5'" });
  });

  it('string ids found by their bytes across row groups: non-ASCII ids, blank and null ids, and bytes that are not UTF-8 (RFC 3629) are told apart', async () => {
    // ids as BLOB (BYTE_ARRAY with no string annotation, read as text like a string column): row i has
    // 'José' (i % 5 = 0), the bytes FF FE, never UTF-8 (1), '' (2), NULL (3) or m0 … m6 (4)
    const pq = join(t.dir, 'ids.parquet');
    await db.run(`COPY (SELECT CASE i % 5 WHEN 0 THEN encode('José') WHEN 1 THEN '\\xFF\\xFE'::BLOB WHEN 2 THEN ''::BLOB WHEN 3 THEN NULL ELSE encode('m' || (i % 7)) END AS user_id,
      TIMESTAMPTZ '2026-03-02 10:00:00+00' + to_seconds(i) AS timestamp FROM range(3000) r(i)) TO '${pq}' (FORMAT parquet, ROW_GROUP_SIZE 1024)`);
    const log = await readEvents([pq], { rules, skipBadRows: true });
    // the expected rows, worked out here from the rule above
    const want: string[] = [];
    for (let i = 0; i < 3000; i++) if (i % 5 === 0 || i % 5 === 4) want.push(i % 5 === 0 ? 'José' : `m${i % 7}`);
    expect(Array.from(log.user, (u) => log.users[u])).toEqual(want);
    expect(new Set(log.users)).toEqual(new Set(want));
    expect(log.users.length).toBe(8);
    expect(log.rows.rejected).toEqual({ 'invalid UTF-8': 600, 'missing user id': 1200 });
    await expect(readEvents([pq], { rules })).rejects.toMatchObject({ code: 'EVENTS_BAD_ROW', message: 'invalid UTF-8', where: { line: 2 } });
  });

  it('a missing column is named as in a CSV header; a file that is not Parquet is one clear error', async () => {
    const pq = join(t.dir, 'nouser.parquet');
    await db.run(`COPY (SELECT 'm1' AS member, TIMESTAMPTZ '2026-03-02 10:00:00+00' AS timestamp) TO '${pq}' (FORMAT parquet)`);
    await expect(readEvents([pq], { rules })).rejects.toMatchObject({ code: 'EVENTS_FORMAT', message: "no 'user_id' column (the user column)" });
    const fake = t.file('fake.parquet', 'user_id,timestamp\nm1,2026-03-02T10:00:00Z\n');
    const e = await readEvents([fake], { rules }).catch((x) => x);
    expect(e).toBeInstanceOf(TidemarkError);
    expect(e.message).toMatch(/^this is not a Parquet file tidemark can read/);
  });
});

describe('gzip (files written by GNU gzip)', () => {
  const body = `user_id,timestamp,event,plan\n${Array.from({ length: 3000 }, (_, i) => `m${i % 41},${new Date(Date.UTC(2026, 2, 1) + i * 3_600_000).toISOString()},booking_made,${i % 2 ? 'pro' : '"a, ""b"""'}`).join('\n')}\n`;

  it('.csv.gz and .ndjson.gz read as the uncompressed files do, and a .gz under another name by its magic bytes', async () => {
    const csv = t.file('e.csv', body);
    const ndjson = t.file('e.ndjson', `${body.trim().split('\n').slice(1).map((l, i) => JSON.stringify({ user_id: `m${i % 41}`, timestamp: l.split(',')[1], event: 'booking_made' })).join('\n')}\n`);
    execFileSync('gzip', ['-k', '-f', csv, ndjson]);
    const want = rowsOf(await readEvents([csv], { rules, parallel: false }));
    expect(rowsOf(await readEvents([`${csv}.gz`], { rules }))).toEqual(want);
    expect((await readEvents([`${ndjson}.gz`], { rules })).rows).toEqual((await readEvents([ndjson], { rules })).rows);
    const odd = join(t.dir, 'export.data');
    copyFileSync(`${csv}.gz`, odd);
    expect(rowsOf(await readEvents([odd], { rules, format: 'csv' }))).toEqual(want);
  });

  it('concatenated gzip members are read one after another (RFC 1952 §2.2), as gunzip does', async () => {
    const lines = body.split('\n');
    const f = join(t.dir, 'multi.csv.gz');
    writeFileSync(f, Buffer.concat([gzipSync(`${lines.slice(0, 1000).join('\n')}\n`), gzipSync(`${lines.slice(1000).join('\n')}`)]));
    expect(rowsOf(await readEvents([f], { rules }))).toEqual(rowsOf(await readEvents([t.file('plain.csv', body)], { rules })));
  });

  it('a cut-short or damaged gzip file is one EVENTS_FORMAT error naming the file', async () => {
    const gz = readFileSync(join(t.dir, 'e.csv.gz'));
    const cut = t.file('cut.csv.gz', gz.subarray(0, gz.length - 100));
    await expect(readEvents([cut], { rules })).rejects.toMatchObject({ code: 'EVENTS_FORMAT', where: { file: cut }, message: expect.stringMatching(/cut short/) });
    const bad = Buffer.from(gz);
    bad.fill(0x55, 200, 260);
    const damaged = t.file('bad.csv.gz', bad);
    await expect(readEvents([damaged], { rules })).rejects.toMatchObject({ code: 'EVENTS_FORMAT', where: { file: damaged } });
  });
});
