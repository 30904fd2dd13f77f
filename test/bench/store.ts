/**
 * Benchmark of the store (src/store): a seeded synthetic log (invented data) cut into weekly files,
 * applied one by one with `updateStore`, against one run of the memory engine over every file. The
 * point is the shape: an update's time should stay flat as the weeks pile up (it grows with the new
 * events and the users), while a full run grows with the history. Run: `npm run bench:store`, or
 * `npm run bench:store -- --users 100000 --weeks 52 --events-per-week 40000`.
 */
import { mkdtempSync, rmSync, statSync, writeFileSync, readdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { performance } from 'node:perf_hooks';
import { createEngine } from '../../src/engines/index.js';
import { filesSource } from '../../src/engines/types.js';
import { mulberry32 } from '../../src/numerics/random.js';
import { parseRules } from '../../src/rules/load.js';
import { updateStore } from '../../src/store/update.js';
import { readStore } from '../../src/store/read.js';

const arg = (name: string, dflt: number) => {
  const i = process.argv.indexOf(name);
  return i >= 0 ? Number(process.argv[i + 1]) : dflt;
};
const USERS = arg('--users', 20_000);
const WEEKS = arg('--weeks', 52);
const PER_WEEK = arg('--events-per-week', 10_000);

let peak = 0;
const sampler = setInterval(() => (peak = Math.max(peak, process.memoryUsage().rss)), 50);
const s = (ms: number) => `${(ms / 1000).toFixed(2)} s`;

const dir = mkdtempSync(join(tmpdir(), 'tidemark-bench-store-'));
try {
  // members arrive over the year; each week, a member who arrived is active with a chance that fades
  const rng = mulberry32(11);
  const start = Date.UTC(2026, 0, 5);
  const names = ['booking_made', 'checked_in', 'tool_reserved', 'class_enrolled'];
  const files: string[] = [];
  for (let w = 0; w < WEEKS; w++) {
    const rows = ['user_id,timestamp,event,plan'];
    const arrived = Math.max(1, Math.round(USERS * (w + 1) / WEEKS));
    for (let i = 0; i < PER_WEEK; i++) {
      const u = Math.floor(arrived * (1 - Math.sqrt(rng()))); // newer members more often
      rows.push(`u${u},${new Date(start + w * 604_800_000 + Math.floor(rng() * 604_800_000)).toISOString()},${names[u % 4]},${u % 3 === 0 ? 'pro' : 'hobby'}`);
    }
    const f = join(dir, `week-${String(w + 1).padStart(2, '0')}.csv`);
    writeFileSync(f, `${rows.join('\n')}\n`);
    files.push(f);
  }
  const rules = parseRules('grain: week\nlapseLimit: 2\n');
  console.log(`store bench: ${WEEKS} weekly files of ${PER_WEEK.toLocaleString('en-US')} events, up to ${USERS.toLocaleString('en-US')} members (${(WEEKS * PER_WEEK).toLocaleString('en-US')} events)`);

  const store = join(dir, 'store');
  const times: number[] = [];
  const stepTimes: Record<string, number[]> = {};
  for (let w = 0; w < WEEKS; w++) {
    const t = performance.now();
    let last = t;
    const onStep = (step: string) => {
      const now = performance.now();
      (stepTimes[step] ??= []).push(now - last);
      last = now;
    };
    const r = await updateStore({ dir: store, files: [files[w]], rules: w === 0 ? rules : undefined, onStep });
    times.push(performance.now() - t);
    if (r.mode !== 'extend') throw new Error(`week ${w + 1}: ${r.mode}`);
  }
  const mean = (xs: number[]) => xs.reduce((a, b) => a + b, 0) / xs.length;
  const k = Math.min(8, Math.floor(WEEKS / 2));
  console.log(`updates, one a week: ${s(times.reduce((a, b) => a + b, 0))} in all; the first ${k}: ${s(mean(times.slice(0, k)))} each, the last ${k}: ${s(mean(times.slice(-k)))} each`);
  const t0 = performance.now();
  const full = await createEngine('memory').run(filesSource(files), rules);
  const tFull = performance.now() - t0;
  console.log(`one full run over all ${WEEKS} files (memory engine): ${s(tFull)}`);
  console.log(`the last week: update ${s(times[WEEKS - 1])} against a full run ${s(tFull)} (×${(tFull / times[WEEKS - 1]).toFixed(1)})`);
  const t1 = performance.now();
  const read = await readStore(store);
  console.log(`reading the store's waist for an analysis: ${s(performance.now() - t1)}`);
  if (JSON.stringify(read.waist) !== JSON.stringify(full.waist)) throw new Error('the store differs from the full run');
  const size = readdirSync(store).reduce((a, f) => a + statSync(join(store, f)).size, 0);
  const input = files.reduce((a, f) => a + statSync(f).size, 0);
  console.log(`store on disk: ${Math.round(size / 1e6)} MB for ${Math.round(input / 1e6)} MB of CSV; ${read.waist.manifest.users.toLocaleString('en-US')} users; peak RSS ${Math.round(peak / 1e6)} MB`);
  console.log(`per update (ms): ${times.map((x) => Math.round(x)).join(' ')}`);
  if (process.argv.includes('--steps')) for (const [step, xs] of Object.entries(stepTimes)) console.log(`  ${step.padEnd(14)} ${xs.map((x) => Math.round(x)).join(' ')}`);
} finally {
  clearInterval(sampler);
  rmSync(dir, { recursive: true, force: true });
}
