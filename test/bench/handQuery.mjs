// The hand-written DuckDB query the benchmark compares engines with: the weekly rules of the benchmark
// (weeks from Monday, UTC, every event counts, minEvents 1, lapseLimit 2), written as fast as we could
// write it. Usage: node handQuery.mjs EVENTS(.csv|.parquet) OUT.json
//
// How it stays fast: it never builds one row per user and week. It keeps the distinct (user, week)
// pairs, looks at each active week with lag/lead, and emits a fixed handful of moves per active week:
// the move into it, and the moves through the quiet weeks after it — lapsing while idle ≤ lapseLimit,
// then dormant, whose long dormant → dormant runs are written as +1 at their start and −1 after their
// end and summed over the weeks by a window. Plain CSV reading, with the columns' types given.
//
// Output: {"moves": [[week, from, to, users], …]} where week is (days since 1970-01-01 + 3) div 7,
// from is −1 for arrivals, and states are 0 fresh, 1 engaged, 2 returned, 3 lapsing, 4 dormant.
import { writeFileSync } from 'node:fs';
import { DuckDBInstance } from '@duckdb/node-api';

const [file, out] = process.argv.slice(2);
const L = 2;
const inst = await DuckDBInstance.create(':memory:');
const c = await inst.connect();
await c.run("SET TimeZone='UTC'");
const src = file.endsWith('.parquet')
  ? `read_parquet('${file}')`
  : `read_csv('${file}', header = true, columns = {'user_id': 'VARCHAR', 'timestamp': 'TIMESTAMPTZ', 'event': 'VARCHAR', 'plan': 'VARCHAR'})`;
const sql = `
WITH act AS (
  SELECT DISTINCT user_id AS u, (epoch_ms("timestamp") // 86400000 + 3) // 7 AS w FROM ${src}
), seq AS (
  SELECT w, lag(w) OVER win AS pw, lag(w, 2) OVER win AS ppw, lead(w) OVER win AS nw
  FROM act WINDOW win AS (PARTITION BY u ORDER BY w)
), b AS (SELECT max(w) AS w1 FROM act),
st AS (
  SELECT w, coalesce(nw, w1 + 1) AS stop,
    CASE WHEN pw IS NULL THEN 0 WHEN pw = w - 1 THEN 1 ELSE 2 END AS s,
    CASE WHEN pw IS NULL THEN -1
         WHEN pw = w - 1 THEN (CASE WHEN ppw IS NULL THEN 0 WHEN ppw = pw - 1 THEN 1 ELSE 2 END)
         WHEN w - 1 - pw <= ${L} THEN 3 ELSE 4 END AS f,
    w1
  FROM seq, b
), moves AS (
  SELECT w AS p, f, s AS t, 1 AS d FROM st
  UNION ALL
  SELECT w + k, CASE WHEN k = 1 THEN s ELSE 3 END, CASE WHEN k <= ${L} THEN 3 ELSE 4 END, 1
    FROM st, range(1, ${L + 2}) r(k) WHERE w + k < stop
  UNION ALL
  SELECT w + ${L + 2}, 4, 4, 1 FROM st WHERE w + ${L + 2} < stop
  UNION ALL
  SELECT stop, 4, 4, -1 FROM st WHERE w + ${L + 2} < stop AND stop <= w1
), per AS (SELECT p, f, t, sum(d) AS d FROM moves GROUP BY ALL)
SELECT p::INTEGER, f::INTEGER, t::INTEGER,
  (CASE WHEN f = 4 AND t = 4 THEN sum(d) OVER (PARTITION BY f, t ORDER BY p) ELSE d END)::INTEGER AS n
FROM per ORDER BY 1, 2, 3`;
const rows = (await c.runAndReadAll(sql)).getRows();
writeFileSync(out, JSON.stringify({ moves: rows.filter((r) => r[3] !== 0) }));
