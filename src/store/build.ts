/**
 * Building an update's state: from one whole log (a new store, a rebuild, new rules), or by extending
 * the stored state with a batch of new periods; and the running totals' tables.
 */
import type { EventLog, RowAccount } from '../ingest/eventLog.js';
import { EventLogBuilder } from '../ingest/eventLog.js';
import { lastPeriodOf } from '../ingest/lastPeriod.js';
import type { LifecyclePlan } from '../lifecycle/plan.js';
import { periodLabel } from '../periods/calendar.js';
import type { Rules } from '../rules/schema.js';
import type { WaistTables } from '../flows/types.js';
import type { Db } from './db.js';
import { emptyTables, extend, periodActivity, type Ledger, type StateHook } from './extend.js';
import { accountSum, copyAccount, replay } from './record.js';
import type { Totals } from './schema.js';
import { latestAttributes, loadUsers, mergeExtremes, storedExtremes, storedFiles } from './state.js';
import type { Restatement } from './update.js';
import { UserState } from './users.js';

/** The state an update writes. */
export interface Built {
  users: UserState;
  ledger: Ledger;
  totals: Totals;
  /** Latest-period attributes of the users whose latest active period is new. */
  attributes: Map<number, string>;
  /** Set when the state was rebuilt from a whole log (its totals replace the stored ones). */
  replaced?: EventLog;
  log?: EventLog;
  /** Each file's row account in a rebuild. */
  accounts?: RowAccount[];
}

/**
 * Rebuild the whole state by replaying every stored row (the new files' included) under `rules`. With
 * `late` (late events), also replay the rows before this update, and count the users whose state in
 * any restated period (the earliest late one, or the old first, to the old last) differs.
 */
export async function rebuild(db: Db, rules: Rules, plan: LifecyclePlan, late: { minKey: number; oldStart: number; oldLast: number; newFiles: number } | undefined, skipNew: boolean): Promise<{ state: Built; restated: Restatement }> {
  const files = await storedFiles(db);
  const skip = skipNew || (await db.rows('SELECT coalesce(bool_or(skip_bad_rows), false) AS s FROM applied_files'))[0].s === true;
  const label = (k: number) => periodLabel(k, { grain: rules.grain, weekStart: rules.weekStart });
  if (!late) {
    const after = await replayLog(files, rules, skip);
    const state = { ...fromLog(after.log, rules, plan), accounts: after.accounts };
    return { state, restated: { reason: 'new rules', periods: [...state.ledger.tables.periods], added: [], usersChanged: null } };
  }
  const from = Math.max(late.minKey, late.oldStart);
  const span = late.oldLast - from + 1;
  // each user's states over the restated periods, before
  const seen = new Map<string, Uint8Array>();
  const priorUsers = new UserState();
  const before = await replayLog(files.slice(0, files.length - late.newFiles), rules, skip);
  fromLog(before.log, rules, plan, (u, key, code) => {
    if (key < from) return;
    const id = priorUsers.ids[u];
    let s = seen.get(id);
    if (!s) seen.set(id, (s = new Uint8Array(span)));
    s[key - from] = code;
  }, priorUsers);
  // and after, compared as they are walked
  const changed = new Set<string>();
  const users = new UserState();
  const after = await replayLog(files, rules, skip);
  const state = fromLog(after.log, rules, plan, (u, key, code) => {
    if (key < from || key > late.oldLast) return;
    const s = seen.get(users.ids[u]);
    if (!s || s[key - from] !== code) changed.add(users.ids[u]);
  }, users);
  state.accounts = after.accounts;
  const periods: string[] = [];
  for (let k = from; k <= late.oldLast; k++) periods.push(label(k));
  const added: string[] = [];
  for (let k = late.minKey; k < late.oldStart; k++) added.push(label(k));
  return { state, restated: { reason: 'late events', periods, added, usersChanged: changed.size } };
}

/** The whole state from one log (a new store, or a rebuild). */
export function fromLog(log: EventLog, rules: Rules, plan: LifecyclePlan, hook?: StateHook, users = new UserState()): Built {
  const ledger: Ledger = { tables: emptyTables(rules, plan) };
  let attributes = new Map<number, string>();
  let minKey = Infinity, maxKey = -Infinity;
  for (let i = 0; i < log.size; i++) {
    const k = log.period[i];
    if (k < minKey) minKey = k;
    if (k > maxKey) maxKey = k;
  }
  const scheme = { grain: rules.grain, weekStart: rules.weekStart };
  let last = { label: '', coverage: 0, complete: true, rows: 0 };
  if (log.size > 0) {
    const { activity, uidOfLogUser } = periodActivity(log, users, rules.activity.minEvents, minKey, maxKey);
    extend(ledger, users, rules, plan, activity, maxKey, hook);
    attributes = latestAttributes(log, uidOfLogUser, users);
    last = lastPeriodOf(log, maxKey, scheme);
  }
  const totals: Totals = {
    rows: copyAccount(log.rows),
    attributes: log.attributes.map((a) => a.name),
    extremes: storedExtremes(log.extremes),
    lastPeriod: { label: last.label, coverage: last.coverage, complete: last.complete },
    rowsInLastPeriod: last.rows,
  };
  return { users, ledger, totals, attributes, replaced: log, log };
}

/** The state extended by a batch of events that all fall after the last stored period. */
export async function extendStored(db: Db, info: Map<string, string>, rules: Rules, plan: LifecyclePlan, batch: EventLog): Promise<Built> {
  const scheme = { grain: rules.grain, weekStart: rules.weekStart };
  const users = await loadUsers(db, plan, scheme);
  const ledger: Ledger = { startKey: Number(info.get('start_key')), lastKey: Number(info.get('last_key')), tables: JSON.parse(info.get('tables') as string) as WaistTables };
  const old = JSON.parse(info.get('totals') as string) as Totals;
  let attributes = new Map<number, string>();
  const totals: Totals = {
    rows: accountSum(old.rows, batch.rows),
    attributes: [...old.attributes, ...batch.attributes.map((a) => a.name).filter((n) => !old.attributes.includes(n))],
    extremes: mergeExtremes(old.extremes, storedExtremes(batch.extremes)),
    lastPeriod: old.lastPeriod,
    rowsInLastPeriod: old.rowsInLastPeriod,
  };
  if (batch.size > 0) {
    let maxKey = -Infinity;
    for (let i = 0; i < batch.size; i++) if (batch.period[i] > maxKey) maxKey = batch.period[i];
    const { activity, uidOfLogUser } = periodActivity(batch, users, rules.activity.minEvents, (ledger.lastKey as number) + 1, maxKey);
    extend(ledger, users, rules, plan, activity, maxKey);
    attributes = latestAttributes(batch, uidOfLogUser, users);
    const last = lastPeriodOf(batch, maxKey, scheme);
    totals.lastPeriod = { label: last.label, coverage: last.coverage, complete: last.complete };
    totals.rowsInLastPeriod = last.rows;
  }
  return { users, ledger, totals, attributes, log: batch };
}

/** Replay stored files into a fresh log. */
async function replayLog(files: Awaited<ReturnType<typeof storedFiles>>, rules: Rules, skipBadRows: boolean, detail = false): Promise<{ log: EventLog; accounts: RowAccount[] }> {
  const builder = new EventLogBuilder({ rules, skipBadRows, detail });
  const accounts = await replay(builder, files);
  return { log: builder.build(), accounts };
}

/** Event names and attribute values: replaced by a rebuilt log's, or merged with a batch's. */
export async function writeTotalsTables(db: Db, batch: EventLog, replaced: EventLog | undefined): Promise<void> {
  const log = replaced ?? batch;
  if (replaced) {
    await db.run('DELETE FROM event_names');
    await db.run('DELETE FROM attribute_values');
  }
  await db.run('CREATE TABLE names_stage (name VARCHAR, rows BIGINT)');
  let app = await db.appender('names_stage');
  for (const [name, rows] of log.eventNames) {
    app.appendVarchar(name);
    app.appendBigInt(BigInt(rows));
    app.endRow();
  }
  app.closeSync();
  await db.run('CREATE TABLE names_next AS SELECT name, sum(rows)::BIGINT AS rows FROM (SELECT * FROM event_names UNION ALL SELECT * FROM names_stage) GROUP BY name');
  await db.run('DROP TABLE event_names');
  await db.run('DROP TABLE names_stage');
  await db.run('ALTER TABLE names_next RENAME TO event_names');
  await db.run('CREATE TABLE values_stage (attribute VARCHAR, value VARCHAR)');
  app = await db.appender('values_stage');
  for (const a of log.attributes) {
    for (let v = 1; v < a.values.length; v++) {
      app.appendVarchar(a.name);
      app.appendVarchar(a.values[v]);
      app.endRow();
    }
  }
  app.closeSync();
  await db.run('INSERT INTO attribute_values SELECT DISTINCT s.attribute, s.value FROM values_stage s WHERE NOT EXISTS (SELECT 1 FROM attribute_values a WHERE a.attribute = s.attribute AND a.value = s.value)');
  await db.run('DROP TABLE values_stage');
}
