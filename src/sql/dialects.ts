/**
 * SQL dialects: the few spots where duckdb, postgres, spark, trino, bigquery and snowflake differ.
 * The compiler (./compile.ts) writes one query shape for all of them and asks its dialect for these
 * small pieces only: literals, integer division, regular expressions, time zones, dates and series.
 *
 * What each hook must return is stated on the interface; the implementations follow each engine's
 * own reference documentation (named beside each). Only duckdb and postgres run on a real engine in
 * the tests; the other four are checked by parsing (see README, "Dialects").
 */
import { renderPattern, type Pattern } from './regex.js';

export const DIALECTS = ['duckdb', 'postgres', 'spark', 'trino', 'bigquery', 'snowflake'] as const;
export type DialectName = (typeof DIALECTS)[number];

export interface Dialect {
  readonly name: DialectName;
  /** A string literal holding `s` exactly. */
  str(s: string): string;
  /** A quoted identifier. */
  ident(s: string): string;
  /** Type names. */
  readonly bigint: string;
  readonly double: string;
  readonly text: string;
  /** a ÷ b rounded toward zero, for integer a, b (the compiler uses it where a ≥ 0 or a is a multiple of b). */
  intDiv(a: string, b: string): string;
  /**
   * Optional: a ÷ b rounded down, for integer a with |a| < 2^53 and an integer b > 0, where the dialect
   * has a cheaper exact form; the compiler otherwise builds it from intDiv and mod.
   */
  floorDiv?(a: string, b: number): string;
  /** a mod b with the sign of a (C semantics). */
  mod(a: string, b: string): string;
  /** `s` as a double when it is a decimal number (guarded by the caller), else NULL; never an error. */
  toDouble(s: string): string;
  /** The one-character string of a Unicode code point. */
  chr(code: number): string;
  /** The code point of the first character of `s` (NULL or 0 for an empty string). */
  firstCode(s: string): string;
  /** Whether `s` matches the regular expression (the pattern is anchored itself). */
  matches(s: string, p: Pattern): string;
  /** `s` with the first match of `p` removed (the callers' patterns are anchored: one match at most). */
  strip(s: string, p: Pattern): string;
  /**
   * Optional: the instant ms of text in the commonest form `YYYY-MM-DDTHH:MM:SS[.sss]Z`, read with
   * the engine's own timestamp parser, else NULL (the general path then reads it).
   */
  fastUtcMs?(s: string): string;
  /**
   * Optional, with fastUtcMs: whether its value `ms` for the text `s` stands (the compiler computes
   * fastUtcMs once, in a step of its own, and keeps it only where this holds); true where absent. For a
   * check that needs the parsed value, so that the rows it spares skip a text test.
   */
  fastUtcKeep?(ms: string, s: string): string;
  /**
   * `test`, the code-point test of whether `s` starts with white space (src/sql/regex.ts, JS_SPACE),
   * with a cheaper test before it where the dialect has one that is true whenever `test` is.
   */
  spaceFirst(s: string, test: string): string;
  /** Wall-clock ms in `zone` of the instant `ms` (BIGINT ms since the epoch, UTC). */
  wallOfInstant(ms: string, zone: string): string;
  /** ms since the epoch of a TIMESTAMP WITH TIME ZONE (or the dialect's instant type). */
  msOfInstant(ts: string): string;
  /** Wall-clock ms of a TIMESTAMP WITHOUT TIME ZONE (local date and time, counted as if UTC). */
  msOfLocal(ts: string): string;
  /** 'YYYY-MM-DD' of day number `d` (days since 1970-01-01). */
  dayLabel(d: string): string;
  /** A SELECT yielding one column `x` with the integers lo…hi; `from` is a relation lo and hi may refer to. */
  series(lo: string, hi: string, from: string): string;
  /** An ORDER BY key that sorts strings in Unicode code-point (UTF-8 byte) order. */
  binaryOrder(s: string): string;
  /** The values x joined with commas, in the order of the numeric key (an aggregate). */
  commaAgg(x: string, key: string): string;
  /** A JSON string literal ("…", escaped) of the text value x. */
  jsonString(x: string): string;
  /** Cast a number to text (for JSON). */
  numText(x: string): string;
  /**
   * Appended to a per-row step's SELECT so that the planner computes its expressions once a row
   * rather than copying them into every use in the next step (PostgreSQL inlines CTEs; the copies
   * multiply step by step). Empty where the planner does not copy.
   */
  readonly fence: string;
}

const ansi = (s: string) => `'${s.replace(/'/g, "''")}'`;
/** A literal for dialects whose strings take backslash escapes (spark, bigquery). */
const backslashed = (s: string) => `'${s.replace(/\\/g, '\\\\').replace(/'/g, "\\'")}'`;
const dq = (s: string) => `"${s.replace(/"/g, '""')}"`;

/** DuckDB 1.5 (duckdb.org/docs: regexp_extract with a name list, ICU time zones, epoch_ms). */
const duckdb: Dialect = {
  name: 'duckdb',
  fence: '',
  str: ansi,
  ident: dq,
  bigint: 'BIGINT',
  double: 'DOUBLE',
  text: 'VARCHAR',
  intDiv: (a, b) => `((${a}) // (${b}))`,
  // in doubles: a quotient that is not whole is at least 1/b from the nearest integer, and for |a| < 2^53
  // the rounding of a / b errs by less than that, so floor is exact (one division, not two mods and one)
  floorDiv: (a, b) => `CAST(floor(CAST(${a} AS DOUBLE) / ${b}) AS BIGINT)`,
  mod: (a, b) => `((${a}) % (${b}))`,
  toDouble: (s) => `TRY_CAST(${s} AS DOUBLE)`,
  chr: (c) => `chr(${c})`,
  firstCode: (s) => `unicode(${s})`,
  matches: (s, p) => `regexp_full_match(${s}, ${ansi(renderPattern(p, 'noncapturing').source)})`,
  strip: (s, p) => `regexp_replace(${s}, ${ansi(renderPattern(p, 'noncapturing').source)}, '')`,
  // the shape by its length in bytes and a GLOB, the digits and the calendar by DuckDB's own timestamp
  // cast (which takes the Z as UTC and refuses a non-digit in the two-digit fields, with two
  // exceptions the GLOB's classes close: white space before the hour, which the cast skips, and a
  // one-digit second before a dot, which it reads as a second with an empty fraction). A year that is
  // not four digits falls outside 1900-2199 and is refused later, as the memory engine refuses it.
  // Hour 24 is not the fast form: the cast takes only 24:00:00(.000), as the next day's midnight, so the
  // hour's text is looked at (fastUtcKeep) only for a value at midnight. Checked on near misses of the
  // form (test/sql/dialects.test.ts): each text read gets the memory engine's instant, and every text in
  // the form is read; on such near misses the earlier test (two LIKEs, substr(s, 12, 2) < '24', the
  // cast) read the same texts but for the two exceptions.
  fastUtcMs: (s) =>
    `CASE WHEN CASE strlen(${s}) WHEN 24 THEN ${s} GLOB '????-??-??T[0-2]?:??:??.???Z' WHEN 20 THEN ${s} GLOB '????-??-??T[0-2]?:??:?[0-9]Z' ELSE false END THEN epoch_ms(TRY_CAST(${s} AS TIMESTAMP)) END`,
  fastUtcKeep: (ms, s) => `(${ms} % 86400000 <> 0 OR substr(${s}, 12, 2) < '24')`,
  // text compares by its UTF-8 bytes: white space below 33 begins with a byte below '!', and every code
  // point from 160 (U+00A0, bytes C2 A0) up begins with bytes at or above those of U+00A0
  spaceFirst: (s, test) => `((${s} < '!' OR ${s} >= chr(160)) AND ${test})`,
  wallOfInstant: (ms, zone) => (isUtc(zone) ? ms : `epoch_ms(timezone(${ansi(zone)}, epoch_ms(${ms}) AT TIME ZONE 'UTC'))`),
  msOfInstant: (ts) => `epoch_ms(CAST(${ts} AS TIMESTAMPTZ))`,
  msOfLocal: (ts) => `epoch_ms(CAST(${ts} AS TIMESTAMP))`,
  dayLabel: (d) => `CAST(DATE '1970-01-01' + CAST(${d} AS INTEGER) AS VARCHAR)`,
  series: (lo, hi, from) => `SELECT CAST(s.x AS BIGINT) AS x FROM ${from}, generate_series(${lo}, ${hi}) AS s(x)`,
  binaryOrder: (s) => s,
  commaAgg: (x, key) => `string_agg(${x}, ',' ORDER BY ${key})`,
  jsonString: (x) => `CAST(to_json(${x}) AS VARCHAR)`,
  numText: (x) => `CAST(${x} AS VARCHAR)`,
};

/** PostgreSQL 15 (postgresql.org/docs/15: regexp_match, AT TIME ZONE, COLLATE "C", generate_series). */
const postgres: Dialect = {
  name: 'postgres',
  fence: '\nOFFSET 0',
  str: ansi,
  ident: dq,
  bigint: 'BIGINT',
  double: 'DOUBLE PRECISION',
  text: 'TEXT',
  intDiv: (a, b) => `((${a}) / (${b}))`,
  mod: (a, b) => `((${a}) % (${b}))`,
  // guarded by the caller (a decimal number of at most 40 characters): the cast cannot fail
  toDouble: (s) => `CAST(${s} AS DOUBLE PRECISION)`,
  chr: (c) => `chr(${c})`,
  firstCode: (s) => `ascii(${s})`,
  spaceFirst: (_s, test) => test,
  matches: (s, p) => `(${s} ~ ${ansi(renderPattern(p, 'noncapturing', 'postgres').source)})`,
  strip: (s, p) => `regexp_replace(${s}, ${ansi(renderPattern(p, 'noncapturing', 'postgres').source)}, '')`,
  wallOfInstant: (ms, zone) =>
    // timezone(zone, timestamptz) is AT TIME ZONE: the local date and time there
    isUtc(zone) ? ms : `CAST(EXTRACT(EPOCH FROM timezone(${ansi(zone)}, to_timestamp(0) + (${ms}) * INTERVAL '1 millisecond')) * 1000 AS BIGINT)`,
  msOfInstant: (ts) => `CAST(EXTRACT(EPOCH FROM CAST(${ts} AS TIMESTAMPTZ)) * 1000 AS BIGINT)`,
  msOfLocal: (ts) => `CAST(EXTRACT(EPOCH FROM CAST(${ts} AS TIMESTAMP)) * 1000 AS BIGINT)`,
  dayLabel: (d) => `to_char(DATE '1970-01-01' + CAST(${d} AS INTEGER), 'YYYY-MM-DD')`,
  series: (lo, hi, from) => `SELECT CAST(generate_series(${lo}, ${hi}) AS BIGINT) AS x FROM ${from}`,
  // bytea compares bytewise: UTF-8 byte order, whatever the database's collation
  binaryOrder: (s) => `convert_to(${s}, 'UTF8')`,
  commaAgg: (x, key) => `string_agg(${x}, ',' ORDER BY ${key})`,
  jsonString: (x) => `CAST(to_json(CAST(${x} AS TEXT)) AS TEXT)`,
  numText: (x) => `CAST(${x} AS TEXT)`,
};

/** Spark SQL 3.5 (spark.apache.org/docs: regexp_extract, from_utc_timestamp, sequence/explode). */
const spark: Dialect = {
  name: 'spark',
  fence: '',
  str: backslashed,
  ident: (s) => `\`${s.replace(/`/g, '``')}\``,
  bigint: 'BIGINT',
  double: 'DOUBLE',
  text: 'STRING',
  // exact for the compiler's operands (below 2^52, and ≥ 0 or a multiple of b)
  intDiv: (a, b) => `CAST(FLOOR((${a}) / (${b})) AS BIGINT)`,
  mod: (a, b) => `((${a}) % (${b}))`,
  // guarded by the caller (a decimal number): the cast cannot fail
  toDouble: (s) => `CAST(${s} AS DOUBLE)`,
  chr: (c) => (c < 256 ? `chr(${c})` : `decode(unhex(${backslashed(utf8Hex(c))}), 'UTF-8')`),
  firstCode: (s) => `ascii(${s})`,
  spaceFirst: (_s, test) => test,
  matches: (s, p) => `(${s} RLIKE ${backslashed(renderPattern(p, 'noncapturing', 'java').source)})`,
  strip: (s, p) => `regexp_replace(${s}, ${backslashed(renderPattern(p, 'noncapturing', 'java').source)}, '')`,
  wallOfInstant: (ms, zone) => (isUtc(zone) ? ms : `unix_millis(from_utc_timestamp(timestamp_millis(${ms}), ${backslashed(zone)}))`),
  msOfInstant: (ts) => `unix_millis(CAST(${ts} AS TIMESTAMP))`,
  // the local date and time read in the session's zone, then shifted back: the same in any session zone
  msOfLocal: (ts) => `unix_millis(to_utc_timestamp(CAST(${ts} AS TIMESTAMP), current_timezone()))`,
  dayLabel: (d) => `CAST(date_add(DATE '1970-01-01', CAST(${d} AS INT)) AS STRING)`,
  series: (lo, hi, from) => `SELECT CAST(explode(sequence(${lo}, ${hi})) AS BIGINT) AS x FROM ${from}`,
  binaryOrder: (s) => s,
  // sorted as text behind a fixed-width key and a control character (which JSON text never holds), then the keys are cut
  commaAgg: (x, key) =>
    `regexp_replace(concat_ws(',', sort_array(collect_list(concat(lpad(CAST(${key} + 100000000 AS STRING), 12, '0'), chr(1), ${x})))), ${backslashed('[0-9]{12}\\x01')}, '')`,
  jsonString: (x) => `regexp_extract(to_json(named_struct('v', ${x})), '^\\\\{"v":(.*)\\\\}$', 1)`,
  numText: (x) => `CAST(${x} AS STRING)`,
};

/** Trino 4xx (trino.io/docs: regexp_extract, at_timezone, from_unixtime_nanos, sequence/UNNEST). */
const trino: Dialect = {
  name: 'trino',
  fence: '',
  str: ansi,
  ident: dq,
  bigint: 'BIGINT',
  double: 'DOUBLE',
  text: 'VARCHAR',
  intDiv: (a, b) => `((${a}) / (${b}))`,
  mod: (a, b) => `mod(${a}, ${b})`,
  toDouble: (s) => `TRY_CAST(${s} AS DOUBLE)`,
  chr: (c) => `chr(${c})`,
  firstCode: (s) => `codepoint(CAST(substr(${s}, 1, 1) AS VARCHAR(1)))`,
  spaceFirst: (_s, test) => test,
  matches: (s, p) => `regexp_like(${s}, ${ansi(renderPattern(p, 'noncapturing', 'java').source)})`,
  strip: (s, p) => `regexp_replace(${s}, ${ansi(renderPattern(p, 'noncapturing', 'java').source)})`,
  wallOfInstant: (ms, zone) =>
    isUtc(zone) ? ms : `date_diff('millisecond', TIMESTAMP '1970-01-01 00:00:00.000', CAST(at_timezone(from_unixtime_nanos(CAST(${ms} AS BIGINT) * 1000000), ${ansi(zone)}) AS TIMESTAMP(3)))`,
  msOfInstant: (ts) => `CAST(floor(to_unixtime(${ts}) * 1000) AS BIGINT)`,
  msOfLocal: (ts) => `date_diff('millisecond', TIMESTAMP '1970-01-01 00:00:00.000', CAST(${ts} AS TIMESTAMP(3)))`,
  dayLabel: (d) => `CAST(date_add('day', ${d}, DATE '1970-01-01') AS VARCHAR)`,
  series: (lo, hi, from) => `SELECT CAST(s.x AS BIGINT) AS x FROM ${from} CROSS JOIN UNNEST(sequence(${lo}, ${hi})) AS s(x)`,
  binaryOrder: (s) => s,
  commaAgg: (x, key) => `array_join(array_agg(${x} ORDER BY ${key}), ',')`,
  jsonString: (x) => `json_format(CAST(${x} AS JSON))`,
  numText: (x) => `CAST(${x} AS VARCHAR)`,
};

/** BigQuery GoogleSQL (cloud.google.com/bigquery/docs/reference/standard-sql: REGEXP_EXTRACT, DATETIME(ts, zone)). */
const bigquery: Dialect = {
  name: 'bigquery',
  fence: '',
  str: backslashed,
  ident: (s) => `\`${s.replace(/`/g, '\\`')}\``,
  bigint: 'INT64',
  double: 'FLOAT64',
  text: 'STRING',
  intDiv: (a, b) => `DIV(${a}, ${b})`,
  mod: (a, b) => `MOD(${a}, ${b})`,
  toDouble: (s) => `SAFE_CAST(${s} AS FLOAT64)`,
  chr: (c) => `CODE_POINTS_TO_STRING([${c}])`,
  firstCode: (s) => `UNICODE(${s})`,
  spaceFirst: (_s, test) => test,
  matches: (s, p) => `REGEXP_CONTAINS(${s}, ${backslashed(renderPattern(p, 'noncapturing').source)})`,
  strip: (s, p) => `REGEXP_REPLACE(${s}, ${backslashed(renderPattern(p, 'noncapturing').source)}, '')`,
  wallOfInstant: (ms, zone) => (isUtc(zone) ? ms : `UNIX_MILLIS(TIMESTAMP(DATETIME(TIMESTAMP_MILLIS(${ms}), ${backslashed(zone)})))`),
  msOfInstant: (ts) => `UNIX_MILLIS(${ts})`,
  msOfLocal: (ts) => `UNIX_MILLIS(TIMESTAMP(${ts}))`,
  dayLabel: (d) => `CAST(DATE_ADD(DATE '1970-01-01', INTERVAL ${d} DAY) AS STRING)`,
  series: (lo, hi, from) => `SELECT x FROM ${from}, UNNEST(GENERATE_ARRAY(${lo}, ${hi})) AS x`,
  binaryOrder: (s) => s,
  // the delimiter is a comma when left out (written so: the parser the tests use knows only this form)
  commaAgg: (x, key) => `STRING_AGG(${x} ORDER BY ${key})`,
  jsonString: (x) => `TO_JSON_STRING(${x})`,
  numText: (x) => `CAST(${x} AS STRING)`,
};

/** Snowflake (docs.snowflake.com: REGEXP_SUBSTR with group number, CONVERT_TIMEZONE, ARRAY_GENERATE_RANGE). */
const snowflake: Dialect = {
  name: 'snowflake',
  fence: '',
  str: (s) => `'${s.replace(/\\/g, '\\\\').replace(/'/g, "''")}'`,
  ident: dq,
  bigint: 'BIGINT',
  double: 'DOUBLE',
  text: 'VARCHAR',
  intDiv: (a, b) => `TRUNC((${a}) / (${b}))`,
  mod: (a, b) => `MOD(${a}, ${b})`,
  toDouble: (s) => `TRY_CAST(${s} AS DOUBLE)`,
  chr: (c) => `CHR(${c})`,
  firstCode: (s) => `UNICODE(${s})`,
  spaceFirst: (_s, test) => test,
  matches: (s, p) => `REGEXP_LIKE(${s}, ${snowflake.str(renderPattern(p, 'capturing', 'posix').source)})`,
  strip: (s, p) => `REGEXP_REPLACE(${s}, ${snowflake.str(renderPattern(p, 'capturing', 'posix').source)}, '')`,
  wallOfInstant: (ms, zone) => (isUtc(zone) ? ms : `DATE_PART(EPOCH_MILLISECOND, CONVERT_TIMEZONE('UTC', ${snowflake.str(zone)}, TO_TIMESTAMP_NTZ(${ms}, 3)))`),
  msOfInstant: (ts) => `DATE_PART(EPOCH_MILLISECOND, CAST(${ts} AS TIMESTAMP_TZ))`,
  msOfLocal: (ts) => `DATE_PART(EPOCH_MILLISECOND, CAST(${ts} AS TIMESTAMP_NTZ))`,
  dayLabel: (d) => `TO_VARCHAR(DATEADD(day, ${d}, DATE '1970-01-01'), 'YYYY-MM-DD')`,
  series: (lo, hi, from) => `SELECT CAST(${lo} + f.value AS BIGINT) AS x FROM ${from}, LATERAL FLATTEN(INPUT => ARRAY_GENERATE_RANGE(0, ${hi} - ${lo} + 1)) f`,
  binaryOrder: (s) => `COLLATE(${s}, '')`,
  // sorted as text behind a fixed-width key and a control character (which JSON text never holds), then the keys are cut
  commaAgg: (x, key) =>
    `REGEXP_REPLACE(ARRAY_TO_STRING(ARRAY_SORT(ARRAY_AGG(LPAD(TO_VARCHAR(${key} + 100000000), 12, '0') || CHR(1) || ${x})), ','), '[0-9]{12}\\x01', '')`,
  jsonString: (x) => `TO_JSON(TO_VARIANT(${x}))`,
  numText: (x) => `TO_VARCHAR(${x})`,
};

function isUtc(zone: string): boolean {
  return zone === 'UTC' || zone === 'Etc/UTC';
}

function utf8Hex(code: number): string {
  return Buffer.from(String.fromCodePoint(code), 'utf8').toString('hex');
}

export const DIALECT: Record<DialectName, Dialect> = { duckdb, postgres, spark, trino, bigquery, snowflake };
