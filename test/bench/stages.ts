/**
 * Benchmark of the command's start-up (next to bare node) and of the in-memory engine: generates a
 * synthetic event log (seeded; invented data), then times each stage and reports peak memory. Run:
 * `npm run bench` (builds first; 1M events) or `npm run bench -- --events 10000000 --startup-runs 21`.
 */
import { createWriteStream, mkdtempSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { performance } from 'node:perf_hooks';
import { readEvents } from '../../src/ingest/read.js';
import { activePeriods } from '../../src/lifecycle/activity.js';
import { classify } from '../../src/lifecycle/classify.js';
import { compilePlan } from '../../src/lifecycle/plan.js';
import { aggregate } from '../../src/engines/memory/aggregate.js';
import { runOnLog } from '../../src/engines/memory/index.js';
import { summariseFlows } from '../../src/flows/summary.js';
import { mulberry32 } from '../../src/numerics/random.js';
import { parseRules } from '../../src/rules/load.js';
import { periodLabel } from '../../src/periods/calendar.js';
import { formatBytes } from '../../src/engines/memory/budget.js';
import { buildReport } from '../../src/report/build.js';
import { computeProjection } from '../../src/markov/run.js';
import { writeReport } from '../../src/report/write.js';
import { writeFileSync } from 'node:fs';
import { startupTimes } from './startup.js';
import { entrySpec } from '../../src/audience/entry.js';
import { audienceOf } from '../../src/audience/list.js';
import { diffRules } from '../../src/compare/run.js';
import { createEngine } from '../../src/engines/index.js';
import { filesSource } from '../../src/engines/types.js';

/**
 * Report time against the number of periods: 40 members over 20 weeks and one booking P weeks
 * earlier (the shape of a log with one stray timestamp), for P doubling. Each step of the report is at
 * most n log n in the periods, so the time should about double with P, not grow fourfold or more.
 */
async function reportScaling(dir: string): Promise<void> {
  const rules = parseRules('grain: week\nlapseLimit: 2\n');
  const end = Date.UTC(2026, 4, 18);
  const rng = mulberry32(3);
  const bulk = Array.from({ length: 200 }, (_, i) => `m${i % 40},${new Date(end - Math.floor(rng() * 20 * 604_800_000)).toISOString()},booking_made`);
  let before = 0;
  for (const P of [750, 1500, 3000, 6000]) {
    const file = join(dir, `stray-${P}.csv`);
    writeFileSync(file, ['user_id,timestamp,event', ...bulk, `m3,${new Date(end - P * 604_800_000).toISOString()},booking_made`].join('\n'));
    const log = await readEvents([file], { rules });
    const t = performance.now();
    const model = buildReport((await runOnLog(log, rules)).waist);
    await writeReport(model, join(dir, `report-${P}`), 'bench');
    const took = (performance.now() - t) / 1000;
    console.log(`report over ${P.toLocaleString('en-US').padStart(5)} weeks  ${took.toFixed(2)} s${before ? `  (×${(took / before).toFixed(1)} for ×2 periods)` : ''}`);
    before = took;
  }
}

const arg = (name: string, dflt: number) => {
  const i = process.argv.indexOf(name);
  return i >= 0 ? Number(process.argv[i + 1]) : dflt;
};
const N = arg('--events', 1_000_000);
const USERS = arg('--users', Math.max(1000, Math.round(N / 20)));
const WEEKS = arg('--weeks', 52);

startupTimes(arg('--startup-runs', 11));

let peak = 0;
const sampler = setInterval(() => (peak = Math.max(peak, process.memoryUsage().rss)), 50);
const mb = (b: number) => `${Math.round(b / 1e6)} MB`;

async function generate(file: string): Promise<void> {
  const rng = mulberry32(7);
  const out = createWriteStream(file);
  out.write('user_id,timestamp,event,plan\n');
  const start = Date.UTC(2025, 11, 1);
  const names = ['booking_made', 'checked_in', 'tool_reserved', 'class_enrolled'];
  let chunk: string[] = [];
  for (let i = 0; i < N; i++) {
    // users arrive over the year and fade: pick a user, then a week near their arrival
    const u = Math.floor(rng() * USERS);
    const arrival = Math.floor((u / USERS) * WEEKS);
    const w = Math.min(WEEKS - 1, arrival + Math.floor(-Math.log(rng()) * 6));
    const t = start + w * 604_800_000 + Math.floor(rng() * 604_800_000);
    chunk.push(`u${u},${new Date(t).toISOString()},${names[u % 4]},${u % 3 === 0 ? 'pro' : 'hobby'}`);
    if (chunk.length === 10_000) {
      if (!out.write(`${chunk.join('\n')}\n`)) await new Promise<void>((r) => out.once('drain', () => r()));
      chunk = [];
    }
  }
  out.write(chunk.length ? `${chunk.join('\n')}\n` : '');
  await new Promise<void>((r) => out.end(r));
}

const dir = mkdtempSync(join(tmpdir(), 'tidemark-bench-'));
try {
  const file = join(dir, 'events.csv');
  let t = performance.now();
  await generate(file);
  console.log(`generated ${N.toLocaleString('en-US')} events, ${USERS.toLocaleString('en-US')} users, ${WEEKS} weeks: ${mb(statSync(file).size)} CSV in ${((performance.now() - t) / 1000).toFixed(1)} s`);
  const rules = parseRules('grain: week\nlapseLimit: 2\n');
  const base = process.memoryUsage().rss;
  peak = base;
  const t0 = performance.now();
  const cpu0 = process.cpuUsage();
  const log = await readEvents([file], { rules });
  const cpuRead = process.cpuUsage(cpu0);
  const t1 = performance.now();
  const logRun = await runOnLog(log, rules);
  const { waist, classified, footprint } = logRun;
  const result = { waist: waist.tables };
  const t2 = performance.now();
  summariseFlows(result.waist);
  const t3 = performance.now();
  // stage split of the engine
  const plan = compilePlan(rules);
  const span = result.waist.periods.length;
  let minKey = Infinity;
  for (let i = 0; i < log.size; i++) if (log.period[i] < minKey) minKey = log.period[i];
  let s = performance.now();
  const act = activePeriods(log, 1, minKey, span);
  const tAct = performance.now() - s;
  s = performance.now();
  const c = classify(act, plan, log.users.length, 0);
  const tCls = performance.now() - s;
  s = performance.now();
  aggregate(c, { states: plan.states, activeCount: 3, arrivalState: plan.states[0], exitState: plan.states[plan.states.length - 1], labels: Array.from({ length: span }, (_, i) => periodLabel(minKey + i, log.scheme)), outStart: 0, warmup: 0, tenureBands: rules.tenureBands });
  const tAgg = performance.now() - s;
  clearInterval(sampler);
  const secs = (a: number, b: number) => `${((b - a) / 1000).toFixed(2)} s`;
  // CPU time beside wall time: on a shared machine the wall time also counts other processes' turns
  console.log(`read + parse CSV     ${secs(t0, t1)}  (${Math.round(N / ((t1 - t0) / 1000)).toLocaleString('en-US')} rows/s; CPU ${((cpuRead.user + cpuRead.system) / 1e6).toFixed(2)} s)`);
  console.log(`engine (total)       ${secs(t1, t2)}  = active periods ${(tAct / 1000).toFixed(2)} s, classify ${(tCls / 1000).toFixed(2)} s, arquero waist ${(tAgg / 1000).toFixed(2)} s`);
  console.log(`flow summaries       ${secs(t2, t3)}`);
  console.log(`user-periods         ${classified.size.toLocaleString('en-US')}`);
  console.log(`peak RSS             ${mb(peak)} (${mb(base)} before reading); the engine's estimate of its own need: ${formatBytes(footprint.total)} (${footprint.parts.map((p) => `${p.what} ${formatBytes(p.bytes)}`).join(', ')})`);
  // the projection job: 500 simulated futures for the bands, one scenario, a backtest of every origin at horizons 1–8
  s = performance.now();
  const proj = computeProjection({ tables: result.waist }, { horizon: 12, samples: 500, seed: 1, band: [10, 90], scenarios: ['keep=lapsing->dormant*0.8'], backtestHorizon: 8, scheme: log.scheme });
  const tProj = (performance.now() - s) / 1000;
  const origins = proj.backtest && 'rows' in proj.backtest ? proj.backtest.origins.length : 0;
  console.log(`projection           ${tProj.toFixed(2)} s  (bands of 500 futures over 12 periods, one scenario, backtest of ${origins} origins × 8 periods × 100 futures)`);
  // the weekly lists and the rules comparison on the same log
  s = performance.now();
  const lastLabel = waist.manifest.periods[waist.manifest.periods.length - 2];
  const listed = audienceOf(log, logRun, { period: lastLabel, entry: entrySpec(rules, 'dormant') }).rows.length;
  console.log(`audience list        ${((performance.now() - s) / 1000).toFixed(2)} s after the engine (${listed.toLocaleString('en-US')} users entered dormant in ${lastLabel})`);
  s = performance.now();
  const cpu1 = process.cpuUsage();
  const { diff } = await diffRules(createEngine('memory'), filesSource([file]), { file: 'a', rules }, { file: 'b', rules: parseRules('grain: week\nlapseLimit: 3\n') });
  const cpuDiff = process.cpuUsage(cpu1);
  console.log(`rules diff 2 vs 3    ${((performance.now() - s) / 1000).toFixed(2)} s (CPU ${((cpuDiff.user + cpuDiff.system) / 1e6).toFixed(2)} s; reads and classifies twice; ${diff.compared.toLocaleString('en-US')} user-periods, ${diff.changed.toLocaleString('en-US')} changed)`);
  await reportScaling(dir);
} finally {
  rmSync(dir, { recursive: true, force: true });
}
