/**
 * `npm run bench`: whole processes side by side, in one run. For deterministic logs of 1M, 3M and 10M
 * events (CSV and Parquet; `--with-100m` adds a 100M-event Parquet log, not part of CI), it times
 * `tidemark flows` on each engine and a hand-written DuckDB query of the same weekly rules
 * (handQuery.mjs), checks that every engine's transition counts equal the query's, and reports wall
 * seconds, CPU seconds (all threads), peak resident memory and the ratio to the query. Each process is
 * run `--repeat` times (default 3), interleaved with the others, and the run with the median wall time
 * is reported. The table goes to reports/bench.md with the machine it ran on and the targets of issue 10.
 *
 * Options: --sizes 1,3,10 (millions of events) · --with-100m · --engines memory,duckdb (default: memory,
 * and duckdb when `tidemark flows --engine` offers it) · --repeat N · --data DIR (where logs are kept
 * between runs; default the system temp folder) · --out FILE (default reports/bench.md) · --baseline DIR
 * (also time the memory engine of another checkout of tidemark, say the main branch, on CSV, for
 * before/after; or give its entry file, a compiled build's runner) ·
 * --cli FILE (the tidemark entry to time; default src/cli/bin.js).
 */
import { spawn } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { cpus, freemem, loadavg, tmpdir, totalmem } from 'node:os';
import { dirname, join } from 'node:path';
import { performance } from 'node:perf_hooks';
import { fileURLToPath } from 'node:url';
import { benchLog, sizeOf, type BenchLog } from './generate.js';

const ROOT = fileURLToPath(new URL('../..', import.meta.url));
const MEASURE = join(ROOT, 'test/bench/measure.mjs');
const argvEarly = process.argv.slice(2);
/** The tidemark entry to time: `--cli FILE` (a compiled build's runner, say), else src/cli/bin.js. */
const CLI = argvEarly.includes('--cli') ? argvEarly[argvEarly.indexOf('--cli') + 1] : join(ROOT, 'src/cli/bin.js');
const HAND = join(ROOT, 'test/bench/handQuery.mjs');

import { startupTimes } from './startup.js';

const argv = process.argv.slice(2);
const opt = (name: string, dflt: string) => {
  const i = argv.indexOf(name);
  return i >= 0 && argv[i + 1] !== undefined ? argv[i + 1] : dflt;
};
const sizes = opt('--sizes', '1,3,10').split(',').map((s) => Math.round(Number(s) * 1_000_000));
const with100m = argv.includes('--with-100m');
const repeat = Math.max(1, Number(opt('--repeat', '3')));
const dataDir = opt('--data', join(tmpdir(), 'tidemark-bench'));
const outFile = opt('--out', join(ROOT, 'reports/bench.md'));
const baseline = opt('--baseline', '');

interface Measured {
  wall: number;
  cpu: number;
  rss: number;
  code: number;
  stderr: string;
}

// the command's start-up next to bare node (issue 9's target: within 0.3 s)
startupTimes(Number(opt('--startup-runs', '11')));

const work = mkdtempSync(join(tmpdir(), 'tidemark-bench-run-'));
let runs = 0;

/** Run node with the measuring preload; wall time from spawn to exit. */
function timed(args: string[]): Promise<Measured> {
  const usage = join(work, `usage-${runs++}.json`);
  return new Promise((resolve, reject) => {
    const t0 = performance.now();
    const child = spawn(process.execPath, ['--import', MEASURE, ...args], { env: { ...process.env, TIDEMARK_BENCH_USAGE: usage }, stdio: ['ignore', 'ignore', 'pipe'] });
    let stderr = '';
    child.stderr.on('data', (d) => (stderr += d));
    child.on('error', reject);
    child.on('close', (code) => {
      const wall = (performance.now() - t0) / 1000;
      let u = { maxRssBytes: NaN, cpuSeconds: NaN };
      try {
        u = JSON.parse(readFileSync(usage, 'utf8'));
      } catch {
        // the process died before its exit handler ran
      }
      resolve({ wall, cpu: u.cpuSeconds, rss: u.maxRssBytes, code: code ?? -1, stderr });
    });
  });
}

/** Moves as "week,from,to" → users, from the hand query's output. */
function handMoves(file: string): Map<string, number> {
  const { moves } = JSON.parse(readFileSync(file, 'utf8')) as { moves: number[][] };
  return new Map(moves.map(([p, f, t, n]) => [`${p},${f},${t}`, n]));
}

/** The same moves from `tidemark flows --format json` (arrivals as from = −1). */
function flowsMoves(file: string): Map<string, number> {
  const f = JSON.parse(readFileSync(file, 'utf8')) as { periods: string[]; stateCounts: Record<string, number>[]; transitions: { to: string; counts: number[][]; fresh: number }[] };
  const week = (label: string) => Math.floor((Date.parse(`${label}T00:00:00Z`) / 86_400_000 + 3) / 7);
  const m = new Map<string, number>();
  const add = (k: string, n: number) => n !== 0 && m.set(k, n);
  add(`${week(f.periods[0])},-1,0`, f.stateCounts[0].fresh);
  for (const t of f.transitions) {
    const p = week(t.to);
    t.counts.forEach((row, i) => row.forEach((n, j) => add(`${p},${i},${j}`, n)));
    add(`${p},-1,0`, t.fresh);
  }
  return m;
}

function sameMoves(a: Map<string, number>, b: Map<string, number>): boolean {
  return a.size === b.size && [...a].every(([k, n]) => b.get(k) === n);
}

/** The engines `tidemark flows --engine` offers (memory when it has no such option). */
async function offeredEngines(): Promise<string[]> {
  const help = await new Promise<string>((resolve) => {
    const c = spawn(process.execPath, [CLI, 'flows', '--help'], { stdio: ['ignore', 'pipe', 'ignore'] });
    let out = '';
    c.stdout.on('data', (d) => (out += d));
    c.on('close', () => resolve(out));
  });
  // commander wraps long help lines: `--engine <name>  … (choices:\n   "memory", "duckdb", default: "memory")`
  // read within the option's own lines: other options' help may mention --engine or have choices
  const block = /^\s*--engine <name>.*(?:\n(?!\s*--)[^\n]*)*/m.exec(help)?.[0] ?? '';
  const m = /choices:\s*([^)]*)\)/.exec(block);
  const names = m ? [...m[1].replace(/default:.*$/s, '').matchAll(/"([^"]+)"/g)].map((x) => x[1]) : [];
  // the postgres engine reads a table on a server, not the bench's files
  const files = names.filter((n) => n !== 'postgres');
  return files.length > 0 ? files : ['memory'];
}

interface Row {
  events: number;
  format: 'csv' | 'parquet';
  runner: string;
  m: Measured;
  ratio?: number;
  equal?: boolean;
  bytes: number;
}

function median(ms: Measured[]): Measured {
  return [...ms].sort((a, b) => a.wall - b.wall)[Math.floor(ms.length / 2)];
}

const engines = opt('--engines', '') ? opt('--engines', '').split(',') : await offeredEngines();
/** How a runner is shown: with --engine when the command line has that option, else as the memory engine. */
const engineLabel = (e: string) => (engines.length === 1 && e === 'memory' ? 'tidemark flows (memory engine)' : `tidemark flows --engine ${e}`);
const load0 = loadavg();
const started = new Date();
console.log(`engines: ${engines.join(', ')}; sizes: ${sizes.map((s) => `${s / 1e6}M`).join(', ')}${with100m ? ', 100M (Parquet)' : ''}; ${repeat} run(s) each; logs in ${dataDir}`);

const rows: Row[] = [];
try {
  // start-up: tidemark flows on a two-row file, and bare node
  const tiny = join(work, 'tiny.csv');
  writeFileSync(tiny, 'user_id,timestamp\nu1,2026-01-05T10:00:00Z\nu1,2026-01-12T10:00:00Z\n');
  const startup: Measured[] = [], bare: Measured[] = [];
  for (let k = 0; k < repeat; k++) {
    startup.push(await timed([CLI, 'flows', '--events', tiny, '--format', 'json', '--out', join(work, 'tiny.json'), '--quiet']));
    bare.push(await timed(['-e', '0']));
  }
  rows.push({ events: 2, format: 'csv', runner: 'start-up: tidemark flows, 2 rows', m: median(startup), bytes: 0 });
  rows.push({ events: 0, format: 'csv', runner: 'start-up: node -e 0', m: median(bare), bytes: 0 });

  const logs: BenchLog[] = [];
  for (const n of sizes) {
    const t = performance.now();
    logs.push(await benchLog(dataDir, n));
    console.log(`log of ${(n / 1e6).toFixed(0)}M events ready (${((performance.now() - t) / 1000).toFixed(1)} s)`);
  }
  if (with100m) logs.push(await benchLog(dataDir, 100_000_000, true));

  for (const log of logs) {
    for (const format of ['csv', 'parquet'] as const) {
      const file = format === 'csv' ? log.csv : log.parquet;
      if (!file) continue;
      const runners = ['hand', ...engines.filter((e) => !(log.events >= 100_000_000 && e === 'memory')), ...(baseline && log.events < 100_000_000 && format === 'csv' ? ['baseline'] : [])];
      const got = new Map<string, Measured[]>(runners.map((r) => [r, []]));
      const out = (r: string) => join(work, `${r}-${log.events}-${format}.json`);
      for (let k = 0; k < repeat; k++) {
        for (const r of runners) {
          const args = r === 'hand' ? [HAND, file, out(r)]
            : r === 'baseline' ? [/\.m?js$/.test(baseline) ? baseline : join(baseline, 'src/cli/bin.js'), 'flows', '--events', file, '--format', 'json', '--out', out(r), '--quiet']
            : [CLI, 'flows', '--events', file, '--format', 'json', '--out', out(r), '--quiet', ...(r === 'memory' && engines.length === 1 ? [] : ['--engine', r])];
          const m = await timed(args);
          if (m.code !== 0) console.log(`${r} on ${file} failed (exit ${m.code}): ${m.stderr.trim().split('\n').slice(-1)[0]}`);
          got.get(r)!.push(m);
        }
      }
      const hand = median(got.get('hand')!);
      const want = hand.code === 0 ? handMoves(out('hand')) : undefined;
      for (const r of runners) {
        const m = median(got.get(r)!);
        const row: Row = { events: log.events, format, runner: r === 'hand' ? 'hand-written DuckDB query' : r === 'baseline' ? `baseline: ${baseline} (memory engine)` : engineLabel(r), m, bytes: sizeOf(file) };
        if (r !== 'hand') {
          row.ratio = m.wall / hand.wall;
          row.equal = m.code === 0 && want !== undefined && sameMoves(flowsMoves(out(r)), want);
        }
        rows.push(row);
        console.log(`${(log.events / 1e6).toFixed(0).padStart(3)}M ${format.padEnd(7)} ${row.runner.padEnd(34)} wall ${m.wall.toFixed(2).padStart(6)} s  CPU ${m.cpu.toFixed(2).padStart(6)} s  peak ${(m.rss / 1e9).toFixed(2)} GB${row.ratio !== undefined ? `  ×${row.ratio.toFixed(2)} the query  counts ${row.equal ? 'equal' : 'DIFFER'}` : ''}`);
      }
    }
  }
} finally {
  rmSync(work, { recursive: true, force: true });
}

// ----- the table and the targets
const load1 = loadavg();
const f2 = (x: number) => (Number.isFinite(x) ? x.toFixed(2) : '–');
const gb = (x: number) => (Number.isFinite(x) ? (x / 1e9).toFixed(2) : '–');
const mEvents = (n: number) => (n >= 1e6 ? `${n / 1e6}M` : `${n}`);
const find = (events: number, format: string, runner: string) => rows.find((r) => r.events === events && r.format === format && r.runner === runner);
const targets: string[] = [];
const check = (what: string, ok: boolean | undefined, value: string) => targets.push(`| ${what} | ${value} | ${ok === undefined ? 'not measured' : ok ? 'met' : '**not met**'} |`);
for (const e of engines) {
  const name = engineLabel(e);
  const limit = e === 'memory' ? 0.8 : 1.2;
  for (const n of [3_000_000, 10_000_000]) {
    const r = find(n, 'csv', name);
    check(`${e}, ${mEvents(n)} CSV: ≤ ${limit}× the query, peak ≤ 1.5 GB`, r ? r.ratio! <= limit && r.m.rss <= 1.5e9 && r.equal! : undefined, r ? `×${f2(r.ratio!)}, ${gb(r.m.rss)} GB${r.equal ? '' : ', counts differ'}` : '–');
  }
  const a = find(1_000_000, 'csv', name), b = find(10_000_000, 'csv', name);
  check(`${e}: time(10M) / time(1M) ≤ 11 (CSV)`, a && b ? b.m.wall / a.m.wall <= 11 : undefined, a && b ? f2(b.m.wall / a.m.wall) : '–');
  if (e !== 'memory') {
    const c = find(10_000_000, 'csv', name), p = find(10_000_000, 'parquet', name);
    check(`${e}: 10M Parquet ≤ 0.3× 10M CSV`, c && p ? p.m.wall / c.m.wall <= 0.3 : undefined, c && p ? f2(p.m.wall / c.m.wall) : '–');
    const h = find(100_000_000, 'parquet', name);
    check(`${e}: 100M Parquet completes, peak ≤ 3 GB`, h ? h.m.code === 0 && h.m.rss <= 3e9 : undefined, h ? `${f2(h.m.wall)} s, ${gb(h.m.rss)} GB` : '–');
  }
}

const cpu = cpus();
const machine = `${cpu.length} × ${cpu[0]?.model ?? 'unknown CPU'}, ${(totalmem() / 2 ** 30).toFixed(0)} GiB memory (${(freemem() / 2 ** 30).toFixed(0)} GiB free at the end), Node ${process.version}, @duckdb/node-api ${JSON.parse(readFileSync(join(ROOT, 'node_modules/@duckdb/node-api/package.json'), 'utf8')).version}`;
const table = [
  '| events | input | runner | wall s | CPU s | peak RSS GB | × query | counts equal the query |',
  '|---|---|---|---|---|---|---|---|',
  ...rows.map((r) => `| ${r.events <= 2 ? '–' : mEvents(r.events)} | ${r.events <= 2 ? '–' : `${r.format} (${(r.bytes / 1e6).toFixed(0)} MB)`} | ${r.runner} | ${f2(r.m.wall)} | ${f2(r.m.cpu)} | ${gb(r.m.rss)} | ${r.ratio === undefined ? '' : f2(r.ratio)} | ${r.equal === undefined ? '' : r.equal ? 'yes' : '**no**'} |`),
];
const md = [
  '# Benchmark: tidemark flows against a hand-written DuckDB query',
  '',
  `Run ${started.toISOString().slice(0, 16).replace('T', ' ')} UTC by \`npm run bench\` (${argv.join(' ') || 'default options'}), ${repeat} run(s) of each process, interleaved; the run with the median wall time is shown. tidemark entry: ${CLI.startsWith(ROOT) ? CLI.slice(ROOT.length) : CLI}.`,
  `Machine: ${machine}. Load average ${load0.map((x) => x.toFixed(1)).join(' / ')} before and ${load1.map((x) => x.toFixed(1)).join(' / ')} after (1 / 5 / 15 min): other work shared the cores, so read the ratios (measured side by side) rather than the seconds.`,
  '',
  'Logs: synthetic weekly makerspace bookings (invented), one member per 20 events, 52 weeks; rules: weeks from Monday, UTC, every event counts, lapse limit 2. Whole processes are timed from start to exit, start-up included; CPU counts every thread.',
  '',
  ...table,
  '',
  '## Targets (issue 10)',
  '',
  '| target | measured | |',
  '|---|---|---|',
  ...targets,
  '',
].join('\n');
mkdirSync(dirname(outFile), { recursive: true });
writeFileSync(outFile, md);
console.log(`\n${md}\nwritten to ${outFile}`);
