/**
 * Reading a large CSV file on two threads: this thread reads from the start to a line start near the
 * middle, a worker thread reads from there to the end, and the worker's rows are merged after this
 * thread's (csv.ts decides whether the worker's part can be used; see readCsv).
 *
 * The split leans past the middle by what this thread reads while the worker starts (loading the
 * reader's modules takes it a few tenths of a second), so that both end at about the same time.
 * Files smaller than {@link PARALLEL_MIN_BYTES}, FIFOs, standard input and machines with one core are
 * read on one thread. A worker that cannot start (its module missing in a bundle, no memory) is no
 * error: this thread then reads on alone.
 */
import { availableParallelism } from 'node:os';
import { Worker } from 'node:worker_threads';
import type { Rules } from '../rules/schema.js';
import { TidemarkError, type ErrorCode, type ErrorLocation } from '../errors.js';
import { readCsvPart, type CsvPartJob, type PartResult, type SplitOptions } from './csv.js';
import { EventLogBuilder, type PartialLog } from './eventLog.js';

/** Smallest file read on two threads: 32 MiB (about 600,000 events; below it a worker's start-up costs more than it saves). */
export const PARALLEL_MIN_BYTES = 32 << 20;

/** Bytes this thread reads while the worker starts, added to its share (about 0.3 s of reading). */
export const WORKER_START_BYTES = 24 << 20;

/** What the worker is given. */
export interface PartJob {
  part: CsvPartJob;
  rules: Rules;
  skipBadRows: boolean;
  toKey?: number;
}

/** The worker's answer. */
type WorkerMessage = { ok: true; partial: PartialLog } | { ok: false; error: { code: ErrorCode; message: string; where: ErrorLocation; hint?: string } };

/**
 * Split options for readCsv; undefined when this machine has one core. `overrides` lets tests choose
 * the size and the split, and read the part on this thread ({@link readPartHere}).
 */
export function twoThreadSplit(job: Omit<PartJob, 'part'>, overrides: Partial<Omit<SplitOptions, 'readPart'>> & { readPart?: (job: PartJob) => Promise<PartResult> } = {}): SplitOptions | undefined {
  if (availableParallelism() < 2 && !overrides.readPart) return undefined;
  const { readPart, ...rest } = overrides;
  return {
    minBytes: PARALLEL_MIN_BYTES,
    splitNear: (size, headerEnd) => Math.min(size, headerEnd + Math.floor((size - headerEnd) / 2) + WORKER_START_BYTES / 2),
    readPart: readPart ? (part) => ({ result: readPart({ ...job, part }), cancel: () => undefined }) : (part) => startPart({ ...job, part }),
    ...rest,
  };
}

/** Read a later part of a file on this thread: what the worker runs (and what tests run in its place). */
export async function readPartHere(job: PartJob): Promise<PartResult> {
  const builder = new EventLogBuilder({ rules: job.rules, skipBadRows: job.skipBadRows, toKey: job.toKey });
  try {
    await readCsvPart(job.part, builder, job.rules.columns, job.rules.activity.keyEvents !== undefined);
  } catch (e) {
    if (e instanceof TidemarkError) return { ok: false, error: e };
    throw e;
  }
  return { ok: true, partial: builder.toPartial() };
}

function startPart(job: PartJob): { result: Promise<PartResult>; cancel: () => void } {
  let worker: Worker;
  try {
    worker = new Worker(new URL('./partWorker.js', import.meta.url), { workerData: job });
  } catch {
    return { result: Promise.resolve({ ok: false, unavailable: true }), cancel: () => undefined };
  }
  const result = new Promise<PartResult>((resolve) => {
    worker.once('message', (m: WorkerMessage) => {
      if (m.ok) resolve({ ok: true, partial: m.partial });
      else resolve({ ok: false, error: new TidemarkError(m.error.code, m.error.message, m.error.where, m.error.hint) });
      void worker.terminate();
    });
    // the worker could not load or run (a thrown non-data error ends it too): read on alone
    worker.once('error', () => resolve({ ok: false, unavailable: true }));
    worker.once('exit', () => resolve({ ok: false, unavailable: true }));
  });
  return { result, cancel: () => void worker.terminate() };
}
