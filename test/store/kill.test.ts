/**
 * Atomic updates and one update at a time, with real processes. A child runs one update of a store
 * (test/store/killUpdater.ts) and is killed with SIGKILL at a seeded random point: at a named step
 * of the update (each step at least once), or a seeded random time after it starts. Afterwards the
 * store is exactly as before the update or exactly as after it (every table, every row: the
 * fingerprint), never between; and the next update works and leaves it exactly as after. Three kinds
 * of update: extending by a new week, late events (a rebuild), and the first update of a new store.
 * A second update while one runs is refused with the running one's pid, and so is a read.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { cpSync, existsSync, mkdirSync, readdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { TidemarkError } from '../../src/errors.js';
import { loadRulesFile } from '../../src/rules/load.js';
import { readStore } from '../../src/store/read.js';
import { updateStore, type UpdateStep } from '../../src/store/update.js';
import { LOCK_FILE } from '../../src/store/lock.js';
import { mulberry32 } from '../stats/prng.js';
import { tempDir } from '../core/helpers.js';
import { fingerprint } from './fingerprint.js';
import { batchesByPeriod, bookings, bookingsCsv } from './logs.js';

const ROOT = fileURLToPath(new URL('../..', import.meta.url));
const CHILD = fileURLToPath(new URL('./killUpdater.ts', import.meta.url));
const NOW = new Date('2026-12-01T06:00:00Z');
const STEPS: UpdateStep[] = ['locked', 'opened', 'hashed', 'read', 'classified', 'users-written', 'before-commit', 'committed', 'closed'];

interface Child {
  proc: ChildProcess;
  out: string;
  exited: Promise<{ code: number | null; signal: NodeJS.Signals | null; err: string }>;
  /** Resolves when the child has written `text`. */
  saw(text: string): Promise<void>;
}

function child(dir: string, files: string[], rules: string, killAt = '-', holdAt = '-'): Child {
  const proc = spawn(process.execPath, ['--import', 'tsx', CHILD, dir, JSON.stringify(files), rules, killAt, holdAt], { cwd: ROOT, stdio: ['ignore', 'pipe', 'pipe'] });
  const c: Child = { proc, out: '', exited: undefined as never, saw: undefined as never };
  let err = '';
  const waiters: { text: string; resolve: () => void }[] = [];
  proc.stdout!.on('data', (d: Buffer) => {
    c.out += d.toString();
    for (const w of waiters.filter((x) => c.out.includes(x.text))) w.resolve();
  });
  proc.stderr!.on('data', (d: Buffer) => (err += d.toString()));
  c.exited = new Promise((resolve) => proc.on('exit', (code, signal) => resolve({ code, signal, err })));
  c.saw = (text) => new Promise((resolve) => (c.out.includes(text) ? resolve() : waiters.push({ text, resolve })));
  return c;
}

const t = tempDir();
afterAll(() => t.done());
let rulesFile: string;
let weeks: string[];
/** Stores before each kind of update, and the fingerprint after it. */
const kinds: Record<string, { before: string; files: string[]; after: string; rules: string }> = {};

beforeAll(async () => {
  rulesFile = t.file('rules.yaml', 'grain: week\nlapseLimit: 2\n');
  const rules = loadRulesFile(rulesFile);
  weeks = batchesByPeriod(bookings(91, 120, 42), 'week').map((b, i) => t.file(`w${i}.csv`, bookingsCsv(b)));
  const base = join(t.dir, 'base');
  await updateStore({ dir: base, files: weeks.slice(0, 4), rules, now: NOW });
  const late = t.file('late.csv', 'user_id,timestamp,event,plan\nm2,2026-03-10T10:00:00Z,booking_made,pro\nnew1,2026-03-17T10:00:00Z,checked_in,hobby\n');
  const plan: [string, string | undefined, string[], string][] = [['extend', base, [weeks[4]], '-'], ['rebuild', base, [late], '-'], ['create', undefined, weeks.slice(0, 2), rulesFile]];
  for (const [kind, from, files, r] of plan) {
    const before = join(t.dir, `${kind}-before`);
    mkdirSync(before);
    if (from) cpSync(from, before, { recursive: true });
    const ref = join(t.dir, `${kind}-after`);
    cpSync(before, ref, { recursive: true });
    await updateStore({ dir: ref, files, rules: r === '-' ? undefined : rules, now: NOW });
    kinds[kind] = { before, files, after: await fingerprint(ref), rules: r };
  }
}, 120_000);

async function state(dir: string): Promise<string | 'none'> {
  return existsSync(join(dir, 'store.duckdb')) ? fingerprint(dir).catch(() => 'none') : 'none';
}

describe('kill an update at random points (SIGKILL, seeded)', () => {
  const draw = mulberry32(20261203);
  const cases = [
    ...STEPS.map((s) => ({ kind: 'extend', step: s, ms: undefined as number | undefined })),
    ...Array.from({ length: 6 }, () => ({ kind: 'extend', step: '-', ms: Math.round(draw() * 2500) })),
    ...(['read', 'classified', 'before-commit', 'committed'] as const).map((s) => ({ kind: 'rebuild', step: s as string, ms: undefined as number | undefined })),
    ...Array.from({ length: 3 }, () => ({ kind: 'rebuild', step: '-', ms: Math.round(draw() * 2500) })),
    ...(['opened', 'read', 'before-commit', 'committed'] as const).map((s) => ({ kind: 'create', step: s as string, ms: undefined as number | undefined })),
    ...Array.from({ length: 2 }, () => ({ kind: 'create', step: '-', ms: Math.round(draw() * 2500) })),
  ];

  // a bound on a hang (each case spawns a process that starts in one to a few seconds), not a timing check
  it(`leaves the store before or after, and the next update works (${cases.length} kills)`, async () => {
    const seen = { before: 0, after: 0 };
    for (const [i, c] of cases.entries()) {
      const k = kinds[c.kind];
      const dir = join(t.dir, `run-${i}`);
      cpSync(k.before, dir, { recursive: true });
      const before = await state(dir);
      const label = `${c.kind}, ${c.ms === undefined ? `killed at ${c.step}` : `killed ${c.ms} ms after start`}`;
      const ch = child(dir, k.files, k.rules, c.step);
      if (c.ms !== undefined) {
        await ch.saw('ready');
        await new Promise((r) => setTimeout(r, c.ms));
        ch.proc.kill('SIGKILL');
      }
      const exit = await ch.exited;
      if (c.ms === undefined) expect(exit.signal, `${label}: ${exit.err}`).toBe('SIGKILL');
      const now = await state(dir);
      expect([before, k.after], label).toContain(now);
      if (c.ms === undefined) expect(now, label).toBe(STEPS.indexOf(c.step as UpdateStep) >= STEPS.indexOf('committed') ? k.after : before);
      seen[now === k.after ? 'after' : 'before']++;
      // the next update clears the dead process's lock, and ends exactly as after
      await updateStore({ dir, files: k.files, rules: k.rules === '-' ? undefined : loadRulesFile(k.rules), now: NOW });
      expect(await state(dir), label).toBe(k.after);
      expect(readdirSync(dir), label).not.toContain(LOCK_FILE);
    }
    expect(seen.before).toBeGreaterThan(0);
    expect(seen.after).toBeGreaterThan(0);
  }, 900_000);
});

describe('one update at a time', () => {
  it('a second update, and a read, while one runs are refused naming it; once it is killed, its lock is cleared', async () => {
    const dir = join(t.dir, 'busy');
    cpSync(kinds.extend.before, dir, { recursive: true });
    const ch = child(dir, kinds.extend.files, '-', '-', 'read');
    await ch.saw('holding');
    const pid = ch.proc.pid as number;
    const second = await updateStore({ dir, files: [weeks[5]] }).then(() => undefined, (e: unknown) => e as TidemarkError);
    expect(second?.code).toBe('STORE_BUSY');
    expect(second?.message).toBe(`another update (pid ${pid}, started ${NOW.toISOString()}) is running on this store`);
    const read = await readStore(dir).then(() => undefined, (e: unknown) => e as TidemarkError);
    expect(read?.code).toBe('STORE_BUSY');
    expect(read?.message).toMatch(new RegExp(`in use by another process \\(pid ${pid}\\)`));
    ch.proc.kill('SIGKILL');
    await ch.exited;
    const r = await updateStore({ dir, files: kinds.extend.files, now: NOW });
    expect(r.mode).toBe('extend');
    expect(await fingerprint(dir)).toBe(kinds.extend.after);
  }, 120_000);

  it('a lock file whose process is gone is stale; an unreadable one only when it is old', async () => {
    const dir = join(t.dir, 'stale');
    cpSync(kinds.extend.before, dir, { recursive: true });
    const gone = spawn(process.execPath, ['-e', '0']);
    const pid = await new Promise<number>((resolve) => gone.on('exit', () => resolve(gone.pid as number)));
    writeFileSync(join(dir, LOCK_FILE), JSON.stringify({ pid, startedAt: '2026-11-30T06:00:00.000Z' }));
    expect((await updateStore({ dir, files: kinds.extend.files, now: NOW })).mode).toBe('extend');
    writeFileSync(join(dir, LOCK_FILE), '{"pid":');
    const e = await updateStore({ dir, files: [weeks[5]] }).then(() => undefined, (x: unknown) => x as TidemarkError);
    expect(e?.code).toBe('STORE_BUSY');
  }, 60_000);
});
