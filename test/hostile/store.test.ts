/**
 * The hostile-input corpus for the store (tidemark update, --store): folders that are no store, a
 * corrupt database, a store from a newer tidemark, files that cannot be hashed, bad rows, broken
 * options, values built to break CSV, JSON or a terminal. Each ends in a result or one clean line
 * with exit 1 (bad data) or 2 (bad usage); nothing half made is left behind.
 */
import { execFileSync } from 'node:child_process';
import { existsSync, mkdirSync, readdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { createEngine } from '../../src/engines/index.js';
import { openDb } from '../../src/store/db.js';
import { storeEvents } from '../../src/store/read.js';
import { STORE_FILE } from '../../src/store/schema.js';
import { corpusDir, expectClean, expectRefusal, run } from './harness.js';

const c = corpusDir();
afterAll(() => c.done());
const GOOD = c.file('good.csv', 'user_id,timestamp,event,plan\nm1,2026-03-02T10:00:00Z,booking_made,pro\nm2,2026-03-03T10:00:00Z,booking_made,hobby\nm1,2026-03-10T10:00:00Z,booking_made,pro\n');
let k = 0;
const dirOf = (name: string) => join(c.dir, `${name}-${k++}`);

describe('folders that are no store', () => {
  it('a file given as the store', async () => {
    const f = c.file('not-a-folder.txt', 'x');
    expect(expectRefusal(await run('update', '--store', f, '--events', GOOD), 1)).toMatch(/a store is a folder, and this is a file/);
    expect(expectRefusal(await run('flows', '--store', f), 1)).toMatch(/not a store/);
  });
  it('a folder holding other files', async () => {
    const d = dirOf('other');
    mkdirSync(d);
    writeFileSync(join(d, 'notes.txt'), 'x');
    expect(expectRefusal(await run('update', '--store', d, '--events', GOOD), 1)).toMatch(/the folder is not a store and not empty/);
    expect(readdirSync(d)).toEqual(['notes.txt']);
  });
  it('a database that is not DuckDB', async () => {
    const d = dirOf('corrupt');
    mkdirSync(d);
    writeFileSync(join(d, STORE_FILE), Buffer.from(Array.from({ length: 8192 }, (_, i) => (i * 131) % 256)));
    expectRefusal(await run('flows', '--store', d), 1);
    expectRefusal(await run('update', '--store', d, '--events', GOOD), 1);
  });
  it('a store from a newer tidemark', async () => {
    const d = dirOf('newer');
    expect((await run('update', '--store', d, '--events', GOOD, '--quiet')).code).toBe(0);
    const db = await openDb(join(d, STORE_FILE), 'write');
    await db.run("UPDATE store_info SET value = '9' WHERE key = 'version'");
    db.close();
    expect(expectRefusal(await run('flows', '--store', d), 1)).toMatch(/format version 9, from a newer tidemark.*Upgrade tidemark/);
    expect(expectRefusal(await run('update', '--store', d, '--events', GOOD), 1)).toMatch(/from a newer tidemark/);
  });
});

describe('event files update cannot use', () => {
  it('a missing file: nothing is made', async () => {
    const d = dirOf('missing');
    expect(expectRefusal(await run('update', '--store', d, '--events', join(c.dir, 'nope.csv')), 1)).toMatch(/nope\.csv: no such file/);
    expect(existsSync(d)).toBe(false);
  });
  it('a pipe: it would be read twice', async () => {
    const fifo = join(c.dir, 'events.fifo');
    execFileSync('mkfifo', [fifo]);
    expect(expectRefusal(await run('update', '--store', dirOf('fifo'), '--events', fifo, '--input-format', 'csv'), 1)).toMatch(/needs a regular file, not a pipe/);
  });
  it('a bad row in the first file: the new store is removed again, whole', async () => {
    const d = dirOf('badrow');
    const bad = c.file('bad.csv', 'user_id,timestamp,event\nm1,2026-03-02T10:00:00Z,x\nm2,someday,x\n');
    expect(expectRefusal(await run('update', '--store', d, '--events', bad), 1)).toMatch(/bad\.csv:3, column timestamp: bad timestamp: 'someday'/);
    expect(existsSync(d)).toBe(false);
  });
  it('a value that is no text (a lone surrogate from a broken \\u escape)', async () => {
    const f = c.file('surrogate.ndjson', '{"user_id":"m1","timestamp":"2026-03-02T10:00:00Z","event":"x","plan":"\\ud800"}\n');
    expect(expectRefusal(await run('update', '--store', dirOf('sur'), '--events', f), 1)).toMatch(/lone UTF-16 surrogate/);
  });
  it('a file with no row to use, as the first', async () => {
    const f = c.file('header-only.csv', 'user_id,timestamp,event\n');
    expect(expectRefusal(await run('update', '--store', dirOf('empty'), '--events', f), 1)).toMatch(/nothing to analyse: it holds no event rows/);
  });
});

describe('options', () => {
  it.each([
    [['--delimiter', ';;', '--events', join(c.dir, 'never-read.csv')], '--delimiter'],
    [['--reclassify'], '--reclassify'],
    [[], '--events'],
    [['--events', GOOD, '--format', 'yaml'], '--format'],
  ])('update %j is refused at %s, before anything is read or made', async (args, flag) => {
    const d = dirOf('opt');
    const r = await run('update', '--store', d, ...(args as string[]));
    const line = expectRefusal(r, 2);
    expect(line).toContain(flag);
    expect(existsSync(d)).toBe(false);
  });
  it('no --store', async () => {
    expect(expectRefusal(await run('update', '--events', GOOD), 2)).toMatch(/--store/);
  });
  it('a rules file that does not parse is named', async () => {
    const rules = c.file('broken.yaml', 'grain: [week\n');
    expect(expectRefusal(await run('update', '--store', dirOf('rules'), '--rules', rules, '--events', GOOD), 1)).toMatch(/broken\.yaml/);
  });
});

describe('values built to break CSV, JSON and terminals', () => {
  const nasty = [
    'user_id,timestamp,event,plan,note',
    '"a,b",2026-03-02T10:00:00Z,booking_made,"pro ""plus""","=HYPERLINK(""x"")"',
    '"line\nbreak",2026-03-02T11:00:00Z,booking_made,hobby,"\u202etxt"',
    ' padded ,2026-03-03T10:00:00Z,"book""ing",studio,"[""json"", 1]"',
    '\u{1F6E0}\u{FE0F} maker,2026-03-09T10:00:00Z,booking_made,pro,\u001b[31mred',
    '"a,b",2026-03-10T10:00:00Z,booking_made,"pro ""plus""",',
    '"line\nbreak",2026-03-16T10:00:00Z,booking_made,hobby,\\N',
  ].join('\n') + '\n';
  it('survive the store: --store gives what --events gives, and the stored events read back the same', async () => {
    const f = c.file('nasty.csv', nasty);
    const d = dirOf('nasty');
    const u = await run('update', '--store', d, '--events', f);
    expectClean(u);
    expect(u.code, u.err).toBe(0);
    const a = await run('flows', '--events', f, '--format', 'json');
    const b = await run('flows', '--store', d, '--format', 'json');
    expect(b.out).toBe(a.out);
    const { source, rules, cleanup } = await storeEvents(d);
    try {
      const e = createEngine('memory');
      const x = await e.run(source, rules);
      const y = await e.run({ kind: 'files', files: [f] }, rules);
      expect(JSON.stringify(x.waist.tables)).toBe(JSON.stringify(y.waist.tables));
      expect(x.waist.manifest.events).toEqual(y.waist.manifest.events);
      expect(x.waist.manifest.attributes).toEqual(y.waist.manifest.attributes);
    } finally {
      cleanup();
    }
  });
});
