/**
 * The reading worker started before the command's modules load. A worker thread takes a few tenths of
 * a second to start (its isolate, node's bootstrap, the reader's modules) and the main thread about as
 * long to load the command, parse the rules and open the file; started by the launcher (`bin.js`) when
 * the arguments name a large CSV file, the worker starts on the other core meanwhile and waits for its
 * part (partWorker.ts takes the job as its first message), so both threads start reading at about the
 * same time. parallel.ts takes it ({@link claimPrestarted}) in place of a new worker; one that is never
 * taken (a small file after all, an error before reading, a command that reads no events) does not keep
 * the process alive and ends with it.
 *
 * Only the compiled build starts one (the TypeScript sources bundle the worker first, see parallel.ts).
 * Nothing here may import more than node's own modules: it runs before everything else.
 */
import { statSync } from 'node:fs';
import { availableParallelism } from 'node:os';
import { Worker } from 'node:worker_threads';

/** Smallest file read on two threads (parallel.ts's PARALLEL_MIN_BYTES, which re-exports it). */
export const PARALLEL_MIN_BYTES = 32 << 20;

/** What a worker started early is given instead of a job: wait for the job as a message. */
export const WAIT_FOR_JOB = 'tidemark-wait-for-job';

/**
 * Whether `argv` (the command's arguments, after `node bin.js`) names an event file read on two threads:
 * a regular file of at least {@link PARALLEL_MIN_BYTES} given to `--events` that is CSV by its extension
 * (`.csv`, `.txt`) or by `--input-format csv`, read by the memory engine (no `--engine` but `memory`).
 * Anything else (gzip, NDJSON, Parquet, a pipe, a missing file, another engine, `--help`) is false: a
 * wrong guess only costs a worker's start-up on the other core, or a late one.
 */
export function readsLargeCsv(argv: readonly string[]): boolean {
  if (argv.includes('--help') || argv.includes('-h')) return false;
  const files: string[] = [];
  let format: string | undefined;
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i];
    if (a === '--engine' || a.startsWith('--engine=')) {
      if ((a === '--engine' ? argv[i + 1] : a.slice('--engine='.length)) !== 'memory') return false;
    } else if (a === '--input-format') format = argv[i + 1];
    else if (a.startsWith('--input-format=')) format = a.slice('--input-format='.length);
    else if (a.startsWith('--events=')) files.push(a.slice('--events='.length));
    else if (a === '--events') for (let j = i + 1; j < argv.length && !argv[j].startsWith('-'); j++) files.push(argv[j]);
  }
  return files.some((f) => {
    const lower = f.toLowerCase();
    if (format === undefined ? !(lower.endsWith('.csv') || lower.endsWith('.txt')) : format !== 'csv' || lower.endsWith('.gz')) return false;
    try {
      const st = statSync(f);
      return st.isFile() && st.size >= PARALLEL_MIN_BYTES;
    } catch {
      return false;
    }
  });
}

interface Early {
  worker: Worker;
  /** It failed or ended before it was claimed (it would never answer a job). */
  gone: boolean;
}

let early: Early | undefined;

/**
 * Start the reading worker now when `argv` reads a large CSV file on a machine with two cores or more
 * (see {@link readsLargeCsv}). Compiled build only: `partWorker.js` beside this module. Never throws.
 */
export function prestartReader(argv: readonly string[]): void {
  if (early || !import.meta.url.endsWith('.js') || availableParallelism() < 2 || !readsLargeCsv(argv)) return;
  try {
    const worker = new Worker(new URL('./partWorker.js', import.meta.url), { workerData: WAIT_FOR_JOB });
    const e: Early = { worker, gone: false };
    // not claimed yet: it must not keep the process alive, and its failure is no error (parallel.ts starts another)
    worker.unref();
    worker.once('error', () => { e.gone = true; });
    worker.once('exit', () => { e.gone = true; });
    early = e;
  } catch {
    // no worker now: parallel.ts starts one when it needs it
  }
}

/** Whether a worker started early is waiting to be claimed. */
export function hasPrestarted(): boolean {
  return early !== undefined && !early.gone;
}

/** The worker started early, if it is still there (then it is no longer unref'd: its answer is awaited), once. */
export function claimPrestarted(): Worker | undefined {
  const e = early;
  early = undefined;
  if (!e || e.gone) return undefined;
  e.worker.ref();
  return e.worker;
}
