/**
 * The DuckDB engine's one pass over the rows (`Compiled.rowPass`: GROUPING SETS over (user, period),
 * (reason, event[, used flag]: the fates) and each attribute) against an independent computation written here: plain
 * GROUP BY and window queries over the per-row step `tm_ev` of the same compiled SQL, on a seeded
 * random log with blank users, bad timestamps, events outside the key events, empty attribute values
 * and ties of the latest time within a (user, week). Common practice: a rewrite of a query is checked
 * against the query it rewrites, on data that reaches every branch.
 */
import { DuckDBInstance, type DuckDBConnection } from '@duckdb/node-api';
import { describe, expect, it } from 'vitest';
import { compile, type SqlSource } from '../../src/sql/compile.js';
import { DIALECT } from '../../src/sql/dialects.js';
import { withCtes } from '../../src/sql/query.js';
import { parseRules } from '../../src/rules/load.js';
import { mulberry32 } from '../stats/prng.js';

const D = DIALECT.duckdb;

function log(seed: number): string[][] {
  const rng = mulberry32(seed);
  const pick = <T>(xs: T[]) => xs[Math.floor(rng() * xs.length)];
  const rows: string[][] = [];
  for (let i = 0; i < 600; i++) {
    const user = rng() < 0.05 ? pick(['', ' ', '\u3000']) : `m${Math.floor(rng() * 30)}`;
    // whole days only, so that rows of a (user, week) often share the latest time
    const ts = rng() < 0.05 ? pick(['', 'not a time', '2026-02-30T10:00:00Z']) : new Date(Date.UTC(2026, 0, 5) + Math.floor(rng() * 10 * 7) * 86_400_000).toISOString();
    rows.push([user, ts, pick(['booking', 'class', 'door', '']), pick(['pro', 'hobby', '', 'Ärger', 'zeta']), pick(['north', 'south', ''])]);
  }
  return rows;
}

function source(rows: string[][], by: boolean): SqlSource {
  const values = rows.map((r) => `(${r.map((v) => D.str(v)).join(', ')})`).join(',\n');
  return {
    select: `SELECT u AS user_id, t AS ts_text, e AS event, a0 AS attr_0, a1 AS attr_1${by ? ', a0 AS by_value' : ''} FROM (VALUES ${values}) AS v(u, t, e, a0, a1)`,
    has: { tsText: true, tsNum: false, tsInstant: false, tsLocal: false, preReason: false, event: true, by },
    attributes: ['plan', 'site'],
  };
}

async function rows(c: DuckDBConnection, sql: string): Promise<string[]> {
  const r = await c.runAndReadAll(sql);
  return r.getRowsJS().map((row) => JSON.stringify(row, (_, v) => (typeof v === 'bigint' ? Number(v) : v))).sort();
}

describe('the one pass over the rows gives what plain queries over the rows give', () => {
  // --to: rows after it (status 'after') are told apart from used ones by the used flag of the fates set
  it.each([[false, false], [true, false], [false, true], [true, true]])('with --by: %s, with --to: %s', async (by, to) => {
    const rules = parseRules('grain: week\nlapseLimit: 2\nactivity:\n  keyEvents: [booking, class]\n');
    // the week of 2026-02-23 (weeks since the Monday 1969-12-29): about a third of the log's weeks are after it
    const toKey = Math.floor((Date.UTC(2026, 1, 23) / 86_400_000 + 3) / 7);
    const compiled = compile({ dialect: D, rules, source: source(log(by ? 11 : 7), by), range: to ? { toKey } : {} });
    const db = await DuckDBInstance.create(':memory:');
    const c = await db.connect();
    try {
      await c.run("SET TimeZone = 'UTC'");
      await c.run(`CREATE TEMP TABLE tm_ev AS ${withCtes(compiled.ctes, 'SELECT * FROM tm_ev')}`);
      const stored = new Set(['tm_ev']);
      await c.run(`CREATE TEMP TABLE ${compiled.rowPass.name} AS ${withCtes(compiled.ctes, compiled.rowPass.select, stored)}`);
      for (const [name, select] of Object.entries(compiled.rowPass.split)) await c.run(`CREATE TEMP VIEW ${name} AS ${select}`);
      const used = "FROM tm_ev WHERE status = 'used'";
      // (user, week) of the used rows: rows and latest time
      const uk = by ? 'SELECT user_id, k, SUM(ev), max(max_wall) FROM tm_ukv GROUP BY user_id, k' : 'SELECT user_id, k, ev, max_wall FROM tm_uk';
      const wantUk = await rows(c, `SELECT user_id, k, count(*), max(wall_ms) ${used} GROUP BY user_id, k`);
      expect(wantUk.length).toBeGreaterThan(50);
      expect(await rows(c, uk)).toEqual(wantUk);
      // every row's fate, reason and event
      const wantFates = await rows(c, 'SELECT status, reason, event, count(*) FROM tm_ev GROUP BY status, reason, event');
      expect(wantFates.some((r) => r.includes('rejected'))).toBe(true);
      expect(wantFates.some((r) => r.includes('notkey'))).toBe(true);
      expect(wantFates.some((r) => r.includes('after'))).toBe(to);
      expect(await rows(c, 'SELECT status, reason, event, n FROM tm_fates')).toEqual(wantFates);
      // distinct non-empty values of each attribute among the used rows
      const wantValues = await rows(c, `SELECT 0, attr_0 ${used} AND attr_0 <> '' GROUP BY attr_0 UNION ALL SELECT 1, attr_1 ${used} AND attr_1 <> '' GROUP BY attr_1`);
      expect(await rows(c, 'SELECT a, v FROM tm_attr_values')).toEqual(wantValues);
      if (by) {
        // the value on the latest row of each (user, week), ties to the largest value (README: --by)
        const ties = await rows(c, `SELECT user_id, k, wall_ms ${used} GROUP BY user_id, k, wall_ms HAVING count(DISTINCT by_value) > 1`);
        expect(ties.length).toBeGreaterThan(0);
        const want = await rows(c, `SELECT user_id, k, v FROM (SELECT user_id, k, coalesce(by_value, '') AS v,
          row_number() OVER (PARTITION BY user_id, k ORDER BY wall_ms DESC, coalesce(by_value, '') DESC) AS rn ${used}) x WHERE rn = 1`);
        expect(await rows(c, withCtes(compiled.ctes, 'SELECT user_id, k, v FROM tm_attr', new Set([...stored, ...Object.keys(compiled.rowPass.split)])))).toEqual(want);
      }
    } finally {
      c.closeSync();
      db.closeSync();
    }
  }, 60_000);
});
