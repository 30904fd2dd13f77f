/**
 * The worker thread's side of a two-thread CSV read: read the part of the file it was given into its
 * own builder, and send back the rows (transferred, not copied) and where it stopped (it may be asked to
 * stop early, through the job's shared signal: csv.ts), or the part's first error as data. Then read
 * any further part the main thread sends (it may take over the end of the main thread's part).
 */
import { parentPort, workerData } from 'node:worker_threads';
import type { PartialLog } from './eventLog.js';
import { readPartHere, type MoreMessage, type PartJob } from './parallel.js';

/** The buffers of a partial log, to transfer rather than copy. */
function buffers(p: PartialLog): ArrayBuffer[] {
  const arrays = [p.user, p.period, p.wall, ...p.attrs, p.users.arena, p.users.start, ...p.attrValues.flatMap((d) => [d.arena, d.start]), p.events.arena, p.events.start, p.eventRows];
  return [...new Set(arrays.map((a) => a.buffer as ArrayBuffer))];
}

async function work(job: PartJob): Promise<void> {
  // the bytes read, told in steps of 8 MiB or more (progress on the main thread)
  let unsaid = 0;
  const got = await readPartHere(job, (n) => {
    unsaid += n;
    if (unsaid >= 8 << 20) {
      parentPort!.postMessage({ bytes: unsaid });
      unsaid = 0;
    }
  });
  if (unsaid > 0) parentPort!.postMessage({ bytes: unsaid });
  if (got.ok) parentPort!.postMessage({ ok: true, partial: got.partial, end: got.end }, buffers(got.partial));
  else if ('error' in got) {
    const e = got.error;
    parentPort!.postMessage({ ok: false, error: { code: e.code, message: e.message, where: e.where, hint: e.hint } });
  }
}

// a function, not top-level await: this module is also bundled as a CommonJS script (parallel.ts)
const job = workerData as PartJob;
// then, while the main thread keeps it, read the further parts it is sent, one at a time
void work(job).then(() => parentPort!.on('message', (m: MoreMessage) => void work({ ...job, part: m.part })));
