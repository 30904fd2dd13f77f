/**
 * Atomic writes: a file or a report folder is the old one or the new one, never a mix; a full disk
 * (ENOSPC, simulated by a write hook that fails as the file system would) leaves the old one whole and
 * says the disk is full; a report folder holds exactly this run's files; leftovers of a killed run are
 * restored or cleaned by the next one. The kill test with real processes is in kill.test.ts.
 */
import { chmodSync, existsSync, mkdirSync, readFileSync, readdirSync, statSync, symlinkSync, writeFileSync } from 'node:fs';
import { spawnSync } from 'node:child_process';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { TidemarkError } from '../../src/errors.js';
import { REPORT_MARKER, recoverFolder, replaceFolder, writeFileAtomic } from '../../src/output/atomic.js';
import { corpusDir } from '../hostile/harness.js';
import { tidemarkErrorOf } from '../core/helpers.js';

let t: ReturnType<typeof corpusDir>;
beforeEach(() => {
  t = corpusDir();
});
afterEach(() => t.done());

/** An error as the file system raises it (Node's ErrnoException shape). */
function fsError(code: string): Error {
  return Object.assign(new Error(`${code}: simulated`), { code });
}

function folder(dir: string): Record<string, string> {
  return Object.fromEntries(readdirSync(dir).sort().map((f) => [f, readFileSync(join(dir, f), 'utf8')]));
}

/** A process id that is not running: a child that has already exited. */
function deadPid(): number {
  return spawnSync(process.execPath, ['-e', '0']).pid!;
}

describe('writeFileAtomic(file, data)', () => {
  it('writes a new file, creating its folder, and leaves no temporary file', () => {
    const f = join(t.dir, 'sub', 'states.csv');
    writeFileAtomic(f, 'user_id,period,state\n');
    expect(readFileSync(f, 'utf8')).toBe('user_id,period,state\n');
    expect(readdirSync(join(t.dir, 'sub'))).toEqual(['states.csv']);
  });

  it('replaces an existing file whole and keeps its permissions', () => {
    const f = t.file('flows.json', 'old');
    chmodSync(f, 0o640);
    writeFileAtomic(f, 'new');
    expect(readFileSync(f, 'utf8')).toBe('new');
    expect(statSync(f).mode & 0o777).toBe(0o640);
    expect(readdirSync(t.dir)).toEqual(['flows.json']);
  });

  it('on a full disk: says the disk is full, keeps the old file, removes the temporary file', () => {
    const f = t.file('flows.json', 'old');
    const e = tidemarkErrorOf(() => writeFileAtomic(f, 'new', { step: () => { throw fsError('ENOSPC'); } }));
    expect(e.code).toBe('FILE_UNWRITABLE');
    expect(e.oneLine()).toMatch(/the disk is full/);
    expect(e.where.file).toBe(f);
    expect(readFileSync(f, 'utf8')).toBe('old');
    expect(readdirSync(t.dir)).toEqual(['flows.json']);
  });

  it('refuses a folder as the output file', () => {
    mkdirSync(join(t.dir, 'out'));
    expect(tidemarkErrorOf(() => writeFileAtomic(join(t.dir, 'out'), 'x')).oneLine()).toMatch(/it is a folder/);
  });

  it('writes through a symbolic link to its target and keeps the link', () => {
    const real = t.file('real.csv', 'old');
    symlinkSync(real, join(t.dir, 'link.csv'));
    writeFileAtomic(join(t.dir, 'link.csv'), 'new');
    expect(readFileSync(real, 'utf8')).toBe('new');
    expect(readFileSync(join(t.dir, 'link.csv'), 'utf8')).toBe('new');
  });

  it('writes straight into a device such as /dev/null instead of renaming over it', () => {
    writeFileAtomic('/dev/null', 'x');
    expect(statSync('/dev/null').isCharacterDevice()).toBe(true);
  });

  it('removes the temporary files of dead runs, never those of a live one', () => {
    const f = join(t.dir, 'states.csv');
    const dead = `.states.csv.tidemark-${deadPid()}-0123abcd.tmp`;
    const live = `.states.csv.tidemark-1-0123abcd.tmp`; // pid 1 is always running
    t.file(dead, 'partial');
    t.file(live, 'partial');
    writeFileAtomic(f, 'x');
    expect(readdirSync(t.dir).sort()).toEqual([live, 'states.csv'].sort());
  });
});

describe('replaceFolder(dir, files)', () => {
  const A = new Map([['index.html', '<p>A</p>'], ['summary.md', '# A'], ['by-plan.csv', 'plan\nhobby\n']]);
  const B = new Map([['index.html', '<p>B</p>'], ['summary.md', '# B'], ['growth.csv', 'into\n']]);
  const withMarker = (m: Map<string, string>) => Object.keys(folderOf(m)).concat(REPORT_MARKER).sort();
  const folderOf = (m: Map<string, string>) => Object.fromEntries(m);

  it('writes a new folder with the files and the marker', () => {
    const dir = join(t.dir, 'weekly');
    expect(replaceFolder(dir, A)).toEqual([...A.keys()]);
    expect(Object.keys(folder(dir))).toEqual(withMarker(A));
    expect(folder(dir)['index.html']).toBe('<p>A</p>');
  });

  it('replaces an earlier report whole: no stale file of the earlier run is left, nothing beside it', () => {
    const dir = join(t.dir, 'weekly');
    replaceFolder(dir, A);
    replaceFolder(dir, B);
    const got = folder(dir);
    expect(Object.keys(got)).toEqual(withMarker(B));
    expect(got['index.html']).toBe('<p>B</p>');
    expect(got['by-plan.csv']).toBeUndefined();
    expect(readdirSync(t.dir)).toEqual(['weekly']);
  });

  it('on a full disk part-way: says the disk is full, the earlier report is whole, no temporary folder is left', () => {
    const dir = join(t.dir, 'weekly');
    replaceFolder(dir, A);
    const before = folder(dir);
    let n = 0;
    const e = tidemarkErrorOf(() => replaceFolder(dir, B, { step: () => { if (++n === 2) throw fsError('ENOSPC'); } }));
    expect(e.code).toBe('FILE_UNWRITABLE');
    expect(e.oneLine()).toMatch(/the disk is full/);
    expect(e.oneLine()).toMatch(/previous report is left as it was/);
    expect(folder(dir)).toEqual(before);
    expect(readdirSync(t.dir)).toEqual(['weekly']);
  });

  it('other write failures name what happened (no permission, read-only, quota)', () => {
    const dir = join(t.dir, 'weekly');
    for (const [code, text] of [['EACCES', /no permission/], ['EROFS', /read-only/], ['EDQUOT', /quota/], ['EIO', /cannot write the report folder \(EIO\)/]] as const) {
      const e = tidemarkErrorOf(() => replaceFolder(dir, A, { step: () => { throw fsError(code); } }));
      expect(e.oneLine(), code).toMatch(text);
    }
    expect(readdirSync(t.dir)).toEqual([]);
  });

  it('refuses a folder holding other files, and leaves it as it was', () => {
    const dir = join(t.dir, 'data');
    mkdirSync(dir);
    writeFileSync(join(dir, 'events.csv'), 'user_id,timestamp\n');
    const e = tidemarkErrorOf(() => replaceFolder(dir, A));
    expect(e.oneLine()).toMatch(/not part of a tidemark report/);
    expect(folder(dir)).toEqual({ 'events.csv': 'user_id,timestamp\n' });
  });

  it('accepts an empty folder, and a report written before the marker existed', () => {
    const empty = join(t.dir, 'empty');
    mkdirSync(empty);
    replaceFolder(empty, A);
    expect(Object.keys(folder(empty))).toEqual(withMarker(A));
    const legacy = join(t.dir, 'legacy');
    mkdirSync(legacy);
    for (const [name, text] of B) writeFileSync(join(legacy, name), text);
    replaceFolder(legacy, A);
    expect(Object.keys(folder(legacy))).toEqual(withMarker(A));
  });

  it('refuses a file where the folder should be', () => {
    const f = t.file('weekly', 'x');
    expect(tidemarkErrorOf(() => replaceFolder(f, A)).oneLine()).toMatch(/is a file, not a folder/);
    expect(readFileSync(f, 'utf8')).toBe('x');
  });

  it('refuses names that are not plain file names', () => {
    for (const bad of ['../escape.csv', 'a/b.csv', '..', REPORT_MARKER]) {
      expect(() => replaceFolder(join(t.dir, 'weekly'), new Map([[bad, 'x']])), bad).toThrow(TidemarkError);
    }
    expect(existsSync(join(t.dir, 'escape.csv'))).toBe(false);
  });
});

describe('recoverFolder(dir): what the next run does after a kill', () => {
  it('between the two renames (no folder, the old one set aside): puts the old report back and removes the new one', () => {
    const pid = deadPid();
    const old = join(t.dir, `.weekly.tidemark-old-${pid}-0123abcd`);
    const fresh = join(t.dir, `.weekly.tidemark-new-${pid}-0123abcd`);
    mkdirSync(old);
    mkdirSync(fresh);
    writeFileSync(join(old, 'index.html'), 'old');
    writeFileSync(join(fresh, 'index.html'), 'new');
    recoverFolder(join(t.dir, 'weekly'));
    expect(readdirSync(t.dir)).toEqual(['weekly']);
    expect(folder(join(t.dir, 'weekly'))).toEqual({ 'index.html': 'old' });
  });

  it('after the swap (the new folder in place, the old one not yet deleted): deletes the old one', () => {
    const pid = deadPid();
    mkdirSync(join(t.dir, 'weekly'));
    writeFileSync(join(t.dir, 'weekly', 'index.html'), 'new');
    mkdirSync(join(t.dir, `.weekly.tidemark-old-${pid}-0123abcd`));
    recoverFolder(join(t.dir, 'weekly'));
    expect(readdirSync(t.dir)).toEqual(['weekly']);
    expect(folder(join(t.dir, 'weekly'))).toEqual({ 'index.html': 'new' });
  });

  it('leaves the folders of a run that is still alive, and anything not named like a leftover', () => {
    mkdirSync(join(t.dir, '.weekly.tidemark-new-1-0123abcd'));
    mkdirSync(join(t.dir, '.weekly.tidemark-notes'));
    recoverFolder(join(t.dir, 'weekly'));
    expect(readdirSync(t.dir).sort()).toEqual(['.weekly.tidemark-new-1-0123abcd', '.weekly.tidemark-notes']);
  });
});
