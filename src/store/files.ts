/**
 * The store's file-system side of an update: the SHA-256 of an event file, the folder a store lives in,
 * and the canonical text of rules (to tell whether they changed).
 */
import { createHash } from 'node:crypto';
import { createReadStream, existsSync, mkdirSync, readdirSync, rmdirSync, rmSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { TidemarkError, showValue } from '../errors.js';
import { fileError } from '../ingest/source.js';
import { parseRules } from '../rules/load.js';
import type { Rules } from '../rules/schema.js';
import { LOCK_FILE } from './lock.js';
import { STORE_FILE } from './schema.js';
/** SHA-256 of a file's bytes, and its size. */
export async function fileHash(path: string): Promise<{ sha256: string; bytes: number }> {
  let st;
  try {
    st = statSync(path);
  } catch (e) {
    throw fileError(e, path);
  }
  if (st.isDirectory()) throw fileError({ code: 'EISDIR' }, path);
  if (!st.isFile()) {
    throw new TidemarkError('FILE_UNREADABLE', 'update reads a file twice (to hash it, then its rows), so it needs a regular file, not a pipe or device', { file: path },
      'Save the events to a file first');
  }
  const h = createHash('sha256');
  let bytes = 0;
  await new Promise<void>((resolve, reject) => {
    createReadStream(path)
      .on('data', (b) => {
        h.update(b as Buffer);
        bytes += (b as Buffer).length;
      })
      .on('error', (e) => reject(fileError(e, path)))
      .on('end', () => resolve());
  });
  return { sha256: h.digest('hex'), bytes };
}

/** The canonical text of rules (as the store keeps them). */
export function rulesText(r: Rules): string {
  return JSON.stringify(parseRules(JSON.stringify(r), 'rules'));
}

/** The first keys on which two rules differ, for a message: "lapseLimit 2 → 3". */
export function rulesDifference(a: Rules, b: Rules): string {
  const ja = JSON.parse(rulesText(a)) as Record<string, unknown>;
  const jb = JSON.parse(rulesText(b)) as Record<string, unknown>;
  const keys = [...new Set([...Object.keys(ja), ...Object.keys(jb)])].filter((k) => JSON.stringify(ja[k]) !== JSON.stringify(jb[k]));
  const show = (v: unknown) => (v === undefined ? '(none)' : showValue(JSON.stringify(v), 40));
  return keys.slice(0, 3).map((k) => `${k} ${show(ja[k])} → ${show(jb[k])}`).join(', ') + (keys.length > 3 ? ', …' : '');
}

/** A folder that may become a store: missing, empty, or holding a store. */
/**
 * A folder that may hold a store: missing (made, `made` true), empty, or holding a store (`isNew`
 * false). @throws TidemarkError STORE_INVALID for a file or a folder holding other files.
 */
export function checkFolder(dir: string): { isNew: boolean; made: boolean } {
  if (!existsSync(dir)) {
    try {
      mkdirSync(dir, { recursive: true });
    } catch (e) {
      throw new TidemarkError('FILE_UNWRITABLE', `cannot create the store folder (${(e as { code?: string }).code ?? 'error'})`, { file: dir }, 'Check the path and permissions');
    }
    return { isNew: true, made: true };
  }
  if (!statSync(dir).isDirectory()) throw new TidemarkError('STORE_INVALID', 'a store is a folder, and this is a file', { file: dir }, 'Give a new or empty folder, or a store folder');
  if (existsSync(join(dir, STORE_FILE))) return { isNew: false, made: false };
  const other = readdirSync(dir).filter((f) => f !== LOCK_FILE);
  if (other.length) throw new TidemarkError('STORE_INVALID', `the folder is not a store and not empty (it holds ${other.length} file${other.length > 1 ? 's' : ''})`, { file: dir }, 'Give a new or empty folder for a new store');
  return { isNew: true, made: false };
}

/** Undo a new store that failed: its database files, and the folder when the update made it. */
export function removeNewStore(dir: string, made: boolean): void {
  for (const f of [STORE_FILE, `${STORE_FILE}.wal`]) rmSync(join(dir, f), { force: true });
  if (made) {
    try {
      rmdirSync(dir);
    } catch {
      /* not empty: leave it */
    }
  }
}
