/**
 * Hostile and awkward compressed and Parquet inputs, through the command line: each ends in a correct
 * result or one clean line with exit 1, quickly. Parquet files are written by DuckDB (an independent
 * writer), gzip data by node:zlib (RFC 1952).
 */
import { execFileSync } from 'node:child_process';
import { join } from 'node:path';
import { gzipSync } from 'node:zlib';
import { DuckDBInstance } from '@duckdb/node-api';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { corpusDir, expectClean, expectRefusal, run } from './harness.js';

const c = corpusDir();
afterAll(() => c.done());
const flows = (...args: string[]) => run('flows', '--format', 'json', ...args);
let db: Awaited<ReturnType<DuckDBInstance['connect']>>;
beforeAll(async () => {
  db = await (await DuckDBInstance.create(':memory:')).connect();
  await db.run("SET TimeZone='UTC'");
});

describe('gzip', () => {
  it('a gzip bomb of NUL bytes (64 MB from 64 KB) is refused as binary at its first chunk', async () => {
    const f = c.file('bomb.csv.gz', gzipSync(Buffer.alloc(64 << 20)));
    const line = expectRefusal(await flows('--events', f), 1);
    expect(line).toMatch(/bomb\.csv\.gz:1: a NUL byte at byte offset 0/);
  }, 20_000); // a bound on a reader that would inflate the whole bomb
  it('gzip-compressed binary that is not text is refused (invalid UTF-8 in the header)', async () => {
    const f = c.file('bin.csv.gz', gzipSync(Buffer.from([0xff, 0xfe, 0x41, 0x0a, 0xc3, 0x28, 0x0a])));
    expectRefusal(await flows('--events', f), 1);
  });
  it('a .gz name over plain text is read as the text it is', async () => {
    const f = c.file('plain.csv.gz', 'user_id,timestamp\nm1,2026-03-02T10:00:00Z\n');
    const r = await flows('--events', f);
    expectClean(r);
    expect(r.code, r.err).toBe(0);
  });
  it('an empty .gz file is an empty file', async () => {
    const line = expectRefusal(await flows('--events', c.file('empty.csv.gz', gzipSync(Buffer.alloc(0)))), 1);
    expect(line).toMatch(/the file is empty/);
  });
});

describe('Parquet', () => {
  it('a user column of lists is refused, naming the column', async () => {
    const f = join(c.dir, 'nested.parquet');
    await db.run(`COPY (SELECT ['m1', 'm2'] AS user_id, TIMESTAMPTZ '2026-03-02 10:00:00+00' AS timestamp) TO '${f}' (FORMAT parquet)`);
    const line = expectRefusal(await flows('--events', f), 1);
    expect(line).toMatch(/column user_id: the user column 'user_id' holds lists or records/);
  });
  it('a Parquet file cut short is one clear refusal', async () => {
    const f = join(c.dir, 'whole.parquet');
    await db.run(`COPY (SELECT 'm' || i AS user_id, TIMESTAMPTZ '2026-03-02 10:00:00+00' AS timestamp FROM range(1000) r(i)) TO '${f}' (FORMAT parquet)`);
    const cut = execFileSync('head', ['-c', '2000', f]);
    const line = expectRefusal(await flows('--events', c.file('cut.parquet', cut)), 1);
    expect(line).toMatch(/cut\.parquet: this is not a Parquet file tidemark can read/);
  });
  it('Parquet through a pipe is refused with the reason (Parquet needs seeking)', async () => {
    const line = expectRefusal(await flows('--events', '/dev/stdin', '--input-format', 'parquet'), 1);
    expect(line).toMatch(/cannot be read as Parquet/);
  });
  it('a list column beside the mapped ones is no attribute; the run goes on', async () => {
    const f = join(c.dir, 'extra.parquet');
    await db.run(`COPY (SELECT 'm1' AS user_id, TIMESTAMPTZ '2026-03-02 10:00:00+00' AS timestamp, [1, 2] AS tags, 'pro' AS plan) TO '${f}' (FORMAT parquet)`);
    const r = await run('survival', '--events', f, '--by', 'tags', '--format', 'json');
    expect(expectRefusal(r, 2)).toMatch(/no column 'tags'|Columns you can split by: plan/);
  });
});
