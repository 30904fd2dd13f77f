/**
 * The store's files and tables. A store is a folder holding one DuckDB database, `store.duckdb`
 * (with DuckDB's write-ahead log beside it while it is open), and `update.lock` while an update runs.
 *
 * Tables (README "The weekly routine" describes them for readers who query the store with SQL):
 * - `store_info` (key, value): the format and version, the rules (JSON), the first and last period
 *   keys, the update count, the waist so far (JSON: manifest and tables in full form, waist/types.ts),
 *   and the running totals its manifest is made from (row accounting, attribute names, the earliest
 *   and latest rows, the last period's completeness).
 * - `applied_files`: one row a file applied: number, path as given, SHA-256 of its bytes, size, how it
 *   was read (format, delimiter, skip bad rows), the update that applied it and when, its columns
 *   (attribute names, whether it had an event column), its line counts and its row accounting (JSON),
 *   its first and last period.
 * - `events`: every row of every applied file as the reader gave it (user id, timestamp as written,
 *   event name, attribute values as a JSON list in the file's attribute order), and the records the
 *   reader rejected (`reject` names why), in file order: what a rebuild replays.
 * - `user_state`: per-user state after the last period: first active period, state and previous
 *   state, last active period, quiet periods in a row (saturating at the lapse limit), first dormant
 *   period, and the attributes of the latest active period (a JSON object); only the users an update
 *   changes are written. The view `users` adds each user's tenure in the last period.
 * - `event_names` (name, rows), `attribute_values` (attribute, value): the counts and distinct values
 *   behind the manifest's `events` and `attributes`.
 * - `updates`: one row an update: when, files applied and skipped, how (extend, rebuild, reclassify),
 *   the restated periods, and its digest (JSON).
 */

export const STORE_FILE = 'store.duckdb';
export const STORE_FORMAT = 'tidemark-store';
export const STORE_VERSION = 1;

export const SCHEMA_SQL = [
  'CREATE TABLE store_info (key VARCHAR PRIMARY KEY, value VARCHAR NOT NULL)',
  `CREATE TABLE applied_files (file INTEGER, path VARCHAR, sha256 VARCHAR, bytes BIGINT, format VARCHAR, delimiter VARCHAR, skip_bad_rows BOOLEAN,
    update_no INTEGER, applied_at TIMESTAMP, attributes VARCHAR, has_event BOOLEAN, header_lines INTEGER, blank_lines INTEGER, lines INTEGER,
    entries INTEGER, row_account VARCHAR, first_period DATE, last_period DATE)`,
  'CREATE TABLE events (file INTEGER, entry INTEGER, line INTEGER, lines INTEGER, reject VARCHAR, user_id VARCHAR, ts VARCHAR, event VARCHAR, attrs VARCHAR)',
  `CREATE TABLE user_state (uid INTEGER, id VARCHAR, first_period DATE, state VARCHAR, previous_state VARCHAR, last_active DATE, quiet INTEGER,
    first_dormant DATE, attributes VARCHAR)`,
  'CREATE TABLE event_names (name VARCHAR, rows BIGINT)',
  'CREATE TABLE attribute_values (attribute VARCHAR, value VARCHAR)',
  'CREATE TABLE updates (update_no INTEGER, applied_at TIMESTAMP, files INTEGER, skipped INTEGER, mode VARCHAR, restated VARCHAR, digest VARCHAR)',
];

/** One of the earliest or latest rows, as stored (ingest/extremes.ts keeps them while reading). */
export interface StoredExtreme {
  wallMs: number;
  text: string;
  file: string;
  line: number;
}

/** The running totals a manifest is made from (store_info key `totals`). */
export interface Totals {
  rows: import('../ingest/eventLog.js').RowAccount;
  /** Attribute names in order of first appearance. */
  attributes: string[];
  extremes: { earliest: StoredExtreme[]; latest: StoredExtreme[] };
  lastPeriod: { label: string; coverage: number; complete: boolean };
  rowsInLastPeriod: number;
}

/** Quote a string as an SQL literal. */
export function sqlString(s: string): string {
  return `'${s.replaceAll("'", "''")}'`;
}

/** The view `users`: user_state with the tenure (periods since the first active one) in `lastPeriod`. */
export function usersViewSql(grain: 'day' | 'week' | 'month', lastPeriod: string): string {
  const last = `DATE ${sqlString(lastPeriod)}`;
  const tenure = grain === 'month' ? `date_diff('month', first_period, ${last})` : grain === 'week' ? `date_diff('day', first_period, ${last}) // 7` : `date_diff('day', first_period, ${last})`;
  return `CREATE OR REPLACE VIEW users AS SELECT uid, id, first_period, state, previous_state, last_active, quiet, (${tenure})::INTEGER AS tenure, first_dormant, attributes FROM user_state`;
}
