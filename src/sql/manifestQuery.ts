/**
 * The manifest of a waist built in a warehouse: what is known without data (rules, states, the
 * format) as literals, and the rest (periods, row accounting, the last period's coverage, users,
 * events, the --by attribute) counted by one query whose single cell is the whole manifest.json.
 * The same counts as src/sql/facts.ts makes from an engine's results.
 */
import { PER_PERSON_MIN_USERS, PER_PERSON_SHARE } from '../lifecycle/perPerson.js';
import { weekdayIndex } from '../periods/calendar.js';
import type { Rules } from '../rules/schema.js';
import { makeManifest } from '../waist/build.js';
import { EVENT_NAMES_KEPT } from './compile.js';
import type { Dialect } from './dialects.js';

const DAY = 86_400_000;

/** The manifest fields known without data, in manifest order; `null` marks a field the data fill. */
export function staticManifest(rules: Rules, engine: string, warmup: number, by: string | undefined): Record<string, unknown> {
  // the engines' own manifest builder, with the data's fields blanked: rules, states and splits as every engine writes them
  const rows = { read: 0, used: 0, notKeyEvent: 0, afterRange: 0, partial: 0, rejected: {}, lines: { read: 0, header: 0, blank: 0, records: 0, rejected: 0 } };
  const m: Record<string, unknown> = makeManifest({
    rules, warmup, periods: [], engine, rows, rowsInLastPeriod: 0, lastPeriod: { label: '', coverage: 0, complete: false },
    users: 0, events: [], attributes: [], by: by ?? null, byPerPerson: false, warnings: [],
  });
  for (const f of DATA_FIELDS) m[f] = null;
  return m;
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
  const ws = weekdayIndex(rules.weekStart);
  // first day of period key x, and of x + 1 (calendar.ts, periodStartDay)
  const startDay = (x: string) =>
    rules.grain === 'day' ? x : rules.grain === 'week' ? `(${x}) * 7 + ${ws - 3}` : monthStartDay(D, x);
  const startMs = `(${startDay('b.end_key')}) * ${DAY}`;
  const endMs = `(${startDay('b.end_key + 1')}) * ${DAY}`;
  const later = 'ac.after_rows > 0';
  const cov = `CASE WHEN ${later} THEN 1.0 WHEN lp.max_wall IS NULL THEN 0.0 ELSE GREATEST(0.0, LEAST(1.0, CAST(lp.max_wall - ${startMs} AS ${D.double}) / CAST(${endMs} - ${startMs} AS ${D.double}))) END`;
  const complete = `CASE WHEN ${later} OR lp.max_wall >= ${endMs} - CAST(${endMs} - ${startMs} AS ${D.double}) / 7 THEN 'true' ELSE 'false' END`;
  const keys = rules.activity.keyEvents;
  const isKey = keys ? `CASE WHEN event IN (${keys.map((k) => D.str(k)).join(', ')}) THEN 'true' ELSE 'false' END` : "'true'";
  const sum = (where: string) => `SUM(CASE WHEN ${where} THEN n ELSE 0 END)`;
  // one-row relations, cross-joined: each holds one part of the manifest
  const from = [
    'tm_bounds b',
    `(SELECT count(*) AS n, max(u.wall_ms) AS max_wall FROM tm_used u CROSS JOIN tm_bounds bb WHERE u.k = bb.end_key) lp`,
    `(SELECT ${sum("coalesce(reason, '') <> '(blank line)'")} AS read_rows, ${sum("status = 'used'")} AS used_rows, ${sum("status = 'notkey'")} AS notkey_rows, ${sum("status = 'after'")} AS after_rows,
     ${sum("status = 'rejected' AND reason <> '(blank line)'")} AS rejected_rows, ${sum("reason = '(blank line)'")} AS blank_rows
   FROM (SELECT status, reason, count(*) AS n FROM tm_ev GROUP BY status, reason) a) ac`,
    `(SELECT coalesce(${D.commaAgg(`${D.jsonString('reason')} || ':' || ${D.numText('n')}`, 'rn')}, '') AS txt
   FROM (SELECT reason, n, row_number() OVER (ORDER BY ${D.binaryOrder('reason')}) AS rn FROM (SELECT reason, count(*) AS n FROM tm_ev WHERE status = 'rejected' AND reason <> '(blank line)' GROUP BY reason) r0) r1) rj`,
    `(SELECT coalesce(${D.commaAgg(`'"' || label || '"'`, 'k')}, '') AS txt, max(CASE WHEN k = bp.end_key THEN label END) AS last_label FROM tm_periods CROSS JOIN tm_bounds bp) pe`,
    `(SELECT count(DISTINCT user_id) AS users FROM tm_active) us`,
    `(SELECT coalesce(${D.commaAgg(`'{"name":' || ${D.jsonString('event')} || ',"rows":' || ${D.numText('n')} || ',"key":' || ${isKey} || '}'`, 'r')}, '') AS txt
   FROM (SELECT event, n, row_number() OVER (ORDER BY n DESC, ${D.binaryOrder('event')}) AS r
         FROM (SELECT event, count(*) AS n FROM tm_ev WHERE event IS NOT NULL AND (status <> 'rejected' OR reason = 'missing event name') GROUP BY event) e0) e1
   WHERE r <= ${EVENT_NAMES_KEPT}) ev`,
    ...(by === undefined ? [] : [
      `(SELECT count(DISTINCT by_value) AS n_values, count(DISTINCT user_id) AS with_value FROM tm_used WHERE by_value <> '') bv`,
      `(SELECT count(DISTINCT u1) AS with_own FROM (SELECT by_value, min(user_id) AS u1, max(user_id) AS u2 FROM tm_used WHERE by_value <> '' GROUP BY by_value) o WHERE u1 = u2) bo`,
    ]),
  ];
  const attributes = by === undefined ? "'[]'" : `'[{"name":' || ${D.jsonString(D.str(by))} || ',"values":' || ${n('bv.n_values')} || '}]'`;
  const perPerson = by === undefined ? "'false'"
    : `CASE WHEN bv.with_value >= ${PER_PERSON_MIN_USERS} AND bo.with_own > ${PER_PERSON_SHARE} * bv.with_value THEN 'true' ELSE 'false' END`;
  const head = JSON.stringify(fixed).split('"periods":null')[0]; // '{"format":…,"engine":{…},'
  const parts = [
    D.str(`${head}"periods":[`), 'pe.txt',
    D.str('],"rows":{"read":'), n('ac.read_rows'),
    D.str(',"used":'), n('ac.used_rows'),
    D.str(',"notKeyEvent":'), n('ac.notkey_rows'),
    D.str(',"afterRange":'), n('ac.after_rows'),
    D.str(',"partial":0,"rejected":{'), 'rj.txt',
    // lines: one a record (SQL sees no physical lines), no header, the blank lines a reader marked
    D.str('},"lines":{"read":'), n('ac.read_rows + ac.blank_rows'),
    D.str(',"header":0,"blank":'), n('ac.blank_rows'),
    D.str(',"records":'), n('ac.read_rows - ac.rejected_rows'),
    D.str(',"rejected":'), n('ac.rejected_rows'),
    D.str('}},"rowsInLastPeriod":'), D.numText('lp.n'),
    D.str(',"lastPeriod":{"label":"'), 'pe.last_label',
    D.str('","coverage":'), D.numText(cov),
    D.str(',"complete":'), complete,
    D.str('},"users":'), n('us.users'),
    D.str(',"events":['), 'ev.txt',
    D.str('],"attributes":'), attributes,
    D.str(`,"by":${JSON.stringify(by ?? null)},"byPerPerson":`), perPerson,
    D.str(',"warnings":[]}'),
  ];
  return `SELECT ${parts.join('\n  || ')} AS manifest\nFROM ${from.join('\nCROSS JOIN ')}`;
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
