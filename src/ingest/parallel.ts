/**
 * Reading a large CSV file on two threads: this thread reads from the start to a line start near the
 * middle, a worker thread reads from there to the end, and the worker's rows are merged after this
 * thread's (csv.ts decides whether the worker's part can be used; see readCsv).
 *
 * The split leans past the middle by what this thread reads while the worker starts (loading the
 * reader's modules takes it a few tenths of a second), so that both end at about the same time.
 * The lean is a guess, and which thread lags changes from run to run, so the split balances itself
 * (csv.ts, readCsv): whichever thread is done first takes over about half of what the other has left,
 * when that is at least {@link BALANCE_MIN_BYTES} (this thread reads the end of the worker's part into
 * a third builder; or the worker, kept after its answer, is sent the end of this thread's part).
 *
 * Files smaller than {@link PARALLEL_MIN_BYTES}, FIFOs, standard input and machines with one core are
 * read on one thread. A worker that cannot start (its module missing in a bundle, no memory) is no
 * error: this thread then reads on alone.
 *
 * The worker's code: compiled JavaScript runs partWorker.js beside this module. Run from the
 * TypeScript sources (tsx), a worker would have to register tsx's loader, which starts a loader
 * thread and costs about 0.3 s of CPU; instead the worker's modules are bundled once per process by
 * esbuild (the compiler tsx itself uses, on its own process while this thread reads) into one script
 * the worker evaluates, kept in the temp folder for the next run. If esbuild fails, partWorkerTsx.js
 * registers tsx.
 */
import { createHash } from 'node:crypto';
import { readFile, rename, stat, writeFile } from 'node:fs/promises';
import { availableParallelism, tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { Worker } from 'node:worker_threads';
import type { Rules } from '../rules/schema.js';
import { TidemarkError, type ErrorCode, type ErrorLocation } from '../errors.js';
import { readCsvPart, type CsvPartJob, type PartResult, type PartRun, type SplitOptions } from './csv.js';
import { EventLogBuilder, type PartialLog } from './eventLog.js';

/** Smallest file read on two threads: 32 MiB (about 600,000 events; below it a worker's start-up costs more than it saves). */
export const PARALLEL_MIN_BYTES = 32 << 20;

/** Bytes this thread reads while the worker starts, added to its share (about 0.3 s of reading). */
export const WORKER_START_BYTES = 24 << 20;

/**
 * Least the worker must have left, when this thread has read its part, for this thread to take over
 * half of it: 8 MiB (about 0.15 s of reading; a third part costs a reader, a builder and a merge).
 */
export const BALANCE_MIN_BYTES = 8 << 20;

/** Where this thread takes over the rest of a file of `size` bytes whose worker has read up to `at`: halfway, when worth it. */
export function balanceNear(size: number, at: number): number | undefined {
  return size - at >= BALANCE_MIN_BYTES ? at + Math.floor((size - at) / 2) : undefined;
}

/** Where the worker, done first, takes over the rest of this thread's part (this thread at `at`, the split at `split`): halfway, when worth it. */
export function takeNear(at: number, split: number): number | undefined {
  return balanceNear(split, at);
}

/** What the worker is given. */
export interface PartJob {
  part: CsvPartJob;
  rules: Rules;
  skipBadRows: boolean;
  toKey?: number;
  /** The user and period columns only (BuilderOptions.waistOnly), as the main thread's builder keeps. */
  waistOnly?: boolean;
}

/** Another part for a worker that has answered (SplitOptions.readPart's `more`). */
export interface MoreMessage {
  part: CsvPartJob;
}

/** The worker's answer: bytes read (progress), its rows and where it stopped, or its first error. */
type WorkerMessage = { bytes: number } | { ok: true; partial: PartialLog; end: number } | { ok: false; error: { code: ErrorCode; message: string; where: ErrorLocation; hint?: string } };

/** A reader of a part of a file (tests put {@link readPartHere}, wrapped, in the worker's place). */
export type PartReader = (job: PartJob, onBytes?: (n: number) => void) => Promise<PartResult>;

/**
 * Split options for readCsv; undefined when this machine has one core. `overrides` lets tests choose
 * the size, the split and where the balancing takes over (`balanceNear`), and read the part on this
 * thread ({@link readPartHere}).
 */
export function twoThreadSplit(job: Omit<PartJob, 'part'>, overrides: Partial<Omit<SplitOptions, 'readPart' | 'readHere'>> & { readPart?: PartReader; readHere?: PartReader } = {}): SplitOptions | undefined {
  if (availableParallelism() < 2 && !overrides.readPart) return undefined;
  const { readPart, readHere = readPartHere, ...rest } = overrides;
  return {
    minBytes: PARALLEL_MIN_BYTES,
    splitNear: (size, headerEnd) => Math.min(size, headerEnd + Math.floor((size - headerEnd) / 2) + WORKER_START_BYTES / 2),
    readPart: readPart
      ? (part, onBytes) => ({ result: readPart({ ...job, part }, onBytes), more: (next, onMore) => readPart({ ...job, part: next }, onMore), done: () => undefined, cancel: () => undefined })
      : (part, onBytes) => startPart({ ...job, part }, onBytes),
    balanceNear,
    takeNear,
    readHere: (part, onBytes) => readHere({ ...job, part }, onBytes),
    ...rest,
  };
}

/**
 * Read a later part of a file on this thread: what the worker runs (and what tests run in its place),
 * and what this thread runs for the last part when the split balances itself.
 */
export async function readPartHere(job: PartJob, onBytes?: (n: number) => void): Promise<PartResult> {
  const builder = new EventLogBuilder({ rules: job.rules, skipBadRows: job.skipBadRows, toKey: job.toKey, waistOnly: job.waistOnly });
  let end: number;
  try {
    end = await readCsvPart(job.part, builder, job.rules.columns, job.rules.activity.keyEvents !== undefined, onBytes);
  } catch (e) {
    if (e instanceof TidemarkError) return { ok: false, error: e };
    throw e;
  }
  return { ok: true, partial: builder.toPartial(), end };
}

let bundle: Promise<string | undefined> | undefined;

/** A bundle kept between runs: its code and the files it was built from, as they were then. */
interface CachedBundle {
  code: string;
  inputs: { path: string; mtimeMs: number; size: number }[];
}

/**
 * The worker's modules as one CommonJS script (from the TypeScript sources), or undefined when esbuild
 * fails. Kept in the temp folder between runs, and used again while none of its source files changed
 * (checked by size and modification time), so a run usually starts its worker with no build at all.
 */
function workerBundle(): Promise<string | undefined> {
  bundle ??= (async () => {
    const entry = fileURLToPath(new URL('./partWorker.ts', import.meta.url));
    const cacheFile = join(tmpdir(), `tidemark-worker-${createHash('sha1').update(entry).digest('hex').slice(0, 16)}.json`);
    try {
      const cached = JSON.parse(await readFile(cacheFile, 'utf8')) as CachedBundle;
      const same = await Promise.all(cached.inputs.map(async (i) => {
        const st = await stat(i.path);
        return st.mtimeMs === i.mtimeMs && st.size === i.size;
      }));
      if (same.every(Boolean)) return cached.code;
    } catch {
      // no cache yet, or a file of it is gone: build
    }
    try {
      const esbuild = await import('esbuild');
      const out = await esbuild.build({ entryPoints: [entry], bundle: true, platform: 'node', format: 'cjs', target: 'node20', write: false, logLevel: 'silent', external: ['esbuild'], metafile: true, absWorkingDir: dirname(entry) });
      const code = out.outputFiles[0].text;
      try {
        const inputs = await Promise.all(Object.keys(out.metafile.inputs).map(async (f) => {
          const path = resolve(dirname(entry), f);
          const st = await stat(path);
          return { path, mtimeMs: st.mtimeMs, size: st.size };
        }));
        const tmp = `${cacheFile}.${process.pid}.tmp`;
        await writeFile(tmp, JSON.stringify({ code, inputs } satisfies CachedBundle));
        await rename(tmp, cacheFile);
      } catch {
        // an unwritable temp folder only costs the next run a build
      }
      return code;
    } catch {
      return undefined;
    }
  })();
  return bundle;
}

/** A worker running partWorker: compiled JavaScript as it is, TypeScript sources bundled (see above). */
async function newWorker(job: PartJob): Promise<Worker> {
  if (import.meta.url.endsWith('.js')) return new Worker(new URL('./partWorker.js', import.meta.url), { workerData: job });
  const code = await workerBundle();
  if (code !== undefined) return new Worker(code, { eval: true, workerData: job });
  return new Worker(new URL('./partWorkerTsx.js', import.meta.url), { workerData: job });
}

/**
 * A worker reading `job`'s part. Once it has answered it waits, idle, for another part ({@link PartRun.more})
 * until {@link PartRun.done} or {@link PartRun.cancel} ends it; an idle worker does not keep the process alive.
 */
function startPart(job: PartJob, onBytes?: (n: number) => void): PartRun {
  const unavailable: PartResult = { ok: false, unavailable: true };
  let worker: Worker | undefined;
  let ended = false, finished = false;
  /** Who waits for the worker's next answer, and who hears of its bytes. */
  let answer: ((r: PartResult) => void) | undefined;
  let told = onBytes;
  const end = () => {
    ended = true;
    if (worker) void worker.terminate();
  };
  const settle = (r: PartResult) => {
    const a = answer;
    answer = undefined;
    if (finished) end();
    else worker?.unref();
    a?.(r);
  };
  const result = new Promise<PartResult>((resolve) => {
    answer = resolve;
    newWorker(job).then((w) => {
      worker = w;
      if (ended) void w.terminate();
      w.on('message', (m: WorkerMessage) => {
        if ('bytes' in m) return told?.(m.bytes);
        if (m.ok) settle({ ok: true, partial: m.partial, end: m.end });
        else settle({ ok: false, error: new TidemarkError(m.error.code, m.error.message, m.error.where, m.error.hint) });
      });
      // the worker could not load or run (a thrown non-data error ends it too): read on alone
      w.once('error', () => settle(unavailable));
      w.once('exit', () => settle(unavailable));
    }, () => settle(unavailable));
  });
  return {
    result,
    more: (part, onMore) => new Promise<PartResult>((resolve) => {
      if (!worker || ended || answer) return resolve(unavailable);
      answer = resolve;
      told = onMore;
      worker.ref();
      worker.postMessage({ part } satisfies MoreMessage);
    }),
    done: () => {
      finished = true;
      if (!answer) end();
    },
    cancel: end,
  };
}
