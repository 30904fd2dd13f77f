/**
 * Progress on standard error, shown only when it is a terminal and the output is not JSON
 * (cli-progress prints nothing on a non-TTY by default, which keeps CI logs and pipes clean).
 */
import { createRequire } from 'node:module';
import type { EngineProgress } from '../engines/memory/index.js';
import type { Io } from './io.js';

export interface Progress {
  step(label: string, value: number): void;
  stop(): void;
}

/** cli-progress (CommonJS), loaded only when a bar is drawn: a run whose standard error is not a terminal never loads it. */
const loadBars = (): typeof import('cli-progress') => createRequire(import.meta.url)('cli-progress');

const NONE: Progress = { step() {}, stop() {} };

export function progress(io: Io, enabled: boolean, total: number): Progress {
  if (!enabled || !io.stderrIsTTY) return NONE;
  const cliProgress = loadBars();
  const bar = new cliProgress.SingleBar(
    { format: 'tidemark {bar} {percentage}% {label}', hideCursor: true, clearOnComplete: true, stream: process.stderr },
    cliProgress.Presets.shades_classic,
  );
  bar.start(total, 0, { label: '' });
  return {
    step: (label, value) => bar.update(value, { label }),
    stop: () => bar.stop(),
  };
}

/** An engine run's progress display: its callback for the engine, and stop (call it before printing). */
export interface RunProgress {
  onProgress?: (p: EngineProgress) => void;
  stop(): void;
}

const mb = (n: number) => `${(n / 1e6).toFixed(n < 1e7 ? 1 : 0)} MB`;

/**
 * The progress of reading and classifying: a bar with the bytes read of the total while reading files
 * of known size, the bytes read and the time elapsed while reading a pipe, then the stage and the time.
 * Nothing at all unless `enabled` and standard error is a terminal.
 */
export function runProgress(io: Io, enabled: boolean): RunProgress {
  if (!enabled || !io.stderrIsTTY) return { stop() {} };
  const cliProgress = loadBars();
  const t0 = Date.now();
  const secs = () => `${((Date.now() - t0) / 1000).toFixed(1)} s`;
  let text = '';
  const bar = new cliProgress.SingleBar(
    {
      format: (options, params) => (params.total > 0 ? `tidemark ${cliProgress.Format.BarFormat(params.progress, options)} ${Math.floor(params.progress * 100)}% ${text}` : `tidemark ${text}`),
      hideCursor: true,
      clearOnComplete: true,
      stream: process.stderr,
      fps: 8,
    },
    cliProgress.Presets.shades_classic,
  );
  let started = false;
  return {
    onProgress: (p) => {
      const total = p.stage === 'reading' ? (p.total ?? 0) : 0;
      text = p.stage === 'reading'
        ? `reading ${p.file.split('/').pop()} · ${mb(p.bytes)}${p.total ? ` of ${mb(p.total)}` : ''} · ${secs()}`
        : `classifying · ${secs()}`;
      const value = p.stage === 'reading' ? Math.min(p.bytes, total) : 0;
      if (!started) {
        bar.start(total, value);
        started = true;
      } else {
        bar.setTotal(total);
        bar.update(value);
      }
      if (p.stage === 'classifying') bar.render();
    },
    stop: () => {
      if (started) bar.stop();
    },
  };
}
