/**
 * Reading a store: the waist the analyses read (`--store DIR`), the report's event sections and the
 * digest, the store's rules, and its events as a source the engines read (for the audience lists and
 * the rules comparison). Every read opens the database read-only: it never changes the store, and it
 * is refused while an update holds the database.
 */
import { existsSync, mkdtempSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { filesSource, type EventSource } from '../engines/types.js';
import { TidemarkError } from '../errors.js';
import { EventLogBuilder, type EventLog } from '../ingest/eventLog.js';
import { observedRange, userTimelines } from '../lifecycle/timelines.js';
import { behaviourSections } from '../report/sections/behaviour.js';
import { parseRules } from '../rules/load.js';
import type { Rules } from '../rules/schema.js';
import type { WaistTables } from '../flows/types.js';
import type { Waist } from '../waist/types.js';
import { openDb, type Db } from './db.js';
import { digestOf, type Digest } from './digest.js';
import { replay } from './record.js';
import { STORE_FILE, sqlString } from './schema.js';
import { checkFormat, hasInfo, readInfo, storedFiles } from './state.js';

/** Open a store read-only and check its format. @throws TidemarkError FILE_NOT_FOUND, STORE_INVALID, STORE_BUSY */
export async function openStore(dir: string): Promise<{ db: Db; info: Map<string, string>; rules: Rules }> {
  let isDir = false;
  try {
    isDir = statSync(dir).isDirectory();
  } catch {
    throw new TidemarkError('FILE_NOT_FOUND', 'no such store folder', { file: dir }, 'Create a store with tidemark update --store DIR --events FILE');
  }
  const file = join(dir, STORE_FILE);
  if (!isDir || !existsSync(file)) {
    throw new TidemarkError('STORE_INVALID', `not a store: the folder holds no ${STORE_FILE}`, { file: dir }, 'Give the folder of tidemark update --store, or create one with it');
  }
  const db = await openDb(file, 'read');
  try {
    if (!(await hasInfo(db))) throw new TidemarkError('STORE_INVALID', 'the store holds nothing yet: its first update did not finish', { file: dir }, 'Run tidemark update again');
    const info = await readInfo(db);
    checkFormat(info, file);
    return { db, info, rules: parseRules(info.get('rules') as string, 'store rules') };
  } catch (e) {
    db.close();
    throw e;
  }
}

export interface StoreRead {
  /** The waist in full form, as `--waist` would give it. */
  waist: Waist;
  rules: Rules;
  /** What changed in the latest period. */
  digest: Digest;
}

/**
 * The store's waist (with the report's event sections when `sections`, computed from the stored
 * events, as a report from the events would compute them), its rules and its digest.
 * @throws {TidemarkError} RANGE_INVALID (key `warmup`) while the warm-up leaves no period, as a run
 *   of the engine over the same events would.
 */
export async function readStore(dir: string, o: { sections?: boolean } = {}): Promise<StoreRead> {
  const { db, info, rules } = await openStore(dir);
  try {
    const tables = JSON.parse(info.get('tables') as string) as WaistTables;
    const manifest = JSON.parse(info.get('manifest') as string) as Waist['manifest'] | null;
    if (!manifest) {
      throw new TidemarkError('RANGE_INVALID', `a warm-up of ${rules.warmup} periods leaves no period to analyse (the range has ${tables.periods.length})`, { key: 'warmup' }, 'Lower the warm-up or widen the range');
    }
    const waist: Waist = { manifest, tables };
    if (o.sections) {
      const log = await storeLog(db, rules, true);
      const t = userTimelines(log, rules.activity.minEvents);
      const leaveOut = behaviourSections(log, t, observedRange(log, undefined, false), rules);
      const keep = manifest.lastPeriod.complete ? leaveOut : behaviourSections(log, t, observedRange(log, undefined, true), rules);
      waist.sections = { leaveOut, keep };
    }
    return { waist, rules, digest: digestOf(waist) };
  } finally {
    db.close();
  }
}

/** Every stored row replayed into one log under `rules` (`detail` as readEvents takes it). */
export async function storeLog(db: Db, rules: Rules, detail = false): Promise<EventLog> {
  const files = await storedFiles(db);
  const skip = (await db.rows('SELECT coalesce(bool_or(skip_bad_rows), false) AS s FROM applied_files'))[0].s === true;
  const builder = new EventLogBuilder({ rules, skipBadRows: skip, detail });
  await replay(builder, files);
  return builder.build();
}

/** The stored events as a source, with the store's rules; `cleanup` removes the exported files. */
export interface StoreEvents {
  source: EventSource;
  rules: Rules;
  cleanup(): void;
}

/**
 * The store's events as event files the memory engine reads: each applied file's rows, exported by
 * DuckDB to a CSV in a fresh temporary folder (RFC 4180, a header of the file's own column names: the
 * rules' user, timestamp and event columns, then its attributes), in the order applied, with the
 * store's rules. Classified with those rules, they give the store's states period by period. Rows
 * the reader rejected are not exported, blank lines neither, so the exported files' row and line
 * accounting is that of the used and non-key rows alone, and messages name the exported files.
 * `check` sees the store's rules before anything is exported (options that depend on them).
 * Call `cleanup()` when done (also on error).
 * @example const { source, rules, cleanup } = await storeEvents('store/');
 *   try { const { waist } = await createEngine('memory').run(source, rules); } finally { cleanup(); }
 */
export async function storeEvents(dir: string, check?: (rules: Rules) => void): Promise<StoreEvents> {
  const { db, rules } = await openStore(dir);
  try {
    check?.(rules);
  } catch (e) {
    db.close();
    throw e;
  }
  const out = mkdtempSync(join(tmpdir(), 'tidemark-store-events-'));
  const cleanup = () => rmSync(out, { recursive: true, force: true });
  try {
    const files = await db.rows('SELECT file, attributes, has_event, skip_bad_rows FROM applied_files ORDER BY file');
    const paths: string[] = [];
    const ident = (s: string) => `"${s.replaceAll('"', '""')}"`;
    for (const f of files) {
      const attrs = JSON.parse(f.attributes as string) as string[];
      const cols = [`user_id AS ${ident(rules.columns.user)}`, `ts AS ${ident(rules.columns.timestamp)}`];
      if (f.has_event) cols.push(`coalesce(event, '') AS ${ident(rules.columns.event)}`);
      attrs.forEach((a, i) => cols.push(`coalesce(json_extract_string(attrs, '$[${i}]'), '') AS ${ident(a)}`));
      const path = join(out, `${String(f.file).padStart(6, '0')}.csv`);
      await db.run(`COPY (SELECT ${cols.join(', ')} FROM events WHERE file = ${Number(f.file)} AND reject IS NULL ORDER BY entry) TO ${sqlString(path)} (FORMAT csv, HEADER true, DELIMITER ',', QUOTE '"', ESCAPE '"')`);
      paths.push(path);
    }
    const skip = files.some((f) => f.skip_bad_rows === true);
    return { source: filesSource(paths, { format: 'csv', skipBadRows: skip }), rules, cleanup };
  } catch (e) {
    cleanup();
    throw e;
  } finally {
    db.close();
  }
}
