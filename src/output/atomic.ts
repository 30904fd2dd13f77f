/**
 * Atomic output: a file or a whole folder appears complete or not at all.
 *
 * A file is written to a temporary file beside it (same folder, so the same file system), flushed to
 * disk, then renamed over the target: POSIX rename(2) replaces a file atomically, so a reader, a crash
 * or a full disk sees the old file or the new one, never a part.
 *
 * A folder cannot be swapped with one rename: rename(2) replaces a directory only when the target is
 * empty. So a report folder DIR is replaced in three steps:
 *   1. write every file into `.DIR.tidemark-new-<pid>-<tag>` beside DIR (a failure, full disk
 *      included, removes it; DIR is untouched);
 *   2. rename DIR aside to `.DIR.tidemark-old-<pid>-<tag>`;
 *   3. rename the new folder to DIR, then delete the old one.
 * A kill between steps 2 and 3 leaves no DIR, the old report whole beside it and the new one whole
 * beside it. The next write into DIR (or {@link recoverFolder}) first puts the old report back, then
 * deletes leftovers of runs that are no longer alive; a run still alive is left alone.
 *
 * An existing DIR is replaced only when it is a report folder (it holds the marker file
 * {@link REPORT_MARKER}, or only the files a report writes) or empty: pointing --out at a folder of
 * other files is refused, never deleted.
 */
import { closeSync, existsSync, fstatSync, fsyncSync, lstatSync, mkdirSync, openSync, readdirSync, realpathSync, renameSync, rmSync, statSync, unlinkSync, writeSync, type Stats } from 'node:fs';
import { randomBytes } from 'node:crypto';
import { basename, dirname, join, resolve } from 'node:path';
import { TidemarkError, showValue } from '../errors.js';

/** Written into every report folder; its presence lets the next run replace the folder. */
export const REPORT_MARKER = '.tidemark-report';

/** What kind of folder {@link replaceFolder} writes: its marker file, its name in messages, and the files it may replace. */
export interface FolderKind {
  marker: string;
  markerText: string;
  /** "the report folder" */
  what: string;
  /** What a folder of this kind written before the marker existed holds. */
  looksLike(names: readonly string[], dir: string): boolean;
}

export const REPORT_FOLDER: FolderKind = {
  marker: REPORT_MARKER,
  markerText: 'This folder was written by tidemark report. The next tidemark report into it replaces the whole folder.\n',
  what: 'the report folder',
  looksLike: (names, dir) => names.includes('index.html') && names.includes('summary.md') && names.every((n) => /^[\w.-]+\.(html|md|csv|json)$/.test(n) && lstatSync(join(dir, n)).isFile()),
};

export const WAIST_FOLDER: FolderKind = {
  marker: '.tidemark-waist',
  markerText: 'This folder was written by tidemark waist. The next tidemark waist into it replaces the whole folder.\n',
  what: 'the waist folder',
  looksLike: (names, dir) => names.includes('manifest.json') && names.every((n) => /^[\w.-]+\.(csv|json|parquet|md|sql)$/.test(n) && lstatSync(join(dir, n)).isFile()),
};

/** Test hooks: `step` is called after each step of a write (a test may throw or kill the process there). */
export interface WriteHooks {
  step?(label: string): void;
}

/** Write `data` to `file` atomically (temporary file beside it, flushed, renamed over it). */
export function writeFileAtomic(file: string, data: string | Uint8Array, hooks: WriteHooks = {}): void {
  let target = resolve(file);
  const st = statOrUndefined(target);
  if (st?.isDirectory()) throw new TidemarkError('FILE_UNWRITABLE', 'cannot write the output: it is a folder', { file }, 'Give a file name');
  if (st && !st.isFile()) {
    // a device, FIFO or socket (/dev/stdout, a named pipe): write to it directly, renaming over it would replace it
    return guard(file, 'the output file', () => writeAll(target, data, 'w'));
  }
  if (st) target = realpathSync(target); // write beside the file a symbolic link points to, keep the link
  const dir = dirname(target);
  const prefix = `.${basename(target)}.tidemark-`;
  makeFolder(dir, file, 'the output file');
  removeDeadLeftovers(dir, prefix);
  const tmp = join(dir, `${prefix}${process.pid}-${randomBytes(4).toString('hex')}.tmp`);
  guard(file, 'the output file', () => {
    try {
      writeAll(tmp, data, 'wx', st?.mode);
      hooks.step?.('written');
      renameSync(tmp, target);
    } catch (err) {
      rmSync(tmp, { force: true });
      throw err;
    }
  });
  hooks.step?.('renamed');
  syncDir(dir);
}

/** A file written piece by piece, atomically: nothing is at `file` until {@link commit}. */
export interface AtomicFile {
  write(text: string): void;
  /** Flush, close and rename into place. */
  commit(): void;
  /** Close and remove the temporary file (after an error). */
  abort(): void;
}

/**
 * Open `file` for a streamed atomic write: a temporary file beside it, renamed over it on commit. A
 * device or FIFO is written directly. Writes are buffered in 1 MiB pieces.
 */
export function openAtomicFile(file: string): AtomicFile {
  let target = resolve(file);
  const st = statOrUndefined(target);
  if (st?.isDirectory()) throw new TidemarkError('FILE_UNWRITABLE', 'cannot write the output: it is a folder', { file }, 'Give a file name');
  const direct = st !== undefined && !st.isFile();
  if (st && !direct) target = realpathSync(target);
  const dir = dirname(target);
  const prefix = `.${basename(target)}.tidemark-`;
  let tmp = target;
  if (!direct) {
    makeFolder(dir, file, 'the output file');
    removeDeadLeftovers(dir, prefix);
    tmp = join(dir, `${prefix}${process.pid}-${randomBytes(4).toString('hex')}.tmp`);
  }
  const fd = guard(file, 'the output file', () => openSync(tmp, direct ? 'w' : 'wx', st?.mode === undefined ? 0o666 : st.mode & 0o7777));
  let pending: string[] = [];
  let size = 0;
  let closed = false;
  const flush = () => {
    if (pending.length === 0) return;
    const buf = Buffer.from(pending.join(''), 'utf8');
    pending = [];
    size = 0;
    let off = 0;
    while (off < buf.length) off += writeSync(fd, buf, off, buf.length - off);
  };
  const close = () => {
    if (closed) return;
    closed = true;
    closeSync(fd);
  };
  return {
    write(text) {
      pending.push(text);
      size += text.length;
      if (size >= 1 << 20) guard(file, 'the output file', flush);
    },
    commit() {
      guard(file, 'the output file', () => {
        try {
          flush();
          if (!direct) fsyncSync(fd);
          close();
          if (!direct) renameSync(tmp, target);
        } catch (err) {
          close();
          if (!direct) rmSync(tmp, { force: true });
          throw err;
        }
      });
      if (!direct) syncDir(dir);
    },
    abort() {
      close();
      if (!direct) rmSync(tmp, { force: true });
    },
  };
}

/**
 * Replace folder `dir` by a folder holding exactly `files` (name → content) and the marker file,
 * atomically as described above. Returns the names written (the marker left out).
 * @throws TidemarkError FILE_UNWRITABLE when the disk is full, the folder is not writable, or `dir`
 *   holds files that are not a report's (nothing is written or removed then).
 */
export function replaceFolder(dir: string, files: ReadonlyMap<string, string | Uint8Array>, hooks: WriteHooks = {}, kind: FolderKind = REPORT_FOLDER): string[] {
  const target = resolve(dir);
  const parent = dirname(target);
  const base = basename(target);
  for (const name of files.keys()) {
    if (name !== basename(name) || name === '.' || name === '..' || name.startsWith('.tidemark')) throw new TidemarkError('INPUT_INVALID', `'${showValue(name)}' is not a plain file name`, { key: 'files' });
  }
  if (!base || target === parent) throw new TidemarkError('FILE_UNWRITABLE', 'cannot replace the root folder', { file: dir }, 'Give a folder for the report');
  makeFolder(parent, dir, kind.what);
  recoverFolder(target);
  const st = statOrUndefined(target);
  if (st && !st.isDirectory()) throw new TidemarkError('FILE_UNWRITABLE', 'cannot write the report there: it is a file, not a folder', { file: dir }, 'Give a folder name');
  if (st && !replaceable(target, kind)) {
    throw new TidemarkError('FILE_UNWRITABLE', `the folder holds files that are not part of ${kind === REPORT_FOLDER ? 'a tidemark report' : 'a tidemark waist'}; it is left as it is`, { file: dir },
      'Give a new or empty folder (the whole folder is replaced on each run)');
  }
  const tag = `${process.pid}-${randomBytes(4).toString('hex')}`;
  const fresh = join(parent, `.${base}.tidemark-new-${tag}`);
  const aside = join(parent, `.${base}.tidemark-old-${tag}`);
  guard(dir, kind.what, () => {
    try {
      mkdirSync(fresh);
      for (const [name, text] of files) {
        writeAll(join(fresh, name), text, 'wx');
        hooks.step?.(`wrote ${name}`);
      }
      writeAll(join(fresh, kind.marker), kind.markerText, 'wx');
      syncDir(fresh);
      hooks.step?.('written');
    } catch (err) {
      rmSync(fresh, { recursive: true, force: true });
      throw err;
    }
  });
  guard(dir, kind.what, () => {
    try {
      if (!st) return renameSync(fresh, target);
      renameSync(target, aside);
    } catch (err) {
      rmSync(fresh, { recursive: true, force: true }); // another run moved DIR meanwhile, or DIR appeared
      throw err;
    }
    hooks.step?.('old set aside');
    try {
      renameSync(fresh, target);
    } catch (err) {
      renameSync(aside, target); // put the old report back
      rmSync(fresh, { recursive: true, force: true });
      throw err;
    }
  });
  hooks.step?.('new in place');
  syncDir(parent);
  rmSync(aside, { recursive: true, force: true });
  hooks.step?.('old removed');
  return [...files.keys()];
}

/**
 * Finish what an interrupted {@link replaceFolder} left beside `dir`: when `dir` is missing and an
 * earlier report was set aside, put it back; then delete the temporary folders and files of runs that
 * are no longer alive. Safe to call at any time.
 */
export function recoverFolder(dir: string): void {
  const target = resolve(dir);
  const parent = dirname(target);
  const prefix = `.${basename(target)}.tidemark-`;
  const dead = leftovers(parent, prefix).filter((l) => !alive(l.pid));
  if (!existsSync(target)) {
    const old = dead.filter((l) => l.kind === 'old').sort((a, b) => mtime(b.path) - mtime(a.path))[0];
    if (old) renameSync(old.path, target);
  }
  for (const l of dead) rmSync(l.path, { recursive: true, force: true });
}

/** True when `dir` is empty, holds the marker, or holds only what a report writes (index.html, summary.md, *.csv, *.json). */
export function replaceable(dir: string, kind: FolderKind = REPORT_FOLDER): boolean {
  const names = readdirSync(dir);
  if (names.length === 0 || names.includes(kind.marker)) return true;
  // a folder of this kind written before the marker existed (or, for a waist, by the printed SQL)
  return kind.looksLike(names, dir);
}

interface Leftover {
  path: string;
  kind: 'new' | 'old' | 'tmp';
  pid: number;
}

function leftovers(parent: string, prefix: string): Leftover[] {
  let names: string[];
  try {
    names = readdirSync(parent);
  } catch {
    return [];
  }
  const out: Leftover[] = [];
  for (const n of names) {
    if (!n.startsWith(prefix)) continue;
    const m = /^(?:(new|old)-)?(\d+)-[0-9a-f]{8}(\.tmp)?$/.exec(n.slice(prefix.length));
    if (!m || Boolean(m[1]) === Boolean(m[3])) continue;
    out.push({ path: join(parent, n), kind: (m[1] as 'new' | 'old' | undefined) ?? 'tmp', pid: Number(m[2]) });
  }
  return out;
}

function removeDeadLeftovers(dir: string, prefix: string): void {
  for (const l of leftovers(dir, prefix)) if (l.kind === 'tmp' && !alive(l.pid)) rmSync(l.path, { force: true });
}

/** Whether a process with this id is running (signal 0 checks without sending anything). */
function alive(pid: number): boolean {
  if (pid === process.pid) return true;
  try {
    process.kill(pid, 0);
    return true;
  } catch (err) {
    return (err as NodeJS.ErrnoException).code === 'EPERM';
  }
}

function mtime(path: string): number {
  try {
    return statSync(path).mtimeMs;
  } catch {
    return 0;
  }
}

function statOrUndefined(path: string): Stats | undefined {
  try {
    return statSync(path);
  } catch {
    return undefined;
  }
}

/** Create `dir` and its parents; a file in the way (EEXIST from a recursive mkdir) is told as such. */
function makeFolder(dir: string, file: string, what: string): void {
  guard(file, what, () => {
    try {
      mkdirSync(dir, { recursive: true });
    } catch (err) {
      throw (err as NodeJS.ErrnoException).code === 'EEXIST' ? Object.assign(new Error('a file is in the way'), { code: 'ENOTDIR' }) : err;
    }
  });
}

/** Write the whole of `data` and flush it to disk before closing. */
function writeAll(path: string, data: string | Uint8Array, flags: 'w' | 'wx', mode?: number): void {
  const fd = openSync(path, flags, mode === undefined ? 0o666 : mode & 0o7777);
  try {
    const buf = typeof data === 'string' ? Buffer.from(data, 'utf8') : data;
    let off = 0;
    while (off < buf.length) off += writeSync(fd, buf, off, buf.length - off);
    if (fstatSync(fd).isFile()) fsyncSync(fd);
  } finally {
    closeSync(fd);
  }
}

/** Flush a folder's entries (the renames) to disk; some systems cannot, which is harmless. */
function syncDir(dir: string): void {
  try {
    const fd = openSync(dir, 'r');
    try {
      fsyncSync(fd);
    } finally {
      closeSync(fd);
    }
  } catch {
    // not supported here (some file systems, Windows): the rename is still atomic
  }
}

/** Run `fn`, turning a file-system error into a one-line TidemarkError that says what happened. */
function guard<T>(file: string, what: string, fn: () => T): T {
  try {
    return fn();
  } catch (err) {
    if (err instanceof TidemarkError) throw err;
    throw writeError(err, file, what);
  }
}

/** A file-system error while writing, as a TidemarkError; ENOSPC says the disk is full. */
export function writeError(err: unknown, file: string, what: string): TidemarkError {
  const code = (err as NodeJS.ErrnoException)?.code;
  const kept = what === 'the report folder' ? 'the previous report is left as it was' : 'nothing was written';
  const known: Record<string, [string, string]> = {
    ENOSPC: [`the disk is full: cannot write ${what}`, `Free some space and run again; ${kept}`],
    EDQUOT: [`the disk quota is used up: cannot write ${what}`, `Free some space and run again; ${kept}`],
    EACCES: [`no permission to write ${what}`, 'Check the permissions of the folder'],
    EPERM: [`no permission to write ${what}`, 'Check the permissions of the folder'],
    EROFS: [`cannot write ${what}: the file system is read-only`, 'Write somewhere else'],
    ENOTDIR: [`cannot write ${what}: part of the path is a file, not a folder`, 'Check the path'],
    EISDIR: [`cannot write ${what}: it is a folder`, 'Give a file name'],
    ENAMETOOLONG: [`cannot write ${what}: the name is too long`, 'Use a shorter path'],
    EEXIST: [`cannot write ${what}: a temporary file is in the way`, 'Run again'],
  };
  const [message, hint] = (code && known[code]) || [`cannot write ${what}${code ? ` (${code})` : ''}`, 'Check that the folder is writable'];
  return new TidemarkError('FILE_UNWRITABLE', message, { file }, hint);
}
