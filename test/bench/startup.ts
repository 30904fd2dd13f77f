/**
 * Start-up time of the command, next to bare node: `node -e 0`, `tidemark --version`, `tidemark --help`
 * and `tidemark flows --help` (one command module loaded), each spawned `runs` times in turn (round
 * robin, so that a busy moment of the machine falls on all of them), wall-clock time from spawn to
 * exit. Prints the median of each, its ratio to bare node and the difference. The goal is a difference
 * within 0.3 s for `--help` and `--version`.
 */
import { spawnSync } from 'node:child_process';
import { cpus, loadavg } from 'node:os';
import { fileURLToPath } from 'node:url';
import { performance } from 'node:perf_hooks';

const BIN = fileURLToPath(new URL('../../src/cli/bin.js', import.meta.url));
const GOAL_S = 0.3;

const CASES: { label: string; args: string[] }[] = [
  { label: 'node -e 0', args: ['-e', '0'] },
  { label: 'tidemark --version', args: [BIN, '--version'] },
  { label: 'tidemark --help', args: [BIN, '--help'] },
  { label: 'tidemark flows --help', args: [BIN, 'flows', '--help'] },
];

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}

/** Times every case `runs` times; throws when the command fails or runs from the sources (a stale build). */
export function startupTimes(runs: number): void {
  const times = CASES.map(() => [] as number[]);
  for (let r = 0; r < runs; r++) {
    CASES.forEach((c, i) => {
      const t = performance.now();
      const p = spawnSync(process.execPath, c.args, { encoding: 'utf8' });
      times[i].push((performance.now() - t) / 1000);
      if (p.status !== 0 || p.stderr !== '') throw new Error(`${c.label} failed (exit ${p.status}): ${p.stderr.trim()}`);
    });
  }
  const cpu = cpus();
  console.log(`start-up, median of ${runs} runs each, taken in turn (${cpu.length} × ${cpu[0]?.model.trim() ?? 'unknown CPU'}, node ${process.version}, load average ${loadavg()[0].toFixed(2)}):`);
  const bare = median(times[0]);
  CASES.forEach((c, i) => {
    const m = median(times[i]);
    const vs = i === 0 ? '' : `  ×${(m / bare).toFixed(2)}, +${(m - bare).toFixed(3)} s${i < 3 ? (m - bare <= GOAL_S ? ' (within the 0.3 s goal)' : ' (OVER the 0.3 s goal)') : ''}`;
    console.log(`  ${c.label.padEnd(22)} ${m.toFixed(3)} s${vs}`);
  });
}
