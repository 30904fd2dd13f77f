/**
 * Progress: the readers tell the bytes they read (ending at the file's size, compressed bytes for
 * gzip, both threads' bytes for a split read), and the display is off unless standard error is a
 * terminal and the output is not JSON. The reference sizes are the file sizes on disk (fs.statSync).
 */
import { statSync } from 'node:fs';
import { gzipSync } from 'node:zlib';
import { afterAll, describe, expect, it } from 'vitest';
import { bufferIo } from '../../src/cli/io.js';
import { runProgress } from '../../src/cli/progress.js';
import { readEvents, type ReadProgress } from '../../src/ingest/read.js';
import { readPartHere } from '../../src/ingest/parallel.js';
import { rulesOf, tempDir } from '../core/helpers.js';

const t = tempDir();
afterAll(() => t.done());
const rules = rulesOf({ grain: 'week', lapseLimit: 2 });
const body = `user_id,timestamp\n${Array.from({ length: 5000 }, (_, i) => `m${i % 97},${new Date(Date.UTC(2026, 2, 2) + i * 600_000).toISOString()}`).join('\n')}\n`;

async function told(files: string[], extra: Parameters<typeof readEvents>[1] extends infer O ? Partial<O> : never = {}): Promise<ReadProgress[]> {
  const seen: ReadProgress[] = [];
  await readEvents(files, { rules, onProgress: (p) => seen.push({ ...p }), ...extra });
  return seen;
}

describe('read progress', () => {
  it('counts up to the total size of the files, read in small chunks', async () => {
    const a = t.file('a.csv', body), b = t.file('b.csv', body);
    const seen = await told([a, b], { limits: { chunk: 4096 } });
    const size = statSync(a).size + statSync(b).size;
    expect(seen.length).toBeGreaterThan(10);
    expect(seen.every((p) => p.total === size)).toBe(true);
    expect(seen[seen.length - 1]).toMatchObject({ file: b, bytes: size });
    expect(seen.every((p, i) => i === 0 || p.bytes >= seen[i - 1].bytes)).toBe(true);
  });

  it('a gzip file counts its compressed bytes, against its size on disk', async () => {
    const gz = t.file('c.csv.gz', gzipSync(body));
    const seen = await told([gz]);
    expect(seen[seen.length - 1].bytes).toBe(statSync(gz).size);
  });

  it('a read on two parts counts both parts', async () => {
    const f = t.file('d.csv', body);
    let split = false;
    const seen = await told([f], { limits: { chunk: 4096 }, parallel: { minBytes: 0, splitNear: (size) => size / 2, readPart: (job, onBytes) => ((split = true), readPartHere(job, onBytes)) } });
    expect(split).toBe(true);
    expect(seen[seen.length - 1].bytes).toBe(statSync(f).size);
    // with a worker thread its bytes arrive as messages
    const withWorker = await told([f], { limits: { chunk: 4096 }, parallel: { minBytes: 0, splitNear: (size) => size / 2 } });
    expect(withWorker[withWorker.length - 1].bytes).toBe(statSync(f).size);
    // balanced: the second reader is asked to stop halfway through its part and this thread reads the
    // rest; each counts its own part only (both read whole chunks past its end)
    let release!: () => void;
    const asked = new Promise<void>((r) => (release = r));
    let third = false;
    const balanced = await told([f], { limits: { chunk: 4096 }, parallel: {
      minBytes: 0, splitNear: (size) => size / 3, balanceNear: (size, at) => at + (size - at) / 2,
      readPart: async (job, onBytes) => (await asked, readPartHere(job, onBytes)),
      readHere: (job, onBytes) => ((third = true), release(), readPartHere(job, onBytes)),
    } });
    expect(third).toBe(true);
    expect(balanced[balanced.length - 1].bytes).toBe(statSync(f).size);
    expect(balanced.every((p, i) => i === 0 || p.bytes >= balanced[i - 1].bytes)).toBe(true);
  }, 30_000); // a bound on a worker that never answers
});

describe('progress display', () => {
  it('is off when standard error is not a terminal, or the output is JSON', () => {
    expect(runProgress(bufferIo(), true).onProgress).toBeUndefined();
    expect(runProgress({ ...bufferIo(), stderrIsTTY: true }, false).onProgress).toBeUndefined();
  });
});
