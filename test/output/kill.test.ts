/**
 * Kill test: a child process replaces a folder holding report A with report B and is killed with
 * SIGKILL at a seeded random point: after a chosen step of the write (every file, the set-aside, the
 * swap, the clean-up; the two steps around the swap always included), or at a random moment after it
 * starts. Afterwards the folder is exactly A or exactly B (file list and contents), or, killed between
 * the two renames, missing with A whole beside it; after the next run's recovery it is exactly A or B
 * and nothing else is left beside it.
 *
 * The child runs the write phase only (test/output/killWriter.ts through tsx's loader), since starting
 * the whole CLI takes seconds.
 */
import { spawn } from 'node:child_process';
import { mkdirSync, readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { REPORT_MARKER, recoverFolder, replaceFolder } from '../../src/output/atomic.js';
import { corpusDir } from '../hostile/harness.js';
import { reportVersion, stepsOf } from './reportVersions.js';
import { mulberry32 } from '../stats/prng.js';

const ROOT = fileURLToPath(new URL('../..', import.meta.url));
const WRITER = fileURLToPath(new URL('./killWriter.ts', import.meta.url));

function folder(dir: string): Record<string, string> {
  return Object.fromEntries(readdirSync(dir).sort().map((f) => [f, readFileSync(join(dir, f), 'utf8')]));
}

function expected(v: 'A' | 'B'): Record<string, string> {
  const m = reportVersion(v);
  const marker = readFileSync(join(t.dir, 'marker-probe', REPORT_MARKER), 'utf8');
  return Object.fromEntries([...m, [REPORT_MARKER, marker] as [string, string]].sort(([a], [b]) => (a < b ? -1 : 1)));
}

interface Outcome {
  signal: NodeJS.Signals | null;
  code: number | null;
  stdout: string;
}

/** Run the writer; `killAt` a step number (0 none), or `afterMs` to kill it that long after it says "ready". */
function writer(dir: string, killAt: number, afterMs?: number): Promise<Outcome> {
  return new Promise((resolve, reject) => {
    const child = spawn(process.execPath, ['--import', 'tsx', WRITER, dir, 'B', String(killAt)], { cwd: ROOT, stdio: ['ignore', 'pipe', 'pipe'] });
    let stdout = '';
    let stderr = '';
    child.stdout.on('data', (d: Buffer) => {
      stdout += d.toString();
      if (afterMs !== undefined && stdout.startsWith('ready')) {
        setTimeout(() => child.kill('SIGKILL'), afterMs);
        afterMs = undefined;
      }
    });
    child.stderr.on('data', (d: Buffer) => (stderr += d.toString()));
    child.on('error', reject);
    child.on('exit', (code, signal) => (code !== null && code !== 0 ? reject(new Error(`writer failed: ${stderr}`)) : resolve({ code, signal, stdout })));
  });
}

let t: ReturnType<typeof corpusDir>;
beforeAll(() => {
  t = corpusDir();
  replaceFolder(join(t.dir, 'marker-probe'), new Map());
});
afterAll(() => t.done());

describe('kill the report writer at random points (SIGKILL, seeded)', () => {
  const n = stepsOf('B');
  const files = reportVersion('B').size;
  const draw = mulberry32(20261202);
  // the steps: 1..files (each file written), files+1 written, +2 old set aside, +3 new in place, +4 old removed
  const steps = [...new Set([files + 2, files + 3, ...Array.from({ length: 24 }, () => 1 + Math.floor(draw() * n))])];
  const delays = Array.from({ length: 8 }, () => Math.round(draw() * 30));
  const cases = [...steps.map((k) => ({ killAt: k, afterMs: undefined as number | undefined })), ...delays.map((ms) => ({ killAt: 0, afterMs: ms }))];

  // a bound on a hang (each case spawns a process that starts in about a second), not a timing check
  it(`leaves the old report or the new one, never a mix (${cases.length} kills)`, async () => {
    const A = expected('A');
    const B = expected('B');
    const runOne = async ({ killAt, afterMs }: (typeof cases)[number], i: number) => {
      const parent = join(t.dir, `run-${i}`);
      mkdirSync(parent);
      const dir = join(parent, 'weekly');
      replaceFolder(dir, reportVersion('A'));
      const r = await writer(dir, killAt, afterMs);
      const label = killAt ? `killed after step ${killAt} of ${n}` : `killed ${afterMs} ms after start`;
      const beside = readdirSync(parent).filter((f) => f !== 'weekly');
      // raw state: A, B, or (between the renames) no folder and A whole beside it
      let raw: 'A' | 'B' | 'aside';
      if (readdirSync(parent).includes('weekly')) {
        const got = folder(dir);
        raw = JSON.stringify(got) === JSON.stringify(A) ? 'A' : 'B';
        expect(got, label).toEqual(raw === 'A' ? A : B);
      } else {
        raw = 'aside';
        const old = beside.find((f) => f.startsWith('.weekly.tidemark-old-'));
        expect(old, label).toBeDefined();
        expect(folder(join(parent, old!)), label).toEqual(A);
      }
      if (killAt) {
        const want = killAt <= files + 1 ? 'A' : killAt === files + 2 ? 'aside' : 'B';
        expect(raw, label).toBe(want);
        expect(r.signal, label).toBe('SIGKILL');
      }
      // what the next run does first
      recoverFolder(dir);
      expect(readdirSync(parent), label).toEqual(['weekly']);
      const after = folder(dir);
      expect([JSON.stringify(A), JSON.stringify(B)], label).toContain(JSON.stringify(after));
      if (raw !== 'B') expect(after, label).toEqual(A);
      return raw;
    };
    const seen: string[] = [];
    for (let i = 0; i < cases.length; i += 2) seen.push(...(await Promise.all(cases.slice(i, i + 2).map((c, j) => runOne(c, i + j)))));
    // the kill points covered all three outcomes
    expect(new Set(seen)).toEqual(new Set(['A', 'B', 'aside']));
  }, 120_000);

  it('after a kill, the next write completes and holds exactly the new report', async () => {
    const parent = join(t.dir, 'next');
    mkdirSync(parent);
    const dir = join(parent, 'weekly');
    replaceFolder(dir, reportVersion('A'));
    await writer(dir, files + 2); // killed between the renames
    replaceFolder(dir, reportVersion('B')); // the next run: recovers, then replaces
    expect(readdirSync(parent)).toEqual(['weekly']);
    expect(folder(dir)).toEqual(expected('B'));
  }, 30_000);
});
