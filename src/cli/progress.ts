/**
 * A progress bar on standard error, shown only when it is a terminal and the output is not JSON
 * (cli-progress prints nothing on a non-TTY by default, which keeps CI logs clean).
 */
import cliProgress from 'cli-progress';
import type { Io } from './io.js';

export interface Progress {
  step(label: string, value: number): void;
  stop(): void;
}

const NONE: Progress = { step() {}, stop() {} };

export function progress(io: Io, enabled: boolean, total: number): Progress {
  if (!enabled || !io.stderrIsTTY) return NONE;
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
