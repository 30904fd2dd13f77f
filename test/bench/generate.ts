/**
 * The benchmark's event logs: deterministic, generated inside DuckDB (fast, and the same bytes on
 * every run of the pinned DuckDB version) as CSV and as Parquet from one query. Invented data in the
 * makerspace scenario: N events of N/20 members over 52 weeks from 2025-12-01; a member's events
 * fall near the week they arrive (an exponential number of weeks after it, mean 6), at a uniform time
 * in that week; four event names, a plan attribute. Randomness is DuckDB's hash() of the row number.
 */
import { existsSync, mkdirSync, renameSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { DuckDBInstance } from '@duckdb/node-api';

export interface BenchLog {
  events: number;
  csv?: string;
  parquet: string;
}

const WEEKS = 52;
/** Bumped when the generator changes, so cached files are made again. */
const VERSION = 1;

function select(n: number): string {
  const users = Math.max(1000, Math.round(n / 20));
  const r = (k: number) => `((hash(i * 4 + ${k}) // 2048)::DOUBLE / 9007199254740992.0)`; // 53 random bits in [0, 1)
  return `SELECT 'u' || u AS user_id,
      make_timestamp((${Date.UTC(2025, 11, 1)}::BIGINT + least(${WEEKS - 1}, u * ${WEEKS} // ${users} + floor(-ln(1 - r2) * 6)::BIGINT) * 604800000 + floor(r3 * 604800000)::BIGINT) * 1000)::TIMESTAMPTZ AS ts,
      ['booking_made', 'checked_in', 'tool_reserved', 'class_enrolled'][u % 4 + 1] AS event,
      CASE WHEN u % 3 = 0 THEN 'pro' ELSE 'hobby' END AS plan
    FROM (SELECT i, floor(${r(1)} * ${users})::BIGINT AS u, ${r(2)} AS r2, ${r(3)} AS r3 FROM range(${n}) t(i))`;
}

/** The log of `n` events in `dir` (made when missing): CSV unless `parquetOnly`, and Parquet. */
export async function benchLog(dir: string, n: number, parquetOnly = false): Promise<BenchLog> {
  mkdirSync(dir, { recursive: true });
  const base = join(dir, `events-v${VERSION}-${n}`);
  const csv = `${base}.csv`, parquet = `${base}.parquet`;
  const need = [...(parquetOnly ? [] : [csv]), parquet].filter((f) => !existsSync(f));
  if (need.length > 0) {
    const db = await (await DuckDBInstance.create(':memory:')).connect();
    await db.run("SET TimeZone='UTC'");
    for (const f of need) {
      const tmp = `${f}.part`;
      const q = select(n);
      if (f === csv) {
        await db.run(`COPY (SELECT user_id, strftime(ts, '%Y-%m-%dT%H:%M:%S.%gZ') AS timestamp, event, plan FROM (${q})) TO '${tmp}' (FORMAT csv, HEADER)`);
      } else {
        await db.run(`COPY (SELECT user_id, ts AS timestamp, event, plan FROM (${q})) TO '${tmp}' (FORMAT parquet, COMPRESSION snappy)`);
      }
      renameSync(tmp, f);
    }
  }
  return { events: n, csv: parquetOnly ? undefined : csv, parquet };
}

export function sizeOf(file: string): number {
  return statSync(file).size;
}
