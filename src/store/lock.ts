/**
 * One update at a time: a lock file in the store folder, created exclusively (O_EXCL), holding the
 * updating process's pid and start time. A second update is refused with who holds the lock. A lock
 * left by a process that no longer runs (killed, crashed) is stale: it is removed and taken.
 *
 * A pid can be reused by an unrelated process after a crash; the lock is then taken for a live one
 * and the next update is refused until that file is removed by hand (the message names it).
 */
import { closeSync, openSync, readFileSync, statSync, unlinkSync, writeSync } from 'node:fs';
import { join } from 'node:path';
import { TidemarkError, showValue } from '../errors.js';

export const LOCK_FILE = 'update.lock';

/** Whether a process with this pid runs (signal 0 checks without signalling). */
export function processAlive(pid: number): boolean {
  if (!Number.isInteger(pid) || pid <= 0) return false;
  try {
    process.kill(pid, 0);
    return true;
  } catch (e) {
    return (e as { code?: string }).code === 'EPERM';
  }
}

/** What a lock file says. */
interface Holder {
  pid: number;
  startedAt: string;
}

function holderOf(file: string): Holder | undefined {
  try {
    const h = JSON.parse(readFileSync(file, 'utf8')) as Holder;
    return typeof h.pid === 'number' ? h : undefined;
  } catch {
    return undefined;
  }
}

function youngerThan(file: string, ms: number): boolean {
  try {
    return Date.now() - statSync(file).mtimeMs < ms;
  } catch {
    return false;
  }
}

/**
 * Take the store's lock; returns the function that releases it.
 * @throws {TidemarkError} STORE_BUSY when a running process holds it.
 */
export function takeLock(dir: string, now: Date = new Date()): () => void {
  const file = join(dir, LOCK_FILE);
  const text = `${JSON.stringify({ pid: process.pid, startedAt: now.toISOString() })}\n`;
  for (let attempt = 0; attempt < 3; attempt++) {
    let fd: number;
    try {
      fd = openSync(file, 'wx');
    } catch (e) {
      if ((e as { code?: string }).code !== 'EEXIST') {
        throw new TidemarkError('FILE_UNWRITABLE', `cannot create the store's lock file (${(e as { code?: string }).code ?? 'error'})`, { file }, 'Check the folder\'s permissions');
      }
      const h = holderOf(file);
      if (h && h.pid !== process.pid && processAlive(h.pid)) {
        throw new TidemarkError('STORE_BUSY', `another update (pid ${h.pid}, started ${showValue(h.startedAt, 40)}) is running on this store`, { file },
          'Wait for it to finish, then run this update again');
      }
      if (h && h.pid === process.pid) {
        throw new TidemarkError('STORE_BUSY', 'this process is already updating the store', { file }, 'Run one update at a time');
      }
      if (!h && youngerThan(file, 10_000)) {
        throw new TidemarkError('STORE_BUSY', 'another update is taking the store\'s lock', { file }, 'Wait for it to finish, then run this update again');
      }
      // stale: its process is gone (or the file is unreadable and old, half written by a killed process)
      try {
        unlinkSync(file);
      } catch {
        /* another process took it first: try again */
      }
      continue;
    }
    try {
      writeSync(fd, text);
    } finally {
      closeSync(fd);
    }
    return () => {
      const h = holderOf(file);
      if (h?.pid === process.pid) {
        try {
          unlinkSync(file);
        } catch {
          /* already gone */
        }
      }
    };
  }
  throw new TidemarkError('STORE_BUSY', 'the store\'s lock is changing hands; another update is starting', { file }, 'Try again in a moment');
}
