/**
 * The manifest of a waist built in a warehouse: what is known without data (rules, states, the
 * format) as literals, and the rest (periods, row accounting, the last period's coverage, users,
 * events, the --by attribute) counted by one query whose single cell is the whole manifest.json.
 * The same counts as src/sql/facts.ts makes from an engine's results.
 */
import { bandLabels } from '../flows/aggregate.js';
import { PER_PERSON_MIN_USERS, PER_PERSON_SHARE } from '../lifecycle/perPerson.js';
import { stateTable } from '../lifecycle/states.js';
import { GRAIN_NOUN, weekdayIndex } from '../periods/calendar.js';
import type { Rules } from '../rules/schema.js';
import { TIDEMARK_VERSION } from '../waist/build.js';
import { WAIST_FORMAT, WAIST_VERSION } from '../waist/manifest.js';
import { EVENT_NAMES_KEPT } from './compile.js';
import type { Dialect } from './dialects.js';

const DAY = 86_400_000;

/** The manifest fields known without data, in manifest order; `null` marks a field the data fill. */
export function staticManifest(rules: Rules, engine: string, warmup: number, by: string | undefined): Record<string, unknown> {
  return {
    format: WAIST_FORMAT,
    version: WAIST_VERSION,
    rules: {
      name: rules.name ?? null,
      version: rules.version ?? null,
      grain: rules.grain,
      weekStart: rules.weekStart,
      timezone: rules.timezone,
      lapseLimit: rules.lapseLimit,
      minEvents: rules.activity.minEvents,
      keyEvents: rules.activity.keyEvents ?? null,
      tenureEdges: [...rules.tenureBands],
      tenureLabels: bandLabels(rules.tenureBands),
      warmup,
      minCell: rules.minCell,
    },
    states: stateTable({ lapseLimit: rules.lapseLimit, minEvents: rules.activity.minEvents }, GRAIN_NOUN[rules.grain]),
    engine: { name: engine, version: TIDEMARK_VERSION },
    periods: null,
    rows: null,
    rowsInLastPeriod: null,
    lastPeriod: null,
    users: null,
    events: null,
    attributes: null,
    by: by ?? null,
    byPerPerson: null,
  };
}

/** The fields of {@link staticManifest} that the manifest query fills. */
export const DATA_FIELDS = ['periods', 'rows', 'rowsInLastPeriod', 'lastPeriod', 'users', 'events', 'attributes', 'byPerPerson'] as const;

/**
 * The final SELECT of the manifest query (on the compiler's CTEs): one row, one column `manifest`.
 * @param by the attribute of the attribute splits (named in `attributes`), if any
 */
export function manifestSelect(D: Dialect, rules: Rules, engine: string, warmup: number, by: string | undefined): string {
  const fixed = staticManifest(rules, engine, warmup, by);
  const n = (x: string) => D.numText(`coalesce(${x}, 0)`);
  const count = (where: string) => `(SELECT ${n('SUM(n)')} FROM (SELECT status, reason, count(*) AS n FROM tm_ev GROUP BY status, reason) a WHERE ${where})`;
  const ws = weekdayIndex(rules.weekStart);
  // first day of period key x, and of x + 1 (calendar.ts, periodStartDay)
  const startDay = (x: string) =>
    rules.grain === 'day' ? x : rules.grain === 'week' ? `(${x}) * 7 + ${ws - 3}` : monthStartDay(D, x);
  const startMs = `(${startDay('b.end_key')}) * ${DAY}`;
  const endMs = `(${startDay('b.end_key + 1')}) * ${DAY}`;
  const later = `(SELECT count(*) FROM tm_ev WHERE status = 'after') > 0`;
  const cov = `CASE WHEN ${later} THEN 1.0 ELSE CASE WHEN lp.max_wall IS NULL THEN 0.0 ELSE GREATEST(0.0, LEAST(1.0, CAST(lp.max_wall - ${startMs} AS ${D.double}) / CAST(${endMs} - ${startMs} AS ${D.double}))) END END`;
  const complete = `CASE WHEN ${later} OR lp.max_wall >= ${endMs} - CAST(${endMs} - ${startMs} AS ${D.double}) / 7 THEN 'true' ELSE 'false' END`;
  const keys = rules.activity.keyEvents;
  const isKey = keys ? `CASE WHEN event IN (${keys.map((k) => D.str(k)).join(', ')}) THEN 'true' ELSE 'false' END` : "'true'";
  const events = `(SELECT coalesce(${D.stringAgg(`'{"name":' || ${D.jsonString('event')} || ',"rows":' || ${D.numText('n')} || ',"key":' || ${isKey} || '}'`, ',', 'r')}, '')
    FROM (SELECT event, n, row_number() OVER (ORDER BY n DESC, ${D.binaryOrder('event')}) AS r
          FROM (SELECT event, count(*) AS n FROM tm_ev WHERE event IS NOT NULL AND (status <> 'rejected' OR reason = 'missing event name') GROUP BY event) e) x
    WHERE r <= ${EVENT_NAMES_KEPT})`;
  const rejected = `(SELECT coalesce(${D.stringAgg(`${D.jsonString('reason')} || ':' || ${D.numText('n')}`, ',', 'reason')}, '')
    FROM (SELECT reason, count(*) AS n FROM tm_ev WHERE status = 'rejected' GROUP BY reason) x)`;
  const attributes = by === undefined ? "'[]'"
    : `'[{"name":' || ${D.jsonString(D.str(by))} || ',"values":' || (SELECT ${n('count(DISTINCT by_value)')} FROM tm_used WHERE by_value <> '') || '}]'`;
  const perPerson = by === undefined ? "'false'"
    : `(SELECT CASE WHEN with_value >= ${PER_PERSON_MIN_USERS} AND with_own > ${PER_PERSON_SHARE} * with_value THEN 'true' ELSE 'false' END FROM (
        SELECT (SELECT count(DISTINCT user_id) FROM tm_used WHERE by_value <> '') AS with_value,
          (SELECT count(DISTINCT u1) FROM (SELECT by_value, min(user_id) AS u1, max(user_id) AS u2 FROM tm_used WHERE by_value <> '' GROUP BY by_value) o WHERE u1 = u2) AS with_own) x)`;
  const head = JSON.stringify(fixed).split('"periods":null')[0]; // '{"format":…,"engine":{…},'
  const by_ = `,"by":${JSON.stringify(by ?? null)},"byPerPerson":`;
  const parts = [
    D.str(`${head}"periods":[`),
    `(SELECT coalesce(${D.stringAgg(`'"' || label || '"'`, ',', 'k')}, '') FROM tm_periods)`,
    D.str('],"rows":{"read":'),
    `(SELECT ${n('count(*)')} FROM tm_ev WHERE reason IS NULL OR reason <> '(blank line)')`,
    D.str(',"used":'), count("status = 'used'"),
    D.str(',"notKeyEvent":'), count("status = 'notkey'"),
    D.str(',"afterRange":'), count("status = 'after'"),
    D.str(',"partial":0,"rejected":{'), rejected,
    D.str('},"blankLines":0},"rowsInLastPeriod":'), D.numText('lp.n'),
    D.str(',"lastPeriod":{"label":"'), `(SELECT label FROM tm_periods WHERE k = b.end_key)`,
    D.str('","coverage":'), D.numText(cov),
    D.str(',"complete":'), complete,
    D.str('},"users":'), `(SELECT ${n('count(DISTINCT user_id)')} FROM tm_active)`,
    D.str(',"events":['), events,
    D.str('],"attributes":'), attributes,
    D.str(by_), perPerson,
    D.str('}'),
  ];
  return `SELECT ${parts.join('\n  || ')} AS manifest
FROM tm_bounds b CROSS JOIN (SELECT count(*) AS n, max(u.wall_ms) AS max_wall FROM tm_used u CROSS JOIN tm_bounds bb WHERE u.k = bb.end_key) lp`;
}

/** First day of month key x (integers only: Hinnant's days_from_civil on year x ÷ 12, month x mod 12 + 1). */
function monthStartDay(D: Dialect, x: string): string {
  const m = `(${D.mod(x, '12')} + 1)`;
  const y = `(${D.intDiv(x, '12')} - CASE WHEN ${m} <= 2 THEN 1 ELSE 0 END)`;
  const era = D.intDiv(y, '400');
  const yoe = `(${y} - ${era} * 400)`;
  const doy = `${D.intDiv(`153 * ${D.mod(`${m} + 9`, '12')} + 2`, '5')}`;
  return `(${era} * 146097 + ${yoe} * 365 + ${D.intDiv(yoe, '4')} - ${D.intDiv(yoe, '100')} + ${doy} - 719468)`;
}
