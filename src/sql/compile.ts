/**
 * The rules compiled to SQL: one query per waist table (src/waist/tables.ts), from a relation of
 * events, for any dialect in ./dialects.ts. The semantics are the memory engine's (README: Input,
 * Lifecycle states, Rules); the SQL reaches them another way:
 *
 *   tm_src      the events, one row each, in canonical columns (made by the caller: a table, a file reader)
 *   tm_text…    timestamps parsed as src/ingest/timestamp.ts does, into wall-clock ms in the rules' zone
 *   tm_ev       each row's fate (used, not a key event, after --to, rejected and why) and period key
 *   tm_uk       (user, period) of the used rows with their rows and latest time (with --by, summed
 *               from tm_ukv, the same by (user, period, value)); tm_fates: rows by fate, reason and
 *               event; tm_attr_values: each attribute's values. The tables and counts read these,
 *               not the rows.
 *   tm_bounds   the range: first and last period of the used rows, --from, the warm-up
 *   tm_active   (user, period) with at least minEvents key events
 *   tm_life     each active period with the one before and after (window functions): its state, the
 *               state before it, and the quiet run after it (gaps and islands, see ./gaps.ts)
 *   tm_lifepass (DuckDB without --by, CompileInput.lifePass) tm_life counted in one aggregate with
 *               GROUPING SETS, read by every later step instead of tm_life (tm_lt, tm_lr)
 *   tm_spans    quiet runs as spans of periods (from tm_quiet: active periods counted by period, state
 *               and quiet run); tm_span_counts turns them into per-period counts
 *               with running sums over the periods, so nothing is expanded per user and period
 *   tm_attr     the `--by` value of each (user, period): on the latest event, ties to the largest
 *               value in code-point order (read from tm_ukv); a user's segment is the value in their
 *               first active period
 * Split states (rules `splits`): the gap model gives the base state of each active period, and the
 * period's key events pick the sub-state, as the machine does.
 * and the tables and summaries read those. Period keys are integers (days, weeks, months since an
 * epoch, as src/periods/calendar.ts), so period arithmetic is integer arithmetic in every dialect.
 */
import { bandLabels } from '../flows/tenure.js';
import { WINDOW_MAX_AGE } from '../flows/types.js';
import { stateNames } from '../lifecycle/states.js';
import { weekdayIndex } from '../periods/calendar.js';
import type { Rules } from '../rules/schema.js';
import type { TableName } from '../waist/tables.js';
import type { Dialect } from './dialects.js';
import { gapModel, type GapModel } from './gaps.js';
import type { Cte } from './query.js';
import { BLANK, EPOCH, ISO, ISO_BASIC, JS_SPACE, LEADING_SPACE, TRAILING_SPACE } from './regex.js';

/** Oldest observed age of a cohort whose window counts the waist holds (one more than the analyses use). */
export const WINDOW_AGES = WINDOW_MAX_AGE + 1;
/** Events named in the manifest: the most frequent, and any tied with the last of them. */
export const EVENT_NAMES_KEPT = 50;
/** The longest timestamp text (after trimming) the SQL parses; longer ones are bad timestamps. */
export const MAX_TIMESTAMP_TEXT = 40;
const MS_1900 = Date.UTC(1900, 0, 1);
const MS_2200 = Date.UTC(2200, 0, 1);
const DAY_MS = 86_400_000;

/**
 * The canonical columns of tm_src, the caller's relation of events. Absent ones are NULL; `has` says
 * which are present so that the SQL leaves out what cannot happen.
 * - user_id, event, by_value, attr_0…: text (NULL as empty);
 * - ts_text: the timestamp as text (parsed as the memory engine parses it);
 * - ts_num: a timestamp given as a number (NDJSON), epoch seconds or ms by magnitude;
 * - ts_instant / ts_local: ms of a typed timestamp with / without a time zone;
 * - pre_reason: a reason the reader already rejected the row for (NDJSON that is not JSON).
 */
export interface SqlSource {
  select: string;
  has: { tsText: boolean; tsNum: boolean; tsInstant: boolean; tsLocal: boolean; preReason: boolean; event: boolean; by: boolean };
  /** Attribute column names, as attr_0, attr_1… in tm_src (their distinct values go into the manifest). */
  attributes: string[];
}

export interface SqlRange {
  /** Period keys (src/periods/calendar.ts) of --from and --to. */
  fromKey?: number;
  toKey?: number;
  /** Overrides rules.warmup. */
  warmup?: number;
}

export interface Compiled {
  ctes: Cte[];
  /** The final SELECT of each waist table; columns as in WAIST_TABLES, labels and state names as text. */
  tables: Record<TableName, string>;
  /** Final SELECTs of the data-dependent facts the manifest holds. */
  facts: {
    /** start_key, end_key, out_key, flow_key, used_rows (one row; NULL keys when no row is used). */
    range: string;
    /** status, reason, rows: where every row went. */
    accounting: string;
    /** event, rows: the most frequent event names (ties at the last kept). */
    events: string;
    /** rows, max_wall: used rows in the last period and the latest wall-clock ms among them. */
    lastPeriod: string;
    /** users: users with an active period in the range. */
    users: string;
    /** values_0, values_1…: distinct non-empty values of each attribute among used rows. */
    attributes: string;
    /** with_value, with_own: users with a `by` value, and those holding a value of their own. */
    uniqueness: string;
    /** label: every output period, in order. */
    periods: string;
  };
  /** The gap model, its indices into the output states (split sub-states included). */
  model: GapModel;
  /**
   * For an engine that stores steps as tables: the row-level facts tm_uk (tm_ukv with --by), tm_fates
   * and tm_attr_values in one aggregate over the rows (GROUPING SETS, SQL:1999; DuckDB and PostgreSQL
   * have it), so the rows are read once and never stored. Store `select` as the table `name`, then
   * each query of `split` as a table or view of its key; the other steps read those. The fates set is
   * keyed on (reason, event), plus the used flag with --to, not on the status text: tm_fates derives
   * the status from them, as tm_ev does (a cheaper key, and a boolean rather than a text compared
   * once a row for each column the used rows fill).
   */
  rowPass: { name: string; select: string; split: Record<string, string> };
  /** Whether the fast-form pass was compiled (CompileInput.fastTimestamps, where it applies). */
  fastTimestamps: boolean;
  /**
   * Whether the steps after tm_life read it through `tm_lifepass` (CompileInput.lifePass, where it
   * applies): one aggregate of tm_life with GROUPING SETS over (period, state before, state), (period,
   * state, quiet run), (period, state, first period, what comes next, period before) and (user, first
   * period), so that tm_life is read once and never stored; an engine that stores steps stores
   * `tm_lifepass` instead of tm_life.
   */
  lifePass: boolean;
}

export interface CompileInput {
  dialect: Dialect;
  rules: Rules;
  source: SqlSource;
  range?: SqlRange;
  /**
   * Expect every timestamp in the commonest form (`YYYY-MM-DDTHH:MM:SS[.sss]Z`, read natively by the
   * dialect's `fastUtcMs`): the steps that parse any other form are left out, and a row whose text is
   * not in that form (a typed timestamp, a number, no text: any other) is rejected with the reason
   * {@link FULL_PARSE_REASON}. An engine that finds such a row must run the pass again without this
   * option; rows in the form get exactly what the full steps give them. For a source with text
   * timestamps and a `pre_reason` column, in a dialect with `fastUtcMs`; ignored otherwise (see
   * {@link Compiled.fastTimestamps}).
   */
  fastTimestamps?: boolean;
  /**
   * Read the per-active-period step through `tm_lifepass` (see {@link Compiled.lifePass}) rather than
   * tm_life itself. Without `--by` only (its tables join tm_life's users with their values); ignored
   * otherwise.
   */
  lifePass?: boolean;
}

/**
 * The reason of a row the fast-form pass (CompileInput.fastTimestamps) could not read: never part of
 * a waist, since the engine then runs the full pass.
 */
export const FULL_PARSE_REASON = '(timestamp for the full parse)';

export function compile({ dialect: D, rules, source, range = {}, fastTimestamps = false, lifePass = false }: CompileInput): Compiled {
  const base = gapModel(rules);
  const outStates = stateNames(rules);
  const outIndex = (b: number) => outStates.indexOf(base.states[b]);
  const m: GapModel = { ...base, states: outStates, arrival: outIndex(base.arrival), continuing: -1, returning: -1, lapse: base.lapse < 0 ? -1 : outIndex(base.lapse), exit: outIndex(base.exit) };
  /** The code of an active base state given the period's key events `ev`: its sub-state when split. */
  const activeCode = (b: number, ev: string): string => {
    const split = rules.splits.find((x) => x.state === base.states[b]);
    if (!split) return String(outIndex(b));
    return `CASE WHEN ${ev} >= ${split.atLeast} THEN ${outStates.indexOf(split.names[1])} ELSE ${outStates.indexOf(split.names[0])} END`;
  };
  const L = m.lapseLimit;
  const W = range.warmup ?? rules.warmup;
  const has = source.has;
  const attrCols = source.attributes.map((_, i) => `attr_${i}`);
  const pass = ['user_id', ...(has.event ? ['event'] : []), ...(has.by ? ['by_value'] : []), ...(has.preReason ? ['pre_reason'] : []), ...attrCols];
  const cols = (prefix = '') => pass.map((c) => `${prefix}${c}`).join(', ');
  const floorDiv = (a: string, b: number) => D.floorDiv?.(a, b) ?? D.intDiv(`(${a}) - ${D.mod(`${D.mod(a, String(b))} + ${b}`, String(b))}`, String(b));
  // white space by code point: the common first characters (33…159) answer the first test
  // (an OR of comparisons rather than IN: some planners turn a long IN list into a join)
  const isSpace = (c: string) => {
    const high = JS_SPACE.filter((x) => x >= 160);
    const runs: string[] = [];
    for (let i = 0; i < high.length; i++) {
      let j = i;
      while (j + 1 < high.length && high[j + 1] === high[j] + 1) j++;
      runs.push(j > i ? `${c} BETWEEN ${high[i]} AND ${high[j]}` : `${c} = ${high[i]}`);
      i = j;
    }
    return `(${c} BETWEEN 9 AND 13 OR ${c} = 32 OR (${c} >= 160 AND (${runs.join(' OR ')})))`;
  };
  const startsWithSpace = (x: string) => `(${isSpace(D.firstCode(x))})`;
  const startsOrEndsWithSpace = (x: string) => `(${startsWithSpace(x)} OR ${startsWithSpace(`substr(${x}, length(${x}), 1)`)})`;
  const trimJs = (x: string) => `CASE WHEN ${startsOrEndsWithSpace(x)} THEN ${D.strip(D.strip(x, LEADING_SPACE), TRAILING_SPACE)} ELSE ${x} END`;
  const name = (code: string) => `CASE ${code} ${m.states.map((s, i) => `WHEN ${i} THEN ${D.str(s)}`).join(' ')} END`;
  const ctes: Cte[] = [];
  const cte = (n: string, comment: string, sql: string) => ctes.push({ name: n, sql, comment });

  cte('tm_src', 'the events, one row each, in canonical columns', source.select);

  // ---- timestamps → wall-clock ms in the rules' zone (src/ingest/timestamp.ts, step by step)
  // Only typed timestamps (a Parquet or database column): no text to parse, so the steps that parse
  // text are left out and tm_instant reads the typed columns (what those steps give when all is NULL).
  const textual = has.tsText || has.tsNum;
  const fast = has.tsText && D.fastUtcMs ? D.fastUtcMs('ts_text') : undefined;
  // the fast-form pass (CompileInput.fastTimestamps): only tm_fast of the text steps, then tm_wall
  const lean = fastTimestamps && fast !== undefined && has.preReason;
  const textCte = (n: string, comment: string, sql: string) => void (textual && (!lean || n === 'tm_fast') && cte(n, comment, sql));
  textCte('tm_fast', 'the commonest form, read natively where the dialect can (the memory engine has the same fast path)',
    `SELECT ${cols()}, ${has.tsText ? 'ts_text' : `CAST(NULL AS ${D.text}) AS ts_text`}, ${has.tsNum ? 'ts_num' : `CAST(NULL AS ${D.double}) AS ts_num`},
  ${has.tsInstant ? 'ts_instant' : `CAST(NULL AS ${D.bigint}) AS ts_instant`}, ${has.tsLocal ? 'ts_local' : `CAST(NULL AS ${D.bigint}) AS ts_local`},
  ${!fast ? `CAST(NULL AS ${D.bigint})` : D.fastUtcKeep ? `CASE WHEN ${D.fastUtcKeep('fast0', 'ts_text')} THEN fast0 END` : fast} AS fast_ms
FROM ${fast && D.fastUtcKeep ? `(SELECT *, ${fast} AS fast0 FROM tm_src) x` : 'tm_src'}${D.fence}`);
  textCte('tm_text', 'the timestamp text, trimmed as JavaScript trims it',
    `SELECT ${cols()}, ts_num, ts_instant, ts_local, fast_ms,
  CASE WHEN ts_text IS NOT NULL AND fast_ms IS NULL THEN ${trimJs('ts_text')} END AS t
FROM tm_fast${D.fence}`);
  const short = `length(t) <= ${MAX_TIMESTAMP_TEXT}`;
  textCte('tm_form', 'which form the text has: epoch digits (ep), ISO 8601 extended (1) or basic (2)',
    `SELECT ${cols()}, ts_instant, ts_local, fast_ms, t,
  CASE WHEN t IS NOT NULL AND ${short} AND ${D.matches('t', EPOCH)} THEN ${D.toDouble('t')}
       WHEN ts_num IS NOT NULL AND (ts_num = 0 OR (abs(ts_num) >= 1e-6 AND abs(ts_num) < 1e21)) THEN ts_num END AS ep,
  CASE WHEN t IS NOT NULL AND ${short} AND NOT ${D.matches('t', EPOCH)} THEN
    CASE WHEN ${D.matches('t', ISO)} THEN 1 WHEN ${D.matches('t', ISO_BASIC)} THEN 2 END END AS form
FROM tm_text${D.fence}`);
  // The fields of a text the ISO patterns accepted, by position: no regular-expression capture (slow
  // in some engines), only substr. Extended: YYYY-MM-DD[(T|t| )HH:MM[:SS[(.|,)F]]][space][offset];
  // basic: YYYYMMDD(T|t)HHMM[SS[(.|,)F]][offset]. An offset is at the end, its sign past the date.
  const at = (i: string, n: number | string = 1) => `substr(t, ${i}, ${n})`;
  const digit = (i: string) => `coalesce(${D.firstCode(at(i))}, 0) BETWEEN 48 AND 57`;
  textCte('tm_shape', 'where the parts of an ISO timestamp are: time, seconds, fraction, the offset\'s sign',
    `SELECT ${cols()}, ts_instant, ts_local, fast_ms, t, ep, form,
  CASE WHEN form = 1 AND ${digit('12')} THEN 1 WHEN form = 2 THEN 1 ELSE 0 END AS has_time,
  CASE form WHEN 1 THEN 12 WHEN 2 THEN 10 END AS h_at,
  CASE form WHEN 1 THEN 15 WHEN 2 THEN 12 END AS mi_at,
  CASE WHEN form = 1 AND length(t) >= 19 AND ${digit('12')} AND ${at('17')} = ':' THEN 18
       WHEN form = 2 AND ${digit('14')} THEN 14 END AS sec_at,
  CASE WHEN form IS NULL THEN NULL
       WHEN length(t) - 5 > 10 AND ${at('length(t) - 5')} IN ('+', '-') AND ${at('length(t) - 2')} = ':' THEN length(t) - 5
       WHEN length(t) - 4 > 9 AND ${at('length(t) - 4')} IN ('+', '-') THEN length(t) - 4
       WHEN length(t) - 2 > 9 AND ${at('length(t) - 2')} IN ('+', '-') THEN length(t) - 2 END AS sign_at
FROM tm_form${D.fence}`);
  const fracLen = `CASE ${Array.from({ length: 8 }, (_, i) => `WHEN NOT (${digit(`sec_at + ${i + 4}`)}) THEN ${i + 1}`).join(' ')} ELSE 9 END`;
  // digits as numbers by their code points: no cast, so nothing can fail on a row the patterns refused
  const num = (i: string, n: number) => `CAST(${Array.from({ length: n }, (_, k) => `(coalesce(${D.firstCode(at(`${i} + ${k}`))}, 0) - 48) * ${10 ** (n - 1 - k)}`).join(' + ')} AS ${D.bigint})`;
  const when = (cond: string, v: string) => `CASE WHEN ${cond} THEN ${v} END`;
  textCte('tm_parts', 'the fields of an ISO timestamp as numbers (text for the fraction, the Z and the sign)',
    `SELECT ${cols()}, ts_instant, ts_local, fast_ms, ep, form,
  ${when('form IS NOT NULL', num('1', 4))} AS y,
  CASE form WHEN 1 THEN ${num('6', 2)} WHEN 2 THEN ${num('5', 2)} END AS mo,
  CASE form WHEN 1 THEN ${num('9', 2)} WHEN 2 THEN ${num('7', 2)} END AS d,
  ${when('has_time = 1', num('h_at', 2))} AS h,
  ${when('has_time = 1', num('mi_at', 2))} AS mi,
  ${when('sec_at IS NOT NULL', num('sec_at', 2))} AS sec,
  ${when(`sec_at IS NOT NULL AND ${at('sec_at + 2')} IN ('.', ',')`, at('sec_at + 3', fracLen))} AS f,
  ${when(`form IS NOT NULL AND ${at('length(t)')} IN ('Z', 'z')`, "'Z'")} AS z,
  ${when('sign_at IS NOT NULL', at('sign_at'))} AS sg,
  ${when('sign_at IS NOT NULL', num('sign_at + 1', 2))} AS oh,
  ${when('sign_at IS NOT NULL AND sign_at < length(t) - 2', num('length(t) - 1', 2))} AS om
FROM tm_shape${D.fence}`);
  const y1 = 'CASE WHEN mo <= 2 THEN y - 1 ELSE y END';
  const daysFromCivil = (yy: string, mm: string, dd: string) => {
    // H. Hinnant, "chrono-Compatible Low-Level Date Algorithms", days_from_civil (years ≥ 0 here)
    const era = D.intDiv(yy, '400');
    const yoe = `(${yy}) - ${era} * 400`;
    const doy = `${D.intDiv(`153 * ${D.mod(`${mm} + 9`, '12')} + 2`, '5')} + ${dd} - 1`;
    return `(${era} * 146097 + (${yoe}) * 365 + ${D.intDiv(yoe, '4')} - ${D.intDiv(yoe, '100')} + ${doy} - 719468)`;
  };
  const leap = `(${D.mod('y', '4')} = 0 AND ${D.mod('y', '100')} <> 0) OR ${D.mod('y', '400')} = 0`;
  const daysIn = `CASE WHEN mo = 2 THEN CASE WHEN ${leap} THEN 29 ELSE 28 END WHEN mo IN (4, 6, 9, 11) THEN 30 ELSE 31 END`;
  textCte('tm_local', 'an ISO timestamp as local ms (a date or time out of range is no timestamp), with its offset in minutes',
    `SELECT ${cols()}, ts_instant, ts_local, fast_ms, ep, z, sg,
  CASE WHEN form IS NOT NULL AND y BETWEEN 1800 AND 2300 AND mo BETWEEN 1 AND 12 AND d >= 1 AND d <= ${daysIn}
        AND coalesce(h, 0) <= 23 AND coalesce(mi, 0) <= 59 AND coalesce(sec, 0) <= 60
        AND (sg IS NULL OR (oh <= 23 AND coalesce(om, 0) <= 59))
    THEN ${daysFromCivil(y1, 'mo', 'd')} * ${DAY_MS} + coalesce(h, 0) * 3600000 + coalesce(mi, 0) * 60000
      + (CASE WHEN coalesce(sec, 0) > 59 THEN 59 ELSE coalesce(sec, 0) END) * 1000
      + CASE WHEN f IS NULL THEN 0 ELSE CAST(floor(${D.toDouble(`'0.' || f`)} * 1000) AS ${D.bigint}) END
  END AS local_ms,
  CASE WHEN sg = '-' THEN -1 ELSE 1 END * (coalesce(oh, 0) * 60 + coalesce(om, 0)) AS off_min
FROM tm_parts${D.fence}`);
  const epMs = `CASE WHEN abs(ep) >= 1e11 THEN ep ELSE ep * 1000 END`;
  if (lean) {
    // a row in the fast form gets what the steps below give it (instant_ms = fast_ms, no local time);
    // any other row is marked for the full pass (as a reason the reader gave, so it is counted)
    const marked = cols().replace(/\bpre_reason\b/, `coalesce(pre_reason, CASE WHEN fast_ms IS NULL THEN ${D.str(FULL_PARSE_REASON)} END) AS pre_reason`);
    cte('tm_instant', 'the instant (ms since the epoch) of each timestamp in the fast form; any other row is left to the full pass',
      `SELECT ${marked}, fast_ms AS instant_ms, CAST(NULL AS ${D.bigint}) AS local_ms
FROM tm_fast${D.fence}`);
  } else if (!textual) {
    cte('tm_instant', 'the instant (ms since the epoch) of a typed timestamp with a time zone, or the local ms of one without',
      `SELECT ${cols()},
  ${has.tsInstant ? 'CASE WHEN ts_instant > -2300000000000 AND ts_instant < 7400000000000 THEN ts_instant END' : `CAST(NULL AS ${D.bigint})`} AS instant_ms,
  ${has.tsLocal ? 'ts_local' : `CAST(NULL AS ${D.bigint})`} AS local_ms
FROM tm_src${D.fence}`);
  } else cte('tm_instant', 'the instant (ms since the epoch) of timestamps that name one, or the local ms of those that do not',
    `SELECT ${cols()},
  CASE WHEN fast_ms IS NOT NULL THEN fast_ms
       WHEN ep IS NOT NULL THEN CASE WHEN ${epMs} > -2300000000000 AND ${epMs} < 7400000000000 THEN CAST(floor(${epMs}) AS ${D.bigint}) END
       WHEN local_ms IS NOT NULL AND (z IS NOT NULL OR sg IS NOT NULL) THEN local_ms - off_min * 60000
       WHEN ts_instant IS NOT NULL AND ts_instant > -2300000000000 AND ts_instant < 7400000000000 THEN ts_instant END AS instant_ms,
  CASE WHEN local_ms IS NOT NULL AND z IS NULL AND sg IS NULL THEN local_ms ELSE ts_local END AS local_ms
FROM tm_local${D.fence}`);
  cte('tm_wall', `wall-clock ms in ${rules.timezone}, years 1900 to 2199`,
    `SELECT ${cols()}, CASE WHEN w >= ${MS_1900} AND w < ${MS_2200} THEN w END AS wall_ms
FROM (SELECT ${cols()}, CASE WHEN local_ms IS NOT NULL THEN local_ms WHEN instant_ms IS NOT NULL THEN ${D.wallOfInstant('instant_ms', rules.timezone)} END AS w FROM tm_instant${D.fence}) x${D.fence}`);

  // ---- each row's fate and period
  const day = floorDiv('wall_ms', DAY_MS);
  const ws = weekdayIndex(rules.weekStart);
  const keyOfDay = rules.grain === 'day' ? 'day' : rules.grain === 'week' ? floorDiv(`day + ${3 - ws}`, 7) : 'month_key';
  const keyEvents = rules.activity.keyEvents;
  const blankUser = `(user_id IS NULL OR user_id = '' OR (${D.spaceFirst('user_id', startsWithSpace('user_id'))} AND ${D.matches('user_id', BLANK)}))`;
  const reason = [
    has.preReason ? 'WHEN pre_reason IS NOT NULL THEN pre_reason' : '',
    `WHEN ${blankUser} THEN 'missing user id'`,
    "WHEN wall_ms IS NULL THEN 'bad timestamp'",
    keyEvents ? `WHEN ${has.event ? "event IS NULL OR event = ''" : '1 = 1'} THEN 'missing event name'` : '',
  ].filter(Boolean).join(' ');
  // a row with no reason is not a key event (notKey), else after --to (after), else used
  const notKey = keyEvents && has.event ? `event NOT IN (${keyEvents.map((e) => D.str(e)).join(', ')})` : '';
  const after = range.toKey !== undefined ? `k > ${range.toKey}` : '';
  /** The status of a row with its reason, given the test of 'after' (the row pass keeps its answer). */
  const statusOf = (afterTest: string) => [
    notKey ? `WHEN ${notKey} THEN 'notkey'` : '',
    after ? `WHEN ${afterTest} THEN 'after'` : '',
  ].filter(Boolean).join(' ');
  const status = statusOf(after);
  cte('tm_day', 'the local day of each row (days since 1970-01-01)', `SELECT ${cols()}, wall_ms, ${day} AS day FROM tm_wall${D.fence}`);
  let keySource = 'tm_day';
  if (rules.grain === 'month') {
    // Hinnant's civil_from_days: the month of a day number, as year · 12 + month − 1
    cte('tm_era', 'the 400-year era of each day', `SELECT ${cols()}, wall_ms, day, ${D.intDiv('day + 719468', '146097')} AS era, day + 719468 - ${D.intDiv('day + 719468', '146097')} * 146097 AS doe FROM tm_day${D.fence}`);
    cte('tm_yoe', 'the year of the era', `SELECT ${cols()}, wall_ms, day, era, doe, ${D.intDiv(`doe - ${D.intDiv('doe', '1460')} + ${D.intDiv('doe', '36524')} - ${D.intDiv('doe', '146096')}`, '365')} AS yoe FROM tm_era${D.fence}`);
    cte('tm_mp', 'the month counted from March', `SELECT ${cols()}, wall_ms, day, era, yoe, ${D.intDiv(`5 * (doe - (365 * yoe + ${D.intDiv('yoe', '4')} - ${D.intDiv('yoe', '100')})) + 2`, '153')} AS mp FROM tm_yoe${D.fence}`);
    cte('tm_month', 'the month key of each day',
      `SELECT ${cols()}, wall_ms, day, (yoe + era * 400 + CASE WHEN mp >= 10 THEN 1 ELSE 0 END) * 12 + CASE WHEN mp < 10 THEN mp + 2 ELSE mp - 10 END AS month_key FROM tm_mp${D.fence}`);
    keySource = 'tm_month';
  }
  cte('tm_keyed', `the ${rules.grain} of each row`, `SELECT ${cols()}, wall_ms, CASE WHEN wall_ms IS NOT NULL THEN ${keyOfDay} END AS k FROM ${keySource}${D.fence}`);
  cte('tm_ev', 'each row: used, not a key event (notkey), after --to (after), or rejected with its reason',
    `SELECT ${cols()}, wall_ms, k,
  CASE WHEN reason IS NOT NULL THEN 'rejected' ${status} ELSE 'used' END AS status, reason
FROM (SELECT ${cols()}, wall_ms, k, CASE ${reason} END AS reason FROM tm_keyed${D.fence}) x${D.fence}`);
  cte('tm_used', 'the used rows', `SELECT user_id, k, wall_ms${has.by ? ', by_value' : ''}${attrCols.map((c) => `, ${c}`).join('')} FROM tm_ev WHERE status = 'used'`);
  // the row-level facts, each small: every later step reads these, not the rows (see `rowPass`)
  if (has.by) {
    // with --by, (user, period, value): enough for the latest value of each (user, period) and the
    // uniqueness check, so that nothing after this reads the rows
    cte('tm_ukv', `(user, ${rules.grain}, --by value) of the used rows: their rows and the latest wall-clock ms`,
      "SELECT user_id, k, coalesce(by_value, '') AS v, count(*) AS ev, max(wall_ms) AS max_wall FROM tm_used GROUP BY user_id, k, coalesce(by_value, '')");
    cte('tm_uk', `(user, ${rules.grain}) of the used rows: their rows and the latest wall-clock ms`,
      `SELECT user_id, k, CAST(SUM(ev) AS ${D.bigint}) AS ev, max(max_wall) AS max_wall FROM tm_ukv GROUP BY user_id, k`);
  } else {
    cte('tm_uk', `(user, ${rules.grain}) of the used rows: their rows and the latest wall-clock ms`,
      'SELECT user_id, k, count(*) AS ev, max(wall_ms) AS max_wall FROM tm_used GROUP BY user_id, k');
  }
  cte('tm_fates', 'rows by fate, reason and event name',
    `SELECT status, reason, ${has.event ? 'event' : `CAST(NULL AS ${D.text}) AS event`}, count(*) AS n FROM tm_ev GROUP BY status, reason${has.event ? ', event' : ''}`);
  if (attrCols.length) {
    cte('tm_attr_values', 'the distinct non-empty values of each attribute (a, its position) among the used rows',
      attrCols.map((c, i) => `SELECT ${i} AS a, ${c} AS v FROM tm_used WHERE ${c} <> '' GROUP BY ${c}`).join('\nUNION ALL\n'));
  }

  // ---- the range
  const out = range.fromKey === undefined ? 'start_key' : `CASE WHEN start_key > ${range.fromKey} THEN start_key ELSE ${range.fromKey} END`;
  cte('tm_bounds', 'the range: first and last period of the used rows, the first output period (--from) and the first counted flow (warm-up)',
    `SELECT start_key, end_key, out_key, out_key + ${W} AS flow_key, used_rows
FROM (SELECT start_key, end_key, ${out} AS out_key, used_rows FROM (SELECT min(k) AS start_key, max(k) AS end_key, coalesce(SUM(ev), 0) AS used_rows FROM tm_uk) x) y`);
  const startDay = rules.grain === 'day' ? 'x' : rules.grain === 'week' ? `x * 7 + ${ws - 3}` : daysFromCivil(`${D.intDiv('x', '12')} - CASE WHEN ${D.mod('x', '12')} + 1 <= 2 THEN 1 ELSE 0 END`, `${D.mod('x', '12')} + 1`, '1');
  cte('tm_periods', 'every output period with its label (its first day)',
    `SELECT x AS k, ${D.dayLabel(startDay)} AS label FROM (${D.series('out_key', 'end_key', 'tm_bounds')}) s`);

  // ---- lifecycle
  cte('tm_active', `(user, ${rules.grain}) with at least ${rules.activity.minEvents} key event(s)`,
    `SELECT user_id, k, ev FROM tm_uk WHERE ev >= ${rules.activity.minEvents}`);
  if (has.by) {
    // the value whose latest row is the latest of the period is the value of the latest row
    cte('tm_attr', 'the --by value of each (user, period): on its latest event; on a tie, the largest value in code-point order',
      `SELECT user_id, k, v FROM (
  SELECT user_id, k, v, row_number() OVER (PARTITION BY user_id, k ORDER BY max_wall DESC, ${D.binaryOrder('v')} DESC) AS rn FROM tm_ukv
) x WHERE rn = 1${D.fence}`);
  }
  cte('tm_runs', 'each active period with the active periods before and after it',
    `SELECT user_id, k, ev,
  ${rules.splits.length ? 'lag(ev) OVER (PARTITION BY user_id ORDER BY k)' : `CAST(NULL AS ${D.bigint})`} AS prev_ev,
  lag(k) OVER (PARTITION BY user_id ORDER BY k) AS prev_k,
  lag(k, 2) OVER (PARTITION BY user_id ORDER BY k) AS prev2_k,
  lead(k) OVER (PARTITION BY user_id ORDER BY k) AS next_k,
  first_value(k) OVER (PARTITION BY user_id ORDER BY k) AS first_k
FROM tm_active${D.fence}`);
  const stateAt = (k: string, prev: string, ev: string) => `CASE WHEN ${prev} IS NULL THEN ${m.arrival} WHEN ${prev} = ${k} - 1 THEN ${activeCode(base.continuing, ev)} ELSE ${activeCode(base.returning, ev)} END`;
  const quietState = (j: string) => (L === 0 ? String(m.exit) : `CASE WHEN ${j} <= ${L} THEN ${m.lapse} ELSE ${m.exit} END`);
  cte('tm_life', 'the state of each active period, the state in the period before it, and the quiet periods after it',
    `SELECT r.user_id, r.k, r.prev_k, r.next_k, r.first_k,
  ${stateAt('r.k', 'r.prev_k', 'r.ev')} AS st,
  CASE WHEN r.prev_k IS NULL THEN NULL WHEN r.prev_k = r.k - 1 THEN ${stateAt('r.prev_k', 'r.prev2_k', 'r.prev_ev')} ELSE ${quietState('r.k - r.prev_k - 1')} END AS st_before,
  CASE WHEN r.next_k IS NULL THEN b.end_key ELSE r.next_k - 1 END - r.k AS quiet${has.by ? `,
  CASE WHEN a.v IS NULL OR a.v = '' THEN '(none)' ELSE a.v END AS seg` : ''}
FROM tm_runs r CROSS JOIN tm_bounds b${has.by ? '\nLEFT JOIN tm_attr a ON a.user_id = r.user_id AND a.k = r.first_k' : ''}${D.fence}`);
  // tm_life read once (CompileInput.lifePass): each later step reads the counts of one grouping set
  const LP = lifePass && !has.by;
  const sumN = `CAST(SUM(l.n) AS ${D.bigint})`;
  if (LP) {
    cte('tm_lifepass', 'tm_life counted by (period, state before, state), (period, state, quiet run), (period, state, first period, next, period before) and (user, first period)',
      `SELECT GROUPING(st_before) AS g_t, GROUPING(quiet) AS g_q, GROUPING(nc) AS g_r, GROUPING(user_id) AS g_d,
  k, st_before, st, quiet, first_k, nc, pk, user_id, count(*) AS n, min(dk) AS dk
FROM (
  SELECT l.user_id, l.k, l.st_before, l.st, l.quiet, l.first_k,
    CASE WHEN l.next_k IS NULL THEN 0 WHEN l.next_k = l.k + 1 THEN 1 ELSE 2 END AS nc,
    CASE WHEN b.end_key - l.first_k <= ${WINDOW_AGES} OR (l.next_k IS NULL AND l.k = b.end_key) THEN l.prev_k END AS pk,
    CASE WHEN l.quiet >= ${L + 1} THEN l.k + ${L + 1} END AS dk
  FROM tm_life l CROSS JOIN tm_bounds b
) x
GROUP BY GROUPING SETS ((k, st_before, st), (k, st, quiet), (k, st, first_k, nc, pk), (user_id, first_k))`);
    cte('tm_lt', 'active periods by period, state before (NULL: none, an arrival) and state', 'SELECT k, st_before, st, n FROM tm_lifepass WHERE g_t = 0');
    cte('tm_lr', 'active periods by period, state, first period, what comes next (nc: 0 nothing, 1 the next period, 2 a later one) and the period before (pk: for cohorts of the window counts and in the last period)',
      'SELECT k, st, first_k, nc, pk, n FROM tm_lifepass WHERE g_r = 0');
  }
  // quiet runs as spans [lo, hi] of periods: state counts (sf = -1) and transitions (sf → st)
  const spans: string[] = [];
  // with --by, every quiet span keeps its user's segment, so the segment tables read the same counts
  const G = has.by ? ', seg' : '';
  // the spans depend only on the period and the quiet run after it: those are counted once (n), so the
  // spans are made from a few rows a period rather than from every active period
  cte('tm_quiet', 'active periods followed by a quiet run: how many (n) by period, state and length of the run',
    LP ? 'SELECT k, st, quiet, n FROM tm_lifepass WHERE g_q = 0 AND quiet >= 1' : `SELECT k, st, quiet${G}, count(*) AS n FROM tm_life WHERE quiet >= 1 GROUP BY k, st, quiet${G}`);
  const span = (sf: string, st: number, lo: string, hi: string, when: string, clip: 'out_key' | 'flow_key + 1') =>
    spans.push(`SELECT ${sf} AS sf, ${st} AS st${G}, CASE WHEN ${lo} > ${clip} THEN ${lo} ELSE ${clip} END AS lo, ${hi} AS hi, n FROM tm_quiet CROSS JOIN tm_bounds WHERE ${when}`);
  if (L >= 1) span('-1', m.lapse, 'k + 1', `k + CASE WHEN quiet < ${L} THEN quiet ELSE ${L} END`, 'quiet >= 1', 'out_key');
  span('-1', m.exit, `k + ${L + 1}`, 'k + quiet', `quiet >= ${L + 1}`, 'out_key');
  span('st', L >= 1 ? m.lapse : m.exit, 'k + 1', 'k + 1', 'quiet >= 1', 'flow_key + 1');
  if (L >= 2) span(String(m.lapse), m.lapse, 'k + 2', `k + CASE WHEN quiet < ${L} THEN quiet ELSE ${L} END`, 'quiet >= 2', 'flow_key + 1');
  if (L >= 1) span(String(m.lapse), m.exit, `k + ${L + 1}`, `k + ${L + 1}`, `quiet >= ${L + 1}`, 'flow_key + 1');
  span(String(m.exit), m.exit, `k + ${Math.max(2, L + 2)}`, 'k + quiet', `quiet >= ${Math.max(2, L + 2)}`, 'flow_key + 1');
  cte('tm_spans', 'quiet runs as spans of periods: in a quiet state (sf = -1), or moving from sf to st; n users each',
    `SELECT sf, st${G}, lo, hi, n FROM (\n${spans.join('\nUNION ALL\n')}\n) x WHERE lo <= hi`);
  cte('tm_deltas', 'where spans start (+) and end (−)',
    `SELECT sf, st${G}, p, SUM(d) AS d FROM (
  SELECT sf, st${G}, lo AS p, SUM(n) AS d FROM tm_spans GROUP BY sf, st${G}, lo
  UNION ALL
  SELECT sf, st${G}, hi + 1 AS p, -SUM(n) AS d FROM tm_spans GROUP BY sf, st${G}, hi + 1
) x GROUP BY sf, st${G}, p`);
  cte('tm_span_counts', 'users in each span kind in each period: running sums of the deltas',
    `SELECT g.sf, g.st${has.by ? ', g.seg' : ''}, g.p, SUM(coalesce(d.d, 0)) OVER (PARTITION BY g.sf, g.st${has.by ? ', g.seg' : ''} ORDER BY g.p ROWS BETWEEN UNBOUNDED PRECEDING AND CURRENT ROW) AS n
FROM (SELECT kd.sf, kd.st${has.by ? ', kd.seg' : ''}, pe.k AS p FROM (SELECT DISTINCT sf, st${G} FROM tm_spans) kd CROSS JOIN tm_periods pe) g
LEFT JOIN tm_deltas d ON d.sf = g.sf AND d.st = g.st${has.by ? ' AND d.seg = g.seg' : ''} AND d.p = g.p`);
  const segment = "CASE WHEN a.v = '' THEN '(none)' ELSE a.v END";

  // ---- the tables
  const edges = rules.tenureBands;
  const labels = bandLabels(edges);
  const band = (t: string) => `CASE ${edges.map((e, i) => ({ e, l: labels[i] })).reverse().map(({ e, l }) => `WHEN ${t} >= ${e} THEN ${D.str(l)}`).join(' ')} END`;
  const ident = (s: string) => D.ident(s);
  const tables: Record<TableName, string> = {
    transitions: `SELECT pf.label AS period_from, pt.label AS period_to, ${name('x.sf')} AS state_from, ${name('x.st')} AS state_to, x.n AS users
FROM (
  SELECT p, sf, st, SUM(n) AS n FROM (
    SELECT l.k AS p, l.st_before AS sf, l.st, ${LP ? sumN : 'count(*)'} AS n FROM ${LP ? 'tm_lt' : 'tm_life'} l CROSS JOIN tm_bounds b WHERE l.${LP ? 'st_before' : 'prev_k'} IS NOT NULL AND l.k - 1 >= b.flow_key GROUP BY l.k, l.st_before, l.st
    UNION ALL
    SELECT p, sf, st, n FROM tm_span_counts WHERE sf >= 0 AND n > 0
  ) y GROUP BY p, sf, st
) x JOIN tm_periods pt ON pt.k = x.p JOIN tm_periods pf ON pf.k = x.p - 1
ORDER BY x.p, x.sf, x.st`,
    arrivals: `SELECT pe.label AS period, x.n AS users
FROM (SELECT l.k AS p, ${LP ? sumN : 'count(*)'} AS n FROM ${LP ? 'tm_lt' : 'tm_life'} l CROSS JOIN tm_bounds b WHERE l.${LP ? 'st_before' : 'prev_k'} IS NULL AND l.k >= b.out_key GROUP BY l.k) x JOIN tm_periods pe ON pe.k = x.p
ORDER BY x.p`,
    stateCounts: `SELECT pe.label AS period, ${name('x.s')} AS state, x.n AS users
FROM (
  SELECT p, s, SUM(n) AS n FROM (
    SELECT l.k AS p, l.st AS s, ${LP ? sumN : 'count(*)'} AS n FROM ${LP ? 'tm_lt' : 'tm_life'} l CROSS JOIN tm_bounds b WHERE l.k >= b.out_key GROUP BY l.k, l.st
    UNION ALL
    SELECT p, st AS s, n FROM tm_span_counts WHERE sf = -1 AND n > 0
  ) y GROUP BY p, s
) x JOIN tm_periods pe ON pe.k = x.p
ORDER BY x.p, x.s`,
    segmentStateCounts: has.by ? `SELECT x.seg AS segment, pe.label AS period, ${name('x.s')} AS state, x.n AS users
FROM (
  SELECT seg, p, s, SUM(n) AS n FROM (
    SELECT l.seg, l.k AS p, l.st AS s, count(*) AS n FROM tm_life l CROSS JOIN tm_bounds b WHERE l.k >= b.out_key GROUP BY l.seg, l.k, l.st
    UNION ALL
    SELECT seg, p, st AS s, n FROM tm_span_counts WHERE sf = -1 AND n > 0
  ) y GROUP BY seg, p, s
) x JOIN tm_periods pe ON pe.k = x.p
ORDER BY ${D.binaryOrder('x.seg')}, x.p, x.s`
      : `SELECT CAST(NULL AS ${D.text}) AS segment, label AS period, CAST(NULL AS ${D.text}) AS state, 0 AS users FROM tm_periods WHERE 1 = 0`,
    segmentTransitions: has.by ? `SELECT x.seg AS segment, pf.label AS period_from, pt.label AS period_to, ${name('x.sf')} AS state_from, ${name('x.st')} AS state_to, x.n AS users
FROM (
  SELECT seg, p, sf, st, SUM(n) AS n FROM (
    SELECT l.seg, l.k AS p, l.st_before AS sf, l.st, count(*) AS n FROM tm_life l CROSS JOIN tm_bounds b WHERE l.prev_k IS NOT NULL AND l.k - 1 >= b.flow_key GROUP BY l.seg, l.k, l.st_before, l.st
    UNION ALL
    SELECT seg, p, sf, st, n FROM tm_span_counts WHERE sf >= 0 AND n > 0
  ) y GROUP BY seg, p, sf, st
) x JOIN tm_periods pt ON pt.k = x.p JOIN tm_periods pf ON pf.k = x.p - 1
ORDER BY ${D.binaryOrder('x.seg')}, x.p, x.sf, x.st`
      : `SELECT CAST(NULL AS ${D.text}) AS segment, label AS period_from, label AS period_to, CAST(NULL AS ${D.text}) AS state_from, CAST(NULL AS ${D.text}) AS state_to, 0 AS users FROM tm_periods WHERE 1 = 0`,
    retentionCells: `SELECT pe.label AS period_to, ${name('x.st')} AS state_from, x.split, x.segment, x.users, x.retained
FROM (
  SELECT l.k + 1 AS p, l.st, 'tenure' AS split, ${band('l.k - l.first_k')} AS segment, ${LP ? `${sumN} AS users,
    CAST(SUM(CASE WHEN l.nc = 1 THEN l.n ELSE 0 END) AS ${D.bigint}) AS retained
  FROM tm_lr l` : `count(*) AS users,
    SUM(CASE WHEN l.next_k = l.k + 1 THEN 1 ELSE 0 END) AS retained
  FROM tm_life l`} CROSS JOIN tm_bounds b WHERE l.k >= b.flow_key AND l.k < b.end_key GROUP BY l.k, l.st, ${band('l.k - l.first_k')}${has.by ? `
  UNION ALL
  SELECT l.k + 1 AS p, l.st, 'attribute' AS split, ${segment} AS segment, count(*) AS users,
    SUM(CASE WHEN l.next_k = l.k + 1 THEN 1 ELSE 0 END) AS retained
  FROM tm_life l CROSS JOIN tm_bounds b JOIN tm_attr a ON a.user_id = l.user_id AND a.k = l.k
  WHERE l.k >= b.flow_key AND l.k < b.end_key GROUP BY l.k, l.st, ${segment}` : ''}
) x JOIN tm_periods pe ON pe.k = x.p
ORDER BY x.p, x.st, x.split DESC, x.segment`,
    cohortActivity: `SELECT pe.label AS cohort, x.age, SUM(x.a) AS active, SUM(x.l) AS last_active, SUM(x.f) AS last_active_before_final
FROM (
${LP ? `  SELECT l.first_k AS c, l.k - l.first_k AS age, ${sumN} AS a, CAST(SUM(CASE WHEN l.nc = 0 THEN l.n ELSE 0 END) AS ${D.bigint}) AS l,
    CAST(SUM(CASE WHEN l.nc = 0 AND l.k < b.end_key THEN l.n ELSE 0 END) AS ${D.bigint}) AS f
  FROM tm_lr l CROSS JOIN tm_bounds b WHERE l.first_k >= b.flow_key GROUP BY l.first_k, l.k - l.first_k
  UNION ALL
  SELECT l.first_k AS c, l.pk - l.first_k AS age, 0 AS a, 0 AS l, ${sumN} AS f
  FROM tm_lr l CROSS JOIN tm_bounds b WHERE l.first_k >= b.flow_key AND l.nc = 0 AND l.k = b.end_key AND l.first_k < b.end_key GROUP BY l.first_k, l.pk - l.first_k` : `  SELECT l.first_k AS c, l.k - l.first_k AS age, count(*) AS a, SUM(CASE WHEN l.next_k IS NULL THEN 1 ELSE 0 END) AS l,
    SUM(CASE WHEN l.next_k IS NULL AND l.k < b.end_key THEN 1 ELSE 0 END) AS f
  FROM tm_life l CROSS JOIN tm_bounds b WHERE l.first_k >= b.flow_key GROUP BY l.first_k, l.k - l.first_k
  UNION ALL
  SELECT l.first_k AS c, l.prev_k - l.first_k AS age, 0 AS a, 0 AS l, count(*) AS f
  FROM tm_life l CROSS JOIN tm_bounds b WHERE l.first_k >= b.flow_key AND l.next_k IS NULL AND l.k = b.end_key AND l.first_k < b.end_key GROUP BY l.first_k, l.prev_k - l.first_k`}
) x JOIN tm_periods pe ON pe.k = x.c
GROUP BY x.c, pe.label, x.age
ORDER BY x.c, x.age`,
    // through tm_lifepass: the running sums over tm_whist's own rows, each then spread over the ages b
    // up to the next one (the same windows with users, without the grid of every window and its join)
    cohortWindows: LP ? `SELECT pe.label AS cohort, h.a AS age_from, s.x AS age_to, h.users
FROM (
  SELECT c, a, nx, SUM(n) OVER (PARTITION BY c, a ORDER BY nx ROWS BETWEEN UNBOUNDED PRECEDING AND CURRENT ROW) AS users,
    coalesce(lead(nx) OVER (PARTITION BY c, a ORDER BY nx) - 1, bd.end_key - c) AS b_last
  FROM tm_whist CROSS JOIN tm_bounds bd
) h CROSS JOIN generate_series(h.nx, h.b_last) AS s(x) JOIN tm_periods pe ON pe.k = h.c
ORDER BY h.c, h.a, s.x`
      : `SELECT pe.label AS cohort, x.a AS age_from, x.b AS age_to, x.users
FROM (
  SELECT g.c, g.a, g.b, SUM(coalesce(h.n, 0)) OVER (PARTITION BY g.c, g.a ORDER BY g.b ROWS BETWEEN UNBOUNDED PRECEDING AND CURRENT ROW) AS users
  FROM tm_wgrid g LEFT JOIN tm_whist h ON h.c = g.c AND h.a = g.a AND h.nx = g.b
) x JOIN tm_periods pe ON pe.k = x.c
WHERE x.users > 0
ORDER BY x.c, x.a, x.b`,
    durations: `SELECT x.split, x.grp AS ${ident('group')}, pe.label AS cohort, x.duration, x.observed, x.users
FROM (
  SELECT 'cohort' AS split, pc.label AS grp, d.first_k AS c, d.duration, d.observed, count(*) AS users FROM tm_dur d JOIN tm_periods pc ON pc.k = d.first_k
  GROUP BY pc.label, d.first_k, d.duration, d.observed${has.by ? `
  UNION ALL
  SELECT 'attribute' AS split, ${segment} AS grp, d.first_k AS c, d.duration, d.observed, count(*) AS users FROM tm_dur d JOIN tm_attr a ON a.user_id = d.user_id AND a.k = d.first_k
  GROUP BY ${segment}, d.first_k, d.duration, d.observed` : ''}
) x JOIN tm_periods pe ON pe.k = x.c
ORDER BY x.split DESC, x.grp, x.c, x.duration, x.observed`,
  };
  cte('tm_ages', `the ages 0 to ${WINDOW_AGES}`, D.series('0', String(WINDOW_AGES), '(SELECT 1 AS one) o'));
  cte('tm_wmembers', `each active period of members of cohorts observed over at most ${WINDOW_AGES} ages: the ages whose next active age is this one`,
    // through tm_lifepass: counted already (n), and pk is the period before for these cohorts
    LP ? `SELECT l.first_k AS c, CASE WHEN l.pk IS NULL THEN 0 ELSE l.pk - l.first_k + 1 END AS a_lo, l.k - l.first_k AS nx, l.n
FROM tm_lr l CROSS JOIN tm_bounds b WHERE l.first_k >= b.flow_key AND b.end_key - l.first_k <= ${WINDOW_AGES}`
      : `SELECT l.first_k AS c, CASE WHEN l.prev_k IS NULL THEN 0 ELSE l.prev_k - l.first_k + 1 END AS a_lo, l.k - l.first_k AS nx
FROM tm_life l CROSS JOIN tm_bounds b WHERE l.first_k >= b.flow_key AND b.end_key - l.first_k <= ${WINDOW_AGES}`);
  cte('tm_whist', 'members by cohort, age a and their next active age from a on (nx): counted first, then spread over the ages a',
    // through tm_lifepass (DuckDB): each count's ages from a series of its own rather than a range join
    LP ? `SELECT w.c, s.x AS a, w.nx, SUM(w.n) AS n
FROM (SELECT c, a_lo, nx, CAST(SUM(n) AS ${D.bigint}) AS n FROM tm_wmembers GROUP BY c, a_lo, nx) w CROSS JOIN generate_series(w.a_lo, w.nx) AS s(x)
GROUP BY w.c, s.x, w.nx`
      : `SELECT w.c, ag.x AS a, w.nx, SUM(w.n) AS n
FROM (SELECT c, a_lo, nx, count(*) AS n FROM tm_wmembers GROUP BY c, a_lo, nx) w JOIN tm_ages ag ON ag.x >= w.a_lo AND ag.x <= w.nx
GROUP BY w.c, ag.x, w.nx`);
  // the cohorts from tm_whist (each member gives it a row), not from tm_wmembers (a row an active
  // period): DuckDB and PostgreSQL store a step that two others read, and writing tm_wmembers cost
  // more than the rest of this query (3M events, DuckDB: 0.55 s of 0.9 s)
  cte('tm_wgrid', 'every window (a, b) of observed ages of those cohorts',
    `SELECT wc.c, a1.x AS a, a2.x AS b FROM (SELECT DISTINCT c FROM tm_whist) wc CROSS JOIN tm_ages a1 CROSS JOIN tm_ages a2 CROSS JOIN tm_bounds bd
WHERE a1.x <= a2.x AND a2.x <= bd.end_key - wc.c`);
  cte('tm_dur', 'each member past the warm-up: periods to the first dormant one (observed) or to the end of the range',
    LP ? `SELECT first_k, CASE WHEN dk IS NULL THEN end_key - first_k ELSE dk - first_k END AS duration, CASE WHEN dk IS NULL THEN 0 ELSE 1 END AS observed
FROM (SELECT d.first_k, b.end_key, d.dk FROM tm_lifepass d CROSS JOIN tm_bounds b WHERE d.g_d = 0 AND d.first_k >= b.flow_key) x`
      : `SELECT user_id, first_k, CASE WHEN dk IS NULL THEN end_key - first_k ELSE dk - first_k END AS duration, CASE WHEN dk IS NULL THEN 0 ELSE 1 END AS observed
FROM (
  SELECT l.user_id, l.first_k, b.end_key, MIN(CASE WHEN l.quiet >= ${L + 1} THEN l.k + ${L + 1} END) AS dk
  FROM tm_life l CROSS JOIN tm_bounds b WHERE l.first_k >= b.flow_key GROUP BY l.user_id, l.first_k, b.end_key
) x`);

  const facts: Compiled['facts'] = {
    range: 'SELECT start_key, end_key, out_key, flow_key, used_rows FROM tm_bounds',
    accounting: 'SELECT status, reason, SUM(n) AS n FROM tm_fates GROUP BY status, reason ORDER BY status, reason',
    events: has.event
      ? `SELECT event, n FROM (
  SELECT event, n, rank() OVER (ORDER BY n DESC) AS r FROM (
    SELECT event, SUM(n) AS n FROM tm_fates WHERE event IS NOT NULL AND (status <> 'rejected' OR reason = 'missing event name') GROUP BY event
  ) x
) y WHERE r <= ${EVENT_NAMES_KEPT} ORDER BY n DESC, event`
      : `SELECT CAST(NULL AS ${D.text}) AS event, 0 AS n FROM tm_bounds WHERE 1 = 0`,
    lastPeriod: 'SELECT coalesce(SUM(u.ev), 0) AS n, max(u.max_wall) AS max_wall FROM tm_uk u CROSS JOIN tm_bounds b WHERE u.k = b.end_key',
    // one first active period a user
    users: LP ? 'SELECT coalesce(SUM(n), 0) AS users FROM tm_lt WHERE st_before IS NULL' : 'SELECT count(*) AS users FROM tm_life WHERE prev_k IS NULL',
    attributes: attrCols.length
      ? `SELECT ${attrCols.map((_, i) => `SUM(CASE WHEN a = ${i} THEN 1 ELSE 0 END) AS values_${i}`).join(', ')} FROM tm_attr_values`
      : 'SELECT 0 AS none FROM tm_bounds',
    uniqueness: has.by
      ? `SELECT (SELECT count(DISTINCT user_id) FROM tm_ukv WHERE v <> '') AS with_value,
  (SELECT count(DISTINCT u1) FROM (SELECT v, min(user_id) AS u1, max(user_id) AS u2 FROM tm_ukv WHERE v <> '' GROUP BY v) x WHERE u1 = u2) AS with_own`
      : 'SELECT 0 AS with_value, 0 AS with_own',
    periods: 'SELECT label FROM tm_periods ORDER BY k',
  };
  // The fates set is keyed on (reason, event), not on the status text: the status follows from them
  // (statusOf), but for 'after', which is kept as the used flag (uf) where --to is given. Each row's
  // status is a boolean here, not a text to compare.
  const used = 'uf';
  const usedTest = ['reason IS NULL', ...[notKey, after].filter(Boolean).map((t) => `NOT (${t})`)].join(' AND ');
  const fateKey = `reason, event${after ? ', uf' : ''}`;
  const rowPass: Compiled['rowPass'] = {
    name: 'tm_rowpass',
    select: `SELECT GROUPING(uu) AS g_uk, GROUPING(reason) AS g_fate${attrCols.map((_, i) => `, GROUPING(ua_${i}) AS g_a_${i}`).join('')},
  uu, uk${has.by ? ', ub' : ''}, ${fateKey}${attrCols.map((_, i) => `, ua_${i}`).join('')}, count(*) AS n, max(wall_ms) AS max_wall
FROM (
  SELECT reason, event, uf, CASE WHEN ${used} THEN wall_ms END AS wall_ms,
    CASE WHEN ${used} THEN user_id END AS uu, CASE WHEN ${used} THEN k END AS uk${has.by ? `, CASE WHEN ${used} THEN coalesce(by_value, '') END AS ub` : ''}${attrCols.map((c, i) => `,
    CASE WHEN ${used} AND ${c} <> '' THEN ${c} END AS ua_${i}`).join('')}
  FROM (SELECT ${cols()}, ${has.event ? '' : `CAST(NULL AS ${D.text}) AS event, `}wall_ms, k, reason, ${usedTest} AS uf FROM tm_ev${D.fence}) y${D.fence}
) x
GROUP BY GROUPING SETS ((uu, uk${has.by ? ', ub' : ''}), (${fateKey})${attrCols.map((_, i) => `, (ua_${i})`).join('')})`,
    split: {
      [has.by ? 'tm_ukv' : 'tm_uk']: `SELECT uu AS user_id, uk AS k${has.by ? ', ub AS v' : ''}, n AS ev, max_wall FROM tm_rowpass WHERE g_uk = 0 AND uu IS NOT NULL`,
      tm_fates: `SELECT CASE WHEN reason IS NOT NULL THEN 'rejected' ${statusOf('NOT uf')} ELSE 'used' END AS status, reason, event, n FROM tm_rowpass WHERE g_fate = 0`,
      ...(attrCols.length ? { tm_attr_values: attrCols.map((_, i) => `SELECT ${i} AS a, ua_${i} AS v FROM tm_rowpass WHERE g_a_${i} = 0 AND ua_${i} IS NOT NULL`).join('\nUNION ALL\n') } : {}),
    },
  };
  return { ctes, tables, facts, model: m, rowPass, fastTimestamps: lean, lifePass: LP };
}
