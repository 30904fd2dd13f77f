/**
 * Timestamps read by the compiled SQL: for every form the memory engine reads (ISO 8601 extended and
 * basic, with Z, an offset or none, fractions, white space around; epoch seconds and milliseconds),
 * in zones with daylight-saving changes, the wall-clock milliseconds the SQL computes on DuckDB (and
 * PostgreSQL when reachable) equal those of src/ingest/timestamp.ts, the reference, row for row.
 * Instants are drawn with a seeded generator around the 2026 changes of the IANA tz database.
 */
import { DuckDBInstance } from '@duckdb/node-api';
import { DateTime, FixedOffsetZone } from 'luxon';
import pg from 'pg';
import { describe, expect, it } from 'vitest';
import { compile, type SqlSource } from '../../src/sql/compile.js';
import { DIALECT, type Dialect } from '../../src/sql/dialects.js';
import { withCtes } from '../../src/sql/query.js';
import { parseTimestamp } from '../../src/ingest/timestamp.js';
import { ZoneClock } from '../../src/periods/zone.js';
import { parseRules } from '../../src/rules/load.js';
import { mulberry32 } from '../stats/prng.js';
import { pgReachable, pgUrl } from '../engines/sqlEngines.js';

const ZONES = ['UTC', 'America/Chicago', 'Europe/Berlin', 'Pacific/Auckland', 'Asia/Kolkata', 'Australia/Lord_Howe'];
const OFFSETS = [540, -300, 330, 0, -210, 825, -720, 840];

function samples(zone: string, seed: number): string[] {
  const rng = mulberry32(seed);
  const out: string[] = [];
  for (let i = 0; i < 150; i++) {
    const ms = Date.UTC(2026, 0, 1) + Math.floor(rng() * 365 * 86_400_000);
    const dt = DateTime.fromMillis(ms, { zone: 'UTC' });
    const off = FixedOffsetZone.instance(OFFSETS[i % OFFSETS.length]);
    const local = dt.setZone(zone);
    out.push(dt.toISO()!, dt.toISO({ suppressMilliseconds: true })!, dt.setZone(off).toISO()!, dt.setZone(off).toFormat("yyyy-MM-dd'T'HH:mmZZZ"),
      dt.setZone(off).toFormat("yyyy-MM-dd HH:mm:ss.SSSSSS ZZ"), local.toFormat("yyyy-MM-dd'T'HH:mm:ss.SSS"), local.toFormat('yyyy-MM-dd HH:mm'), local.toFormat('yyyy-MM-dd'),
      String(Math.floor(ms / 1000)), String(ms), `${Math.floor(ms / 1000)}.${i % 10}`, dt.setZone(off).toFormat("yyyyMMdd'T'HHmmssZZZ"), dt.toFormat("yyyyMMdd'T'HHmm'Z'"),
      `\u00a0${dt.toISO()}\t`, dt.toISO()!.replace('T', 't').replace('Z', 'z'), dt.setZone(off).toFormat("yyyy-MM-dd'T'HH:mm:ssZZ").slice(0, -3));
  }
  return out;
}

function query(D: Dialect, zone: string, texts: string[]): string {
  const rules = parseRules(`grain: day\ntimezone: ${zone}\nlapseLimit: 1\n`);
  const values = texts.map((s, i) => `(${i}, ${D.str(s)})`).join(', ');
  const source: SqlSource = {
    select: `SELECT CAST(i AS ${D.text}) AS user_id, s AS ts_text FROM (VALUES ${values}) AS v(i, s)`,
    has: { tsText: true, tsNum: false, tsInstant: false, tsLocal: false, preReason: false, event: false, by: false },
    attributes: [],
  };
  return withCtes(compile({ dialect: D, rules, source }).ctes, 'SELECT user_id, wall_ms FROM tm_wall');
}

function expected(zone: string, texts: string[]): (number | null)[] {
  const clock = new ZoneClock(zone);
  return texts.map((s) => parseTimestamp(s, clock) ?? null);
}

describe('timestamps parsed by the compiled SQL equal the memory engine\'s', () => {
  it.each(ZONES.map((z, i) => [z, i] as const))('on DuckDB, %s', async (zone, i) => {
    const texts = samples(zone, 100 + i);
    const db = await DuckDBInstance.create(':memory:');
    const con = await db.connect();
    try {
      const rows = (await con.runAndReadAll(query(DIALECT.duckdb, zone, texts))).getRowsJS();
      const got = new Array<number | null>(texts.length);
      for (const [id, w] of rows) got[Number(id)] = w === null ? null : Number(w);
      expect(got).toEqual(expected(zone, texts));
    } finally {
      con.closeSync();
      db.closeSync();
    }
  }, 60_000);

  it.each(ZONES.map((z, i) => [z, i] as const))('on PostgreSQL, %s', async (zone, i) => {
    if (!(await pgReachable())) {
      if (process.env.CI === 'true') throw new Error('no PostgreSQL server reachable (PGHOST…): .ci/run starts one');
      return;
    }
    const texts = samples(zone, 100 + i);
    const c = new pg.Client({ connectionString: pgUrl() });
    await c.connect();
    try {
      const res = await c.query(query(DIALECT.postgres, zone, texts));
      const got = new Array<number | null>(texts.length);
      for (const r of res.rows) got[Number(r.user_id)] = r.wall_ms === null ? null : Number(r.wall_ms);
      expect(got).toEqual(expected(zone, texts));
    } finally {
      await c.end();
    }
  }, 60_000);
});
