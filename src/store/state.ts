/**
 * Moving the store's state between DuckDB and memory: the info table, per-user state, the stored
 * files for a replay, and the manifest made from the running totals (so that it equals the manifest
 * of one engine run over every applied file).
 */
import { Extremes, rangeOutliers, EXTREMES_KEPT, type ExtremeRow } from '../ingest/extremes.js';
import type { EventLog, RejectReason } from '../ingest/eventLog.js';
import { outlierWarning } from '../engines/memory/rangeCheck.js';
import type { LifecyclePlan } from '../lifecycle/plan.js';
import { periodKeyOfDay, periodLabel, periodStartDay, type PeriodScheme } from '../periods/calendar.js';
import type { Rules } from '../rules/schema.js';
import { makeManifest } from '../waist/build.js';
import type { WaistManifest } from '../waist/manifest.js';
import type { Waist } from '../waist/types.js';
import type { WaistTables } from '../flows/types.js';
import type { Db } from './db.js';
import type { StoredFile } from './record.js';
import { STORE_FORMAT, STORE_VERSION, usersViewSql, type StoredExtreme, type Totals } from './schema.js';
import { TidemarkError } from '../errors.js';
import { NO_PERIOD, UserState } from './users.js';

const DAY = 86_400_000;

/** Whether the database holds the info table (a store's first update commits it). */
export async function hasInfo(db: Db): Promise<boolean> {
  return (await db.rows("SELECT count(*)::INTEGER AS n FROM duckdb_tables() WHERE table_name = 'store_info'"))[0].n === 1;
}

/** The store_info table as a map. */
export async function readInfo(db: Db): Promise<Map<string, string>> {
  const rows = await db.rows('SELECT key, value FROM store_info');
  return new Map(rows.map((r) => [String(r.key), String(r.value)]));
}

/** Set store_info keys (inside the caller's transaction). */
export async function writeInfo(db: Db, entries: Record<string, string>): Promise<void> {
  for (const [key, value] of Object.entries(entries)) {
    await db.run('DELETE FROM store_info WHERE key = $1', [key]);
    await db.run('INSERT INTO store_info VALUES ($1, $2)', [key, value]);
  }
}

/** Per-user state from the user_state table, uid order; none is dirty. */
export async function loadUsers(db: Db, plan: LifecyclePlan, scheme: PeriodScheme): Promise<UserState> {
  const users = new UserState();
  const codeOf = new Map(plan.states.map((s, i) => [s, i + 1]));
  const key = (day: unknown) => (day === null ? NO_PERIOD : periodKeyOfDay(day as number, scheme));
  const [{ n }] = await db.rows('SELECT count(*)::INTEGER AS n FROM user_state');
  users.reserve(n as number);
  await db.chunks(
    `SELECT id, (first_period - DATE '1970-01-01')::INTEGER, state, previous_state, quiet, (last_active - DATE '1970-01-01')::INTEGER,
       (first_dormant - DATE '1970-01-01')::INTEGER FROM user_state ORDER BY uid`,
    (c, rows) => {
      for (let i = 0; i < rows; i++) {
        const u = users.add(c[0][i] as string);
        users.first[u] = key(c[1][i]);
        users.code[u] = codeOf.get(c[2][i] as string) ?? 0;
        users.prevCode[u] = c[3][i] === null ? 0 : (codeOf.get(c[3][i] as string) ?? 0);
        users.idle[u] = c[4][i] as number;
        users.lastActive[u] = key(c[5][i]);
        users.firstDormant[u] = key(c[6][i]);
      }
    },
  );
  users.dirty.fill(0);
  return users;
}

/**
 * Write per-user state: every user (`replace`: a new store or a rebuild), or the users whose state
 * changed and the new ones. `attributes`: the JSON of the latest active period's attributes for the
 * users whose latest active period is new; the others keep theirs. Then the view `users` (with tenure).
 */
export async function saveUsers(db: Db, users: UserState, plan: LifecyclePlan, scheme: PeriodScheme, lastKey: number, attributes: Map<number, string>, replace: boolean): Promise<void> {
  const [{ n: stored }] = await db.rows('SELECT count(*)::INTEGER AS n FROM user_state');
  await db.run('CREATE TABLE users_stage (uid INTEGER, id VARCHAR, first_day INTEGER, state VARCHAR, previous_state VARCHAR, quiet INTEGER, last_day INTEGER, dormant_day INTEGER, attributes VARCHAR)');
  const app = await db.appender('users_stage');
  const day = (k: number) => periodStartDay(k, scheme);
  for (let u = 0; u < users.n; u++) {
    const first = users.first[u];
    if (first === NO_PERIOD) throw new Error(`user ${u} was never active`);
    if (!replace && !users.dirty[u]) continue;
    app.appendInteger(u);
    app.appendVarchar(users.ids[u]);
    app.appendInteger(day(first));
    app.appendVarchar(plan.states[users.code[u] - 1]);
    if (users.prevCode[u] > 0) app.appendVarchar(plan.states[users.prevCode[u] - 1]);
    else app.appendNull();
    app.appendInteger(users.idle[u]);
    app.appendInteger(day(users.lastActive[u]));
    if (users.firstDormant[u] !== NO_PERIOD) app.appendInteger(day(users.firstDormant[u]));
    else app.appendNull();
    const a = attributes.get(u);
    if (a !== undefined) app.appendVarchar(a);
    else app.appendNull();
    app.endRow();
  }
  app.closeSync();
  const cols = `s.uid, s.id, DATE '1970-01-01' + s.first_day, s.state, s.previous_state, DATE '1970-01-01' + s.last_day, s.quiet, DATE '1970-01-01' + s.dormant_day`;
  if (replace) {
    await db.run('DELETE FROM user_state');
    await db.run(`INSERT INTO user_state SELECT ${cols}, s.attributes FROM users_stage s ORDER BY s.uid`);
  } else {
    await db.run(`UPDATE user_state SET state = s.state, previous_state = s.previous_state, last_active = DATE '1970-01-01' + s.last_day, quiet = s.quiet,
      first_dormant = DATE '1970-01-01' + s.dormant_day, attributes = coalesce(s.attributes, user_state.attributes) FROM users_stage s WHERE user_state.uid = s.uid`);
    await db.run(`INSERT INTO user_state SELECT ${cols}, s.attributes FROM users_stage s WHERE s.uid >= $1 ORDER BY s.uid`, [stored as number]);
  }
  await db.run('DROP TABLE users_stage');
  await db.run(usersViewSql(scheme.grain, periodLabel(lastKey, scheme)));
}

/**
 * The attributes of each user's latest active period, among the periods of `log`: the values on
 * the user's latest event in it (by wall-clock time; on ties, the later row), as engines/memory/
 * attributes.ts takes them, written as a JSON object of the attributes that have a value.
 */
export function latestAttributes(log: EventLog, uidOfLogUser: Int32Array, users: UserState): Map<number, string> {
  const best = new Map<number, number>();
  for (let i = 0; i < log.size; i++) {
    const u = uidOfLogUser[log.user[i]];
    if (u < 0 || log.period[i] !== users.lastActive[u]) continue;
    const b = best.get(u);
    if (b === undefined || log.wallMs[i] >= log.wallMs[b]) best.set(u, i);
  }
  const out = new Map<number, string>();
  for (const [u, i] of best) {
    const o: Record<string, string> = {};
    for (const a of log.attributes) {
      const v = a.values[a.codes[i]];
      if (v !== '') o[a.name] = v;
    }
    out.set(u, JSON.stringify(o));
  }
  return out;
}

/** The stored files from number `from` to `to` (inclusive), for a replay. */
export async function storedFiles(db: Db, from = 0, to = 2 ** 31 - 1): Promise<StoredFile[]> {
  const rows = await db.rows('SELECT file, path, attributes, has_event, header_lines, blank_lines, lines, entries FROM applied_files WHERE file BETWEEN $1 AND $2 ORDER BY file', [from, to]);
  return rows.map((r) => {
    const file = r.file as number;
    return {
      path: r.path as string,
      shape: {
        attributes: JSON.parse(r.attributes as string) as string[],
        hasEvent: r.has_event as boolean,
        headerLines: r.header_lines as number,
        blankLines: r.blank_lines as number,
        lines: r.lines as number,
        entries: r.entries as number,
      },
      entries: (onRow, onReject) =>
        db.chunks('SELECT line, lines, reject, user_id, ts, event, attrs FROM events WHERE file = $1 ORDER BY entry', (c, n) => {
          let lastText = '', lastAttrs: string[] = [];
          for (let i = 0; i < n; i++) {
            const reject = c[2][i];
            if (reject !== null) {
              onReject(c[0][i] as number, c[1][i] as number, reject as RejectReason);
              continue;
            }
            const text = c[6][i] as string;
            if (text !== lastText) {
              lastText = text;
              lastAttrs = JSON.parse(text) as string[];
            }
            onRow(c[0][i] as number, c[1][i] as number, c[3][i] as string, c[4][i] as string, c[5][i] === null ? undefined : (c[5][i] as string), lastAttrs);
          }
        }, [file]),
    };
  });
}

/** A log's earliest and latest rows, as stored. */
export function storedExtremes(ex: Extremes): Totals['extremes'] {
  const s = (r: ExtremeRow): StoredExtreme => ({ wallMs: r.wallMs, text: r.text, file: r.file, line: r.lineOf(r.ref) });
  return { earliest: ex.earliest.map(s), latest: ex.latest.map(s) };
}

/**
 * The extremes of stored rows followed by a new log's, as one pass over all the rows would keep
 * them: each new row inserted after the rows it ties with (ingest/extremes.ts `insert`).
 */
export function mergeExtremes(a: Totals['extremes'], b: Totals['extremes']): Totals['extremes'] {
  const merge = (list: StoredExtreme[], more: StoredExtreme[], before: (x: StoredExtreme, y: StoredExtreme) => boolean) => {
    const out = [...list];
    for (const row of more) {
      let i = out.length;
      while (i > 0 && before(row, out[i - 1])) i--;
      out.splice(i, 0, row);
      if (out.length > EXTREMES_KEPT) out.pop();
    }
    return out;
  };
  return { earliest: merge(a.earliest, b.earliest, (x, y) => x.wallMs < y.wallMs), latest: merge(a.latest, b.latest, (x, y) => x.wallMs > y.wallMs) };
}

/** The warnings of one engine run over every applied file: a handful of rows far from the bulk. */
export function rangeWarnings(t: Totals, scheme: PeriodScheme, startKey: number, lastKey: number): string[] {
  const ex = new Extremes();
  const row = (r: StoredExtreme): ExtremeRow => ({ wallMs: r.wallMs, text: r.text, file: r.file, ref: r.line, lineOf: (x) => x });
  ex.earliest.push(...t.extremes.earliest.map(row));
  ex.latest.push(...t.extremes.latest.map(row));
  const keyOf = (ms: number) => periodKeyOfDay(Math.floor(ms / DAY), scheme);
  const o = rangeOutliers(ex, t.rows.used, keyOf);
  return o ? [outlierWarning(o, { startKey, span: lastKey - startKey + 1, outStart: 0 }, scheme)] : [];
}

/** The manifest and waist of the store, or undefined while the warm-up leaves no period. */
export function storeWaist(rules: Rules, tables: WaistTables, totals: Totals, o: { startKey: number; lastKey: number; users: number; events: WaistManifest['events']; attributeValues: Map<string, number> }): Waist | undefined {
  if (tables.periods.length <= rules.warmup) return undefined;
  const scheme = { grain: rules.grain, weekStart: rules.weekStart };
  const manifest = makeManifest({
    rules,
    warmup: rules.warmup,
    periods: tables.periods,
    engine: 'memory',
    rows: totals.rows,
    rowsInLastPeriod: totals.rowsInLastPeriod,
    lastPeriod: totals.lastPeriod,
    users: o.users,
    events: o.events,
    attributes: totals.attributes.map((name) => ({ name, values: o.attributeValues.get(name) ?? 0 })),
    by: null,
    byPerPerson: false,
    warnings: rangeWarnings(totals, scheme, o.startKey, o.lastKey),
  });
  return { manifest, tables };
}

/** The manifest's `events`: the 50 most frequent names, as engines/memory does. */
export function topEvents(counts: Iterable<[string, number]>, rules: Rules): WaistManifest['events'] {
  const keySet = rules.activity.keyEvents ? new Set(rules.activity.keyEvents) : undefined;
  return [...counts].sort((a, b) => b[1] - a[1] || (a[0] < b[0] ? -1 : 1)).slice(0, 50).map(([name, rows]) => ({ name, rows, key: !keySet || keySet.has(name) }));
}

/** Check the format and version in store_info. */
export function checkFormat(info: Map<string, string>, file: string): void {
  if (info.get('format') !== STORE_FORMAT) throw new TidemarkError('STORE_INVALID', 'not a tidemark store', { file }, 'Give a folder written by tidemark update');
  const v = Number(info.get('version'));
  if (v > STORE_VERSION) throw new TidemarkError('STORE_INVALID', `this store is format version ${v}, from a newer tidemark; this one reads version ${STORE_VERSION}`, { file }, 'Upgrade tidemark');
  if (v !== STORE_VERSION) throw new TidemarkError('STORE_INVALID', `store format version ${info.get('version')} is not supported`, { file }, `This tidemark reads version ${STORE_VERSION}`);
}
