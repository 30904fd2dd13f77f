/**
 * `tidemark update`: apply new event files to a store, in one DuckDB transaction.
 *
 * 1. Take the lock (lock.ts); open or create the database; check its format and rules.
 * 2. Hash each file (SHA-256 of its bytes): a file applied before, or given twice, is skipped.
 * 3. Read the new files once, recording every row into the `events` table (record.ts).
 * 4. If every new event falls after the last stored period, *extend*: walk each stored user through
 *    the new periods and add them to the waist (extend.ts); the cost grows with the new events and the
 *    users, not with the history. Otherwise the new events restate stored periods (late events): the
 *    store is *rebuilt* by replaying every stored row, and the periods restated are compared with the
 *    classification before, user by user. With `reclassify`, the store is rebuilt under new rules.
 * 5. Write the per-user state, the waist so far, the running totals and the log, then commit. A kill
 *    at any point leaves the database as it was before (nothing committed) or after (committed);
 *    DuckDB's write-ahead log makes a commit durable and replays it on the next open.
 */
import { join } from 'node:path';
import { TidemarkError } from '../errors.js';
import type { EventLog, RowAccount } from '../ingest/eventLog.js';
import type { ScanLimits } from '../ingest/limits.js';
import { DEFAULT_LIMITS } from '../ingest/limits.js';
import { compilePlan } from '../lifecycle/plan.js';
import { periodLabel, type PeriodScheme } from '../periods/calendar.js';
import { parseRules } from '../rules/load.js';
import { resolveRules } from '../rules/resolve.js';
import type { Rules } from '../rules/schema.js';
import type { Waist } from '../waist/types.js';
import type { WaistTables } from '../flows/types.js';
import { extendStored, fromLog, rebuild, writeTotalsTables, type Built } from './build.js';
import { openDb } from './db.js';
import { digestOf, type Digest } from './digest.js';
import { checkFolder, fileHash, removeNewStore, rulesDifference, rulesText } from './files.js';
import { takeLock } from './lock.js';
import { checkNotEmpty, recordFile, RecordingBuilder, type FileShape, type ReadChoice } from './record.js';
import { SCHEMA_SQL, STORE_FILE, STORE_FORMAT, STORE_VERSION } from './schema.js';
import { checkFormat, hasInfo, readInfo, saveUsers, storeWaist, topEvents, writeInfo } from './state.js';

export { checkFormat, fileHash, rulesDifference, rulesText };

/** Named points of an update, for the kill test (a hook may stop the process there). */
export type UpdateStep = 'locked' | 'opened' | 'hashed' | 'read' | 'classified' | 'users-written' | 'before-commit' | 'committed' | 'closed';

export interface UpdateOptions {
  /** The store folder (created when missing). */
  dir: string;
  /** New event files, applied in this order. */
  files: string[];
  /** The rules: for a new store, the rules it keeps; for a store, they must equal its rules unless `reclassify`. Default: the store's (the packaged weekly rules for a new store). */
  rules?: Rules;
  /** Column names that replace those of the rules (given or the store's). */
  columns?: { user?: string; timestamp?: string; event?: string };
  /** Rebuild the store from its events under `rules`. */
  reclassify?: boolean;
  /** How to read the new files. */
  read?: ReadChoice;
  /** The time written in the log (default now). */
  now?: Date;
  onStep?: (step: UpdateStep) => void;
  /** Reader bounds (tests lower them). */
  limits?: Partial<ScanLimits>;
}

export interface AppliedFile {
  file: number;
  path: string;
  sha256: string;
  bytes: number;
  rows: RowAccount;
  /** First and last period of its used rows (null when it has none). */
  firstPeriod: string | null;
  lastPeriod: string | null;
}

export interface SkippedFile {
  path: string;
  sha256: string;
  /** Where the same bytes were applied before (or earlier in this command). */
  appliedAs: string;
  appliedAt: string | null;
}

export interface Restatement {
  reason: 'late events' | 'new rules';
  /** Stored periods computed again, oldest first. */
  periods: string[];
  /** Periods added before the old first period (late events older than every stored one). */
  added: string[];
  /** Users whose state changed in at least one restated period (null under new rules). */
  usersChanged: number | null;
}

export interface UpdateResult {
  store: string;
  created: boolean;
  /** 'extend': new periods added; 'rebuild': late events restated stored periods; 'reclassify': new rules; 'none': nothing to apply. */
  mode: 'extend' | 'rebuild' | 'reclassify' | 'none';
  applied: AppliedFile[];
  skipped: SkippedFile[];
  restated: Restatement | null;
  periods: { first: string; last: string; count: number };
  /** The waist so far (full form); null while the warm-up leaves no period. */
  waist: Waist | null;
  warmup: number;
  digest: Digest | null;
}

const noStep = () => undefined;

/**
 * Apply event files to the store in `o.dir`.
 * @throws {TidemarkError} STORE_BUSY (another update runs), STORE_INVALID (not a store), USAGE (rules
 *   differ without reclassify; key `rules`), and every reading error of the files (nothing is applied).
 */
export async function updateStore(o: UpdateOptions): Promise<UpdateResult> {
  const step = o.onStep ?? noStep;
  const now = o.now ?? new Date();
  // the files' hashes first: a missing or unreadable file stops the update before anything is made
  const hashes: { path: string; sha256: string; bytes: number }[] = [];
  for (const path of o.files) hashes.push({ path, ...(await fileHash(path)) });
  const folder = checkFolder(o.dir);
  let created = folder.isNew;
  const release = takeLock(o.dir, now);
  step('locked');
  let failedNew = false;
  try {
    const dbFile = join(o.dir, STORE_FILE);
    const db = await openDb(dbFile, 'write');
    let open = false;
    try {
      step('opened');
      // a store whose first update never committed holds no info table: it is still new
      if (!created && !(await hasInfo(db))) created = true;
      const info = created ? new Map<string, string>() : await readInfo(db);
      if (!created) checkFormat(info, dbFile);
      const stored = info.get('rules') ? parseRules(info.get('rules') as string, 'store rules') : undefined;
      const base = o.rules ?? stored ?? resolveRules({});
      const c = o.columns ?? {};
      const rules: Rules = { ...base, columns: { user: c.user ?? base.columns.user, timestamp: c.timestamp ?? base.columns.timestamp, event: c.event ?? base.columns.event } };
      const changed = stored !== undefined && rulesText(rules) !== rulesText(stored);
      if (changed && !o.reclassify) {
        throw new TidemarkError('USAGE', `differ from the rules the store was built with (${rulesDifference(stored, rules)})`, { key: 'rules' },
          'Pass --reclassify to rebuild the store from its events under the new rules, or leave --rules out to keep the store\'s');
      }
      if (changed && JSON.stringify(stored.columns) !== JSON.stringify(rules.columns)) {
        throw new TidemarkError('USAGE', 'map other columns than the store read its files with; the store keeps the columns it read as user, timestamp and event', { key: 'rules' },
          'Keep the column mapping, or build a new store from the files');
      }
      // 2. hashes
      const known = new Map<string, { path: string; at: string | null }>();
      if (!created) {
        for (const r of await db.rows("SELECT sha256, path, strftime(applied_at, '%Y-%m-%dT%H:%M:%S.%gZ') AS at FROM applied_files")) known.set(r.sha256 as string, { path: r.path as string, at: r.at as string });
      }
      const fresh: { path: string; sha256: string; bytes: number }[] = [];
      const skipped: SkippedFile[] = [];
      for (const h of hashes) {
        const before = known.get(h.sha256);
        if (before) skipped.push({ path: h.path, sha256: h.sha256, appliedAs: before.path, appliedAt: before.at });
        else {
          known.set(h.sha256, { path: h.path, at: null });
          fresh.push(h);
        }
      }
      step('hashed');
      const plan = compilePlan(rules);
      const scheme: PeriodScheme = { grain: rules.grain, weekStart: rules.weekStart };
      if (fresh.length === 0 && !changed) {
        if (created) throw new TidemarkError('USAGE', 'no event file to start the store with', { key: '--events' }, 'For example --events week-01.csv');
        return unchanged(o.dir, info, rules, skipped);
      }
      // 3. read the new files, recording their rows
      await db.run('BEGIN TRANSACTION');
      open = true;
      if (created) for (const sql of SCHEMA_SQL) await db.run(sql);
      const seq0 = created ? 0 : Number((await db.rows('SELECT coalesce(max(file) + 1, 0)::INTEGER AS n FROM applied_files'))[0].n);
      const updateNo = Number(info.get('updates') ?? 0) + 1;
      const read = o.read ?? {};
      const builder = new RecordingBuilder({ rules, skipBadRows: read.skipBadRows ?? false });
      const app = await db.appender('events');
      const limits = { ...DEFAULT_LIMITS, ...o.limits };
      const applied: (AppliedFile & { shape: FileShape; usedFrom: number; usedTo: number })[] = [];
      for (let i = 0; i < fresh.length; i++) {
        const f = fresh[i];
        const file = seq0 + i;
        const usedFrom = builder.rows.used;
        const { shape, account } = await recordFile(builder, f.path, rules, read, {
          row: (entry, line, lines, user, ts, event, attrs) => {
            app.appendInteger(file);
            app.appendInteger(entry);
            app.appendInteger(line);
            app.appendInteger(lines);
            app.appendNull();
            app.appendVarchar(user);
            app.appendVarchar(ts);
            if (event === undefined) app.appendNull();
            else app.appendVarchar(event);
            app.appendVarchar(JSON.stringify(attrs));
            app.endRow();
          },
          reject: (entry, line, lines, reason) => {
            app.appendInteger(file);
            app.appendInteger(entry);
            app.appendInteger(line);
            app.appendInteger(lines);
            app.appendVarchar(reason);
            for (let k = 0; k < 4; k++) app.appendNull();
            app.endRow();
          },
        }, limits);
        applied.push({ file, path: f.path, sha256: f.sha256, bytes: f.bytes, rows: account, firstPeriod: null, lastPeriod: null, shape, usedFrom, usedTo: builder.rows.used });
      }
      app.closeSync();
      const batch = builder.build();
      if (created) checkNotEmpty(batch, fresh.map((f) => f.path));
      const at = now.toISOString();
      const periodsOf = (log: EventLog, from: number, to: number): [string | null, string | null] => {
        let lo = Infinity, hi = -Infinity;
        for (let i = from; i < to; i++) {
          if (log.period[i] < lo) lo = log.period[i];
          if (log.period[i] > hi) hi = log.period[i];
        }
        return lo === Infinity ? [null, null] : [periodLabel(lo, scheme), periodLabel(hi, scheme)];
      };
      for (const f of applied) [f.firstPeriod, f.lastPeriod] = periodsOf(batch, f.usedFrom, f.usedTo);
      for (const f of applied) {
        await db.run(`INSERT INTO applied_files VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9::TIMESTAMP, $10, $11, $12, $13, $14, $15, $16, $17::DATE, $18::DATE)`, [
          f.file, f.path, f.sha256, f.bytes, read.format ?? null, read.delimiter ?? null, read.skipBadRows ?? false, updateNo, at.replace('Z', ''),
          JSON.stringify(f.shape.attributes), f.shape.hasEvent, f.shape.headerLines, f.shape.blankLines, f.shape.lines, f.shape.entries,
          JSON.stringify(f.rows), f.firstPeriod, f.lastPeriod,
        ]);
      }
      step('read');

      // 4. extend, or rebuild
      const oldStart = info.has('start_key') ? Number(info.get('start_key')) : undefined;
      const oldLast = info.has('last_key') ? Number(info.get('last_key')) : undefined;
      let minKey = Infinity;
      for (let i = 0; i < batch.size; i++) if (batch.period[i] < minKey) minKey = batch.period[i];
      const late = !created && !changed && batch.size > 0 && minKey <= (oldLast as number);
      let mode: UpdateResult['mode'] = changed ? 'reclassify' : late ? 'rebuild' : 'extend';
      let restated: Restatement | null = null;
      let state!: Built;
      if (mode === 'extend' && !created) {
        state = await extendStored(db, info, rules, plan, batch);
      } else if (created) {
        state = fromLog(batch, rules, plan);
      } else {
        ({ state, restated } = await rebuild(db, rules, plan, late ? { minKey, oldStart: oldStart as number, oldLast: oldLast as number, newFiles: fresh.length } : undefined, read.skipBadRows === true));
      }
      if (created) mode = 'extend';
      step('classified');

      // 5. write
      const ledger = state.ledger;
      const startKey = ledger.startKey as number, lastKey = ledger.lastKey as number;
      await saveUsers(db, state.users, plan, scheme, lastKey, state.attributes, state.replaced !== undefined);
      step('users-written');
      await writeTotalsTables(db, batch, state.replaced);
      const counts = new Map<string, number>();
      for (const r of await db.rows('SELECT name, rows::DOUBLE AS rows FROM event_names')) counts.set(r.name as string, r.rows as number);
      const attributeValues = new Map<string, number>();
      for (const r of await db.rows('SELECT attribute, count(*)::INTEGER AS n FROM attribute_values GROUP BY attribute')) attributeValues.set(r.attribute as string, r.n as number);
      const waist = storeWaist(rules, ledger.tables, state.totals, { startKey, lastKey, users: state.users.activeEver(), events: topEvents(counts, rules), attributeValues });
      // the files' log: the new ones, and under a rebuild every file's accounting again
      if (state.accounts && state.log) {
        let used = 0;
        for (let i = 0; i < state.accounts.length; i++) {
          const a = state.accounts[i];
          const [first, last] = periodsOf(state.log, used, used + a.used);
          used += a.used;
          await db.run('UPDATE applied_files SET row_account = $1, first_period = $2::DATE, last_period = $3::DATE WHERE file = $4', [JSON.stringify(a), first, last, i]);
          const mine = applied.find((f) => f.file === i);
          if (mine) Object.assign(mine, { rows: a, firstPeriod: first, lastPeriod: last });
        }
      }
      await writeInfo(db, {
        format: STORE_FORMAT,
        version: String(STORE_VERSION),
        rules: rulesText(rules),
        start_key: String(startKey),
        last_key: String(lastKey),
        updates: String(updateNo),
        tables: JSON.stringify(ledger.tables),
        manifest: waist ? JSON.stringify(waist.manifest) : 'null',
        totals: JSON.stringify(state.totals),
      });
      const digest = waist ? digestOf(waist) : null;
      await db.run('INSERT INTO updates VALUES ($1, $2::TIMESTAMP, $3, $4, $5, $6, $7)', [updateNo, at.replace('Z', ''), fresh.length, skipped.length, mode, restated ? JSON.stringify(restated) : null, digest ? JSON.stringify(digest) : null]);
      step('before-commit');
      await db.run('COMMIT');
      open = false;
      step('committed');
      return {
        store: o.dir,
        created,
        mode,
        applied: applied.map(({ file, path, sha256, bytes, rows, firstPeriod, lastPeriod }) => ({ file, path, sha256, bytes, rows, firstPeriod, lastPeriod })),
        skipped,
        restated,
        periods: { first: periodLabel(startKey, scheme), last: periodLabel(lastKey, scheme), count: lastKey - startKey + 1 },
        waist: waist ?? null,
        warmup: rules.warmup,
        digest,
      };
    } catch (e) {
      failedNew = created;
      if (open) {
        try {
          await db.run('ROLLBACK');
        } catch {
          /* the error below says what went wrong */
        }
      }
      throw e;
    } finally {
      db.close();
      step('closed');
    }
  } finally {
    release();
    if (failedNew) removeNewStore(o.dir, folder.made);
  }
}

/** Nothing new to apply: the store as it is. */
function unchanged(dir: string, info: Map<string, string>, rules: Rules, skipped: SkippedFile[]): UpdateResult {
  const tables = JSON.parse(info.get('tables') as string) as WaistTables;
  const manifest = JSON.parse(info.get('manifest') as string);
  const waist: Waist | null = manifest ? { manifest, tables } : null;
  const scheme = { grain: rules.grain, weekStart: rules.weekStart };
  const startKey = Number(info.get('start_key')), lastKey = Number(info.get('last_key'));
  return {
    store: dir,
    created: false,
    mode: 'none',
    applied: [],
    skipped,
    restated: null,
    periods: { first: periodLabel(startKey, scheme), last: periodLabel(lastKey, scheme), count: lastKey - startKey + 1 },
    waist,
    warmup: rules.warmup,
    digest: waist ? digestOf(waist) : null,
  };
}

