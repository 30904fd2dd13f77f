/**
 * The dialects with no server here (spark, trino, bigquery, snowflake), and postgres too: every
 * query `tidemark sql` prints parses with a dialect-aware SQL parser (node-sql-parser 5.4.0, in its
 * Hive mode for Spark SQL, as the nearest it has), for rules of every grain, zones, key events, --by,
 * --from/--to and each timestamp type. A parse catches syntax, not meaning; the meaning is checked
 * on real engines elsewhere (test/engines/conformance.test.ts, test/sql/printed.test.ts).
 *
 * And each dialect's query is the DuckDB query but for the dialect's own pieces: with every hook's
 * output marked, the text outside the marks is the same for all six dialects, and the DuckDB text
 * runs on DuckDB in the conformance tests. So the syntax the dialects share with DuckDB has run.
 */
import { join } from 'node:path';
import pkg from 'node-sql-parser';
import { DuckDBInstance } from '@duckdb/node-api';
import { describe, expect, it } from 'vitest';
import { compile } from '../../src/sql/compile.js';
import { DIALECT, DIALECTS, type Dialect, type DialectName } from '../../src/sql/dialects.js';
import { gapModel } from '../../src/sql/gaps.js';
import { manifestSelect } from '../../src/sql/manifestQuery.js';
import { WAIST_TABLES } from '../../src/waist/tables.js';
import { printSql } from '../../src/sql/print.js';
import { BLANK, EPOCH, ISO, ISO_BASIC, renderPattern, pattern } from '../../src/sql/regex.js';
import { tableSource, TIMESTAMP_KINDS } from '../../src/sql/source.js';
import { loadRulesFile, parseRules } from '../../src/rules/load.js';
import { EPOCH as JS_EPOCH, ISO as JS_ISO, ISO_BASIC as JS_ISO_BASIC, parseTimestamp } from '../../src/ingest/timestamp.js';
import { ZoneClock } from '../../src/periods/zone.js';
import { withCtes } from '../../src/sql/query.js';
import { mulberry32 } from '../stats/prng.js';
import type { Rules } from '../../src/rules/schema.js';

const { Parser } = pkg;
const parser = new Parser();
/** node-sql-parser's name for each dialect (Hive: the Spark-like mode). */
const MODE: Partial<Record<DialectName, string>> = { postgres: 'PostgresQL', spark: 'Hive', trino: 'Trino', bigquery: 'BigQuery', snowflake: 'Snowflake' };

const rulesDir = join(import.meta.dirname, '../../rules');
const RULES: { name: string; rules: Rules }[] = [
  ...['weekly', 'daily', 'monthly'].map((n) => ({ name: n, rules: loadRulesFile(join(rulesDir, `${n}.yaml`)) })),
  { name: 'Berlin weeks from sunday, key events, minEvents 2, lapse 0', rules: parseRules("grain: week\nweekStart: sunday\ntimezone: Europe/Berlin\nlapseLimit: 0\nactivity: { keyEvents: [booking_made, \"it's\"], minEvents: 2 }\n") },
  { name: 'Auckland months, lapse 4, warm-up 1', rules: parseRules('grain: month\ntimezone: Pacific/Auckland\nlapseLimit: 4\nwarmup: 1\ntenureBands: [0, 2]\n') },
  { name: 'weeks with both splittable states split', rules: parseRules('grain: week\ntimezone: UTC\nlapseLimit: 2\nsplits: [{ state: engaged, atLeast: 3, names: [steady, keen] }, { state: returned, atLeast: 2, names: [back_light, back_busy] }]\n') },
];

describe('every printed query parses in its dialect', () => {
  for (const [dialect, mode] of Object.entries(MODE) as [DialectName, string][]) {
    it(`${dialect} (${mode})`, () => {
      let parsed = 0;
      for (const [i, { name, rules }] of RULES.entries()) {
        // the timestamp's type changes only tm_src: every type with the first rules, text with the others
        for (const timestamp of i === 0 ? TIMESTAMP_KINDS : (['text'] as const)) {
          for (const extra of [{}, { by: 'plan', from: '2026-05-04', to: '2026-09-30' }]) {
            const files = printSql({ dialect, rules, table: 'analytics.events', timestamp, ...extra });
            for (const [file, sql] of files) {
              if (!file.endsWith('.sql')) continue;
              try {
                parser.astify(sql, { database: mode });
              } catch (e) {
                const at = (e as { location?: { start?: { offset: number } } }).location?.start?.offset ?? 0;
                throw new Error(`${dialect} ${name} ${timestamp} ${file}: ${(e as Error).message.slice(0, 120)}\n…${sql.slice(Math.max(0, at - 200), at)} <<HERE>> ${sql.slice(at, at + 80)}`);
              }
              parsed++;
            }
          }
        }
      }
      // one query a waist table and the manifest query, for every case
      expect(parsed).toBe((TIMESTAMP_KINDS.length + RULES.length - 1) * 2 * (Object.keys(WAIST_TABLES).length + 1));
    }, 120_000); // parsing a few hundred long queries: a bound on a hang, not a timing
  }
});

/** The dialect with each hook's output, and each constant, wrapped in ⟦…⟧. */
function marked(D: Dialect): Dialect {
  return new Proxy(D, {
    get(target, key, receiver) {
      const v = Reflect.get(target, key, receiver);
      if (key === 'name') return v;
      if (typeof v === 'string') return `⟦${v}⟧`;
      if (typeof v !== 'function') return v;
      return (...args: unknown[]) => {
        return `⟦${(v as (...a: unknown[]) => string).apply(target, args)}⟧`;
      };
    },
  });
}

/** The text with every outermost ⟦…⟧ emptied. */
function skeleton(sql: string): string {
  let out = '', depth = 0;
  for (const ch of sql) {
    if (ch === '⟦') {
      if (depth++ === 0) out += '⟦⟧';
    } else if (ch === '⟧') depth--;
    else if (depth === 0) out += ch;
  }
  return out;
}

describe('each dialect is the DuckDB query but for its hooks', () => {
  // tm_fast holds DuckDB's native fast path: present or absent by dialect
  const OPTIONAL = new Set(['tm_fast']);
  for (const { name, rules } of RULES) {
    it(name, () => {
      const shapes = DIALECTS.map((d) => {
        const D = marked(DIALECT[d]);
        const source = tableSource(D, 'events', [{ name: 'user_id', kind: 'text' }, { name: 'timestamp', kind: 'text' }, { name: 'event', kind: 'text' }, { name: 'plan', kind: 'text' }], rules, 'plan', 'events');
        const c = compile({ dialect: D, rules, source, range: { fromKey: 1000, toKey: 3000 } });
        return {
          ctes: c.ctes.filter((x) => !OPTIONAL.has(x.name)).map((x) => `${x.name}: ${skeleton(x.sql)}`),
          finals: [...Object.values(c.tables), ...Object.values(c.facts), manifestSelect(D, rules, 'sql', 0, 'plan')].map(skeleton),
        };
      });
      for (let i = 1; i < shapes.length; i++) expect(shapes[i], DIALECTS[i]).toEqual(shapes[0]);
    });
  }
});

describe('regular expressions rendered for SQL engines', () => {
  it('renders named, non-capturing and only-one-group forms', () => {
    // worked by hand
    const p = pattern('^(?<a>x)(?:y)?(?<b>z)$');
    expect(renderPattern(p, 'noncapturing')).toEqual({ source: '^(x)(?:y)?(z)$', names: ['a', 'b'] });
    expect(renderPattern(p, 'capturing')).toEqual({ source: '^(x)(y)?(z)$', names: ['a', '', 'b'] });
    expect(renderPattern(p, 'only', 're2', 'b')).toEqual({ source: '^(?:x)(?:y)?(z)$', names: ['b'] });
  });

  it("DuckDB's RE2 accepts exactly what the memory engine's JavaScript patterns accept (ISO, basic, epoch, blank)", async () => {
    // reference: the JavaScript regular expressions of src/ingest/timestamp.ts and String.prototype.trim
    const samples = ['2026-05-04', '2026-05-04T18:30', '2026-05-04 18:30:00', '2026-05-04T18:30:00.123456789Z', '2026-05-04t18:30:00z', '2026-05-04T18:30:00 +02:00',
      '2026-05-04T18:30:00\u3000-0530', '2026-05-04T18:30:00+02', '2026-05-04T18:30:00+2', '2026-5-4', '20260504T183000Z', '20260504T1830+0200', '20260504', '20260504T18',
      '1700000000', '+1700000000.5', '-5', '1.', '.5', '1e9', '', ' ', '\u00a0\t', 'x', '2026-05-04T18:30:00,5Z', '2026-05-04T18:30:00\n', '٢٠٢٦-05-04'];
    const db = await DuckDBInstance.create(':memory:');
    const con = await db.connect();
    try {
      const cases: [string, RegExp, ReturnType<typeof pattern>][] = [['ISO', JS_ISO, ISO], ['ISO_BASIC', JS_ISO_BASIC, ISO_BASIC], ['EPOCH', JS_EPOCH, EPOCH], ['BLANK', /^\s*$/, BLANK]];
      for (const [what, re, p] of cases) {
        for (const s of samples) {
          const sql = `SELECT ${DIALECT.duckdb.matches(DIALECT.duckdb.str(s), p)} AS m`;
          const got = (await con.runAndReadAll(sql)).getRows()[0][0];
          expect(got, `${what} ${JSON.stringify(s)}`).toBe(re.test(s));
        }
      }
    } finally {
      con.closeSync();
      db.closeSync();
    }
  });
});

describe('the lifecycle as gaps (gapModel), asked of the machine', () => {
  it('lapseLimit 2: fresh, engaged, returned, lapsing, dormant (README, "Lifecycle states")', () => {
    const m = gapModel({ lapseLimit: 2 });
    expect([m.states[m.arrival], m.states[m.continuing], m.states[m.returning], m.states[m.lapse], m.states[m.exit]]).toEqual(['fresh', 'engaged', 'returned', 'lapsing', 'dormant']);
  });
  it('lapseLimit 0 has no lapse state in a quiet run; large limits are modelled alike', () => {
    expect(gapModel({ lapseLimit: 0 }).lapse).toBeLessThan(0);
    for (const L of [1, 3, 100_000]) expect(gapModel({ lapseLimit: L }).lapseLimit).toBe(L);
  });
});

describe("DuckDB's cheap test before the white-space test (spaceFirst)", () => {
  it('gives the code-point test\'s answer for every first character of the Basic Multilingual Plane and some beyond', async () => {
    // reference: JavaScript's own white space (String.prototype.trim, ECMA-262 WhiteSpace and
    // LineTerminator), and the unguarded test; each text is a character, then "x" (or nothing)
    const codes = [...Array.from({ length: 0xffff }, (_, i) => i + 1).filter((c) => c < 0xd800 || c > 0xdfff), 0x10000, 0x1f600, 0x10ffff];
    const texts = codes.flatMap((c) => [String.fromCodePoint(c), `${String.fromCodePoint(c)}x`]);
    const D = DIALECT.duckdb;
    const plain = (s: string) => `(unicode(${s}) BETWEEN 9 AND 13 OR unicode(${s}) = 32 OR unicode(${s}) IN (${[160, 5760, ...Array.from({ length: 11 }, (_, i) => 8192 + i), 8232, 8233, 8239, 8287, 12288, 65279].join(', ')}))`;
    const db = await DuckDBInstance.create(':memory:');
    const con = await db.connect();
    try {
      await con.run('CREATE TABLE t (i INTEGER, s VARCHAR)');
      const app = await con.createAppender('t');
      texts.forEach((s, i) => { app.appendInteger(i); app.appendVarchar(s); app.endRow(); });
      app.closeSync();
      const got = (await con.runAndReadAll(`SELECT i, ${D.spaceFirst('s', plain('s'))} AS guarded, ${plain('s')} AS bare FROM t ORDER BY i`)).getRows();
      expect(got.length).toBe(texts.length);
      let spaces = 0;
      const wrong: string[] = [];
      for (const [i, guarded, bare] of got) {
        const s = texts[Number(i)];
        const js = s.trimStart() !== s;
        if (guarded !== js || bare !== js) wrong.push(`${JSON.stringify(s)}: guarded ${guarded}, bare ${bare}, JavaScript ${js}`);
        if (js) spaces++;
      }
      expect(wrong).toEqual([]);
      expect(spaces).toBe(2 * 25); // the 25 white-space code points of JS_SPACE, alone and before "x"
    } finally {
      con.closeSync();
      db.closeSync();
    }
  }, 60_000); // 130 000 texts: a bound on a hang, not a timing
});

describe("DuckDB's fast timestamp form (fastUtcMs, fastUtcKeep) on near misses of it", () => {
  it('reads a text only where the memory engine reads the same instant, and every text in the form', async () => {
    // references: the memory engine's parser (src/ingest/timestamp.ts, parseTimestamp in UTC) and, for
    // each text the SQL reads, JavaScript's Date.parse (ECMA-262 Date Time String Format, which is
    // this form). Texts: each base with every position replaced by, or preceded by, one of 113
    // characters, or dropped; every two neighbouring positions replaced by two of 19 characters; every
    // hour 00-99 with edge minutes, seconds and fractions; and impossible dates
    const bases = ['2026-03-05T02:03:31.544Z', '2026-03-05T02:03:31Z', '2024-02-29T23:59:59.999Z', '1999-12-31T00:00:00Z', '2026-12-31T20:00:00.000Z'];
    const chars = [...Array.from({ length: 95 }, (_, i) => String.fromCharCode(32 + i)), '\t', '\n', '\r', '\v', '\f', '\u00a0', '\u3000', '\u2003', 'é', '١', '１', '😀', '\u0000', '\u007f', '\u0085', 'Ž', 'ß', ''];
    const pair = [' ', '\t', '0', '1', '2', '4', '5', '9', '+', '-', '.', ':', 'T', 'Z', 'e', 'é', ',', '/', 'a'];
    const texts = new Set<string>(['2026-03-05T 2:03:31Z', '2026-03-05T\t2:03:31.544Z', '2026-03-05T02:03:3.Z', '2026-03-05T24:00:00Z', '2026-03-05T24:00:00.000Z']);
    for (const b of bases) {
      texts.add(b);
      for (let i = 0; i <= b.length; i++) {
        texts.add(b.slice(0, i) + b.slice(i + 1));
        for (const ch of chars) texts.add(b.slice(0, i) + ch + b.slice(i + 1)).add(b.slice(0, i) + ch + b.slice(i));
      }
      for (let i = 0; i + 1 < b.length; i++) for (const x of pair) for (const y of pair) texts.add(b.slice(0, i) + x + y + b.slice(i + 2));
      for (let h = 0; h < 100; h++) {
        for (const rest of [':00:00', ':00:01', ':59:59', ':30:00', ':60:00', ':00:60']) {
          const t = `${b.slice(0, 11)}${String(h).padStart(2, '0')}${rest}`;
          texts.add(`${t}Z`).add(`${t}.000Z`).add(`${t}.001Z`);
        }
      }
    }
    for (const d of ['2026-02-29', '2024-02-30', '2026-04-31', '2026-13-01', '2026-00-10', '2026-01-00', '2026-01-32', '0000-01-01', '1899-12-31', '2200-01-01', '9999-12-31']) texts.add(`${d}T10:00:00Z`).add(`${d}T10:00:00.500Z`);
    const list = [...texts];
    const D = DIALECT.duckdb;
    const rules = parseRules('grain: day\nlapseLimit: 1\n');
    const source = {
      select: 'SELECT CAST(i AS VARCHAR) AS user_id, s AS ts_text FROM t',
      has: { tsText: true, tsNum: false, tsInstant: false, tsLocal: false, preReason: false, event: false, by: false },
      attributes: [],
    };
    const db = await DuckDBInstance.create(':memory:');
    const con = await db.connect();
    try {
      await con.run("SET TimeZone = 'UTC'");
      await con.run('CREATE TABLE t (i INTEGER, s VARCHAR)');
      const app = await con.createAppender('t');
      list.forEach((s, i) => { app.appendInteger(i); app.appendVarchar(s); app.endRow(); });
      app.closeSync();
      const sql = withCtes(compile({ dialect: D, rules, source }).ctes, 'SELECT user_id, fast_ms FROM tm_fast');
      const got = (await con.runAndReadAll(sql)).getRowsJS();
      expect(got.length).toBe(list.length);
      const clock = new ZoneClock('UTC');
      const inForm = /^\d{4}-\d{2}-\d{2}T([01]\d|2[0-3]):[0-5]\d:[0-5]\d(\.\d{3})?Z$/;
      const wrong: string[] = [];
      let read = 0;
      for (const [id, v] of got) {
        const s = list[Number(id)];
        const ms = v === null ? null : Number(v);
        const mem = parseTimestamp(s, clock);
        if (ms !== null) {
          read++;
          // out of 1900-2199 (a year that is not four digits, say) the value is refused later (tm_wall), as
          // the memory engine refuses it
          const kept = ms >= Date.UTC(1900, 0, 1) && ms < Date.UTC(2200, 0, 1) ? ms : undefined;
          if (kept !== mem || (kept !== undefined && ms !== Date.parse(s))) wrong.push(`${JSON.stringify(s)}: SQL ${ms}, memory engine ${mem}, Date.parse ${Date.parse(s)}`);
        } else if (inForm.test(s) && mem !== undefined) {
          wrong.push(`${JSON.stringify(s)}: in the form, but left to the full parse`);
        }
      }
      expect(wrong).toEqual([]);
      expect(list.length).toBeGreaterThan(50_000);
      expect(read).toBeGreaterThan(1_000);
    } finally {
      con.closeSync();
      db.closeSync();
    }
  }, 60_000); // tens of thousands of texts: a bound on a hang, not a timing
});

describe("DuckDB's floor division (floorDiv) in doubles", () => {
  it('equals integer floor division for |a| < 2^53 at the edges of the quotients', async () => {
    // reference: exact integer arithmetic with JavaScript BigInt (division truncates, then rounded down)
    const floor = (a: bigint, b: bigint) => a / b - (a % b < 0n ? 1n : 0n);
    const rng = mulberry32(5);
    const as: bigint[] = [0n, 1n, -1n, 2n ** 53n - 1n, -(2n ** 53n - 1n)];
    const cases: [bigint, number][] = [];
    for (const b of [7, 86_400_000, 604_800_000]) {
      for (const q of [0, 1, -1, 2, -2, 20_000, -25_568, 84_000, 2 ** 20, -(2 ** 20), Math.floor((2 ** 53 - 1) / b) - 1]) {
        for (const d of [-2, -1, 0, 1, 2]) cases.push([BigInt(q) * BigInt(b) + BigInt(d), b]);
      }
      for (const a of as) cases.push([a, b]);
      for (let i = 0; i < 2000; i++) cases.push([BigInt(Math.floor((rng() * 2 - 1) * 2 ** 53)), b]);
    }
    const db = await DuckDBInstance.create(':memory:');
    const con = await db.connect();
    try {
      const values = cases.map(([a, b], i) => `(${i}, CAST('${a}' AS BIGINT), ${b})`).join(', ');
      const byB = [7, 86_400_000, 604_800_000].map((b) => `WHEN b = ${b} THEN ${DIALECT.duckdb.floorDiv!('a', b)}`).join(' ');
      const got = (await con.runAndReadAll(`SELECT i, CAST(CASE ${byB} END AS VARCHAR) FROM (VALUES ${values}) v(i, a, b) ORDER BY i`)).getRowsJS();
      const wrong = got.filter(([i, v]) => String(v) !== String(floor(cases[Number(i)][0], BigInt(cases[Number(i)][1])))).map(([i, v]) => `${cases[Number(i)][0]} / ${cases[Number(i)][1]}: ${v}`);
      expect(got.length).toBe(cases.length);
      expect(wrong).toEqual([]);
    } finally {
      con.closeSync();
      db.closeSync();
    }
  });
});
