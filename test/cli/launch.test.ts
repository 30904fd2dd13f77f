/**
 * The built command, run as a user runs it: a copy of the checkout (package.json, tsconfig.json,
 * src, rules; node_modules linked) in a temp folder, built with the package's own `npm run build`,
 * then `node src/cli/bin.js …` in a child process. The launcher runs the build when it is current,
 * falls back to the TypeScript sources with a note when a source is newer, and says how to build when
 * there is neither a build nor tsx. The copy keeps the worktree's own .build/ out of the test.
 */
import { spawnSync } from 'node:child_process';
import { cpSync, mkdirSync, mkdtempSync, readFileSync, rmSync, symlinkSync, utimesSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CATALOG } from '../../src/cli/catalog.js';
import { bufferIo } from '../../src/cli/io.js';
import { main } from '../../src/cli/main.js';

const ROOT = fileURLToPath(new URL('../..', import.meta.url));
const VERSION = (JSON.parse(readFileSync(join(ROOT, 'package.json'), 'utf8')) as { version: string }).version;
// members of the makerspace booking app over three weeks (invented for this check)
const BOOKINGS = [
  'user_id,timestamp,event',
  'm1,2026-03-02T09:00:00Z,booking_made',
  'm1,2026-03-10T09:00:00Z,booking_made',
  'm2,2026-03-03T18:00:00Z,booking_made',
  'm2,2026-03-17T18:00:00Z,tool_reserved',
  'm3,2026-03-11T12:00:00Z,booking_made',
  'm3,2026-03-18T12:00:00Z,booking_made',
].join('\n');

let dir: string;

/** `node src/cli/bin.js …` in the copy `root`. */
function tidemark(root: string, ...argv: string[]) {
  const r = spawnSync(process.execPath, [join(root, 'src/cli/bin.js'), ...argv], { cwd: root, encoding: 'utf8' });
  return { code: r.status, out: r.stdout, err: r.stderr };
}

// a bound on a hang, not a timing check: `npm run build` takes about 3 s here, longer on a busy machine
beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'tidemark-build-'));
  for (const f of ['package.json', 'tsconfig.json']) cpSync(join(ROOT, f), join(dir, f));
  for (const d of ['src', 'rules']) cpSync(join(ROOT, d), join(dir, d), { recursive: true });
  symlinkSync(join(ROOT, 'node_modules'), join(dir, 'node_modules'), 'dir');
  const build = spawnSync('npm', ['run', 'build'], { cwd: dir, encoding: 'utf8' });
  expect(build.status, build.stdout + build.stderr).toBe(0);
}, 120_000);
afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('the built command', () => {
  it('answers --version from the build, with nothing on stderr', () => {
    expect(tidemark(dir, '--version')).toEqual({ code: 0, out: `${VERSION}\n`, err: '' });
  });

  it('lists every command in --help and suggests a misspelt one (exit 2)', () => {
    const h = tidemark(dir, '--help');
    expect([h.code, h.err]).toEqual([0, '']);
    for (const c of CATALOG) expect(h.out).toContain(c.term);
    expect(tidemark(dir, 'flws')).toEqual({ code: 2, out: '', err: "tidemark: unknown command 'flws' (did you mean flows?)\n" });
  });

  it('gives the same flows JSON as the sources run in-process, with the default rules found from the build', async () => {
    const file = join(dir, 'bookings.csv');
    writeFileSync(file, `${BOOKINGS}\n`);
    const built = tidemark(dir, 'flows', '--events', file, '--format', 'json');
    const io = bufferIo();
    const code = await main(['flows', '--events', file, '--format', 'json'], io);
    expect([built.code, built.err]).toEqual([0, io.err]);
    expect(code).toBe(0);
    expect(built.out).toBe(io.out);
    expect(JSON.parse(built.out).users).toBe(3);
  }, 60_000); // a bound on a hang: loading the engine twice (child and in-process) takes seconds when busy
});

describe('the launcher without a current build', () => {
  it('runs the sources through tsx, with a one-line note, when a source is newer than its build', () => {
    const later = new Date(Date.now() + 60_000);
    utimesSync(join(dir, 'src/cli/format.ts'), later, later);
    const r = tidemark(dir, '--version');
    expect(r.code).toBe(0);
    expect(r.out).toBe(`${VERSION}\n`);
    expect(r.err).toBe('tidemark: note: src/cli/format.ts is newer than its build; running the TypeScript sources (slow start). `npm run build` makes it fast\n');
  }, 60_000); // a bound on a hang: tsx compiles on the fly

  it('says how to build, exit 1, when there is no build and no tsx', () => {
    const bare = mkdtempSync(join(tmpdir(), 'tidemark-bare-'));
    try {
      mkdirSync(join(bare, 'src/cli'), { recursive: true });
      cpSync(join(ROOT, 'src/cli/bin.js'), join(bare, 'src/cli/bin.js'));
      const r = tidemark(bare, '--version');
      expect([r.code, r.out]).toEqual([1, '']);
      expect(r.err).toBe(`tidemark: there is no build in .build/; run \`npm run build\` in ${bare}/\n`);
    } finally {
      rmSync(bare, { recursive: true, force: true });
    }
  });
});
