/**
 * Which command lines start the reading worker early (prestart.ts): a regular CSV file of at least
 * PARALLEL_MIN_BYTES given to --events. The large files are sparse (truncated to size, no data written):
 * only their size is looked at. That the early worker reads what a new one reads is checked on the
 * built command (test/cli/launch.test.ts), since only the compiled build starts one.
 */
import { closeSync, ftruncateSync, mkdirSync, openSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { PARALLEL_MIN_BYTES as SPLIT_MIN } from '../../src/ingest/parallel.js';
import { hasPrestarted, claimPrestarted, PARALLEL_MIN_BYTES, prestartReader, readsLargeCsv } from '../../src/ingest/prestart.js';
import { tempDir } from '../core/helpers.js';

const t = tempDir();
afterAll(() => t.done());

function sized(name: string, bytes: number): string {
  const file = t.file(name, '');
  const fd = openSync(file, 'r+');
  ftruncateSync(fd, bytes);
  closeSync(fd);
  return file;
}

describe('readsLargeCsv (which command lines start the reading worker early)', () => {
  it('uses the two-thread reader\'s own threshold', () => {
    expect(PARALLEL_MIN_BYTES).toBe(SPLIT_MIN);
  });

  it('is true for a CSV file of at least PARALLEL_MIN_BYTES given to --events, in any of the forms commander takes', () => {
    const big = sized('big.csv', PARALLEL_MIN_BYTES);
    const bigTxt = sized('big.TXT', PARALLEL_MIN_BYTES + 1);
    const small = sized('small.csv', PARALLEL_MIN_BYTES - 1);
    expect(readsLargeCsv(['flows', '--events', big])).toBe(true);
    expect(readsLargeCsv(['flows', '--events', small, big, '--format', 'json'])).toBe(true);
    expect(readsLargeCsv(['flows', `--events=${big}`])).toBe(true);
    expect(readsLargeCsv(['retention', '--quiet', '--events', bigTxt])).toBe(true);
    expect(readsLargeCsv(['flows', '--events', small])).toBe(false);
    expect(readsLargeCsv(['flows', '--events', small, '--out', big])).toBe(false); // not an event file
    expect(readsLargeCsv(['flows', '--events', big, '--help'])).toBe(false);
    expect(readsLargeCsv(['flows', '--events', join(t.dir, 'missing.csv')])).toBe(false);
    expect(readsLargeCsv(['flows'])).toBe(false);
  });

  it('is false when another engine reads the events (they have their own readers)', () => {
    const big = sized('big-engine.csv', PARALLEL_MIN_BYTES);
    expect(readsLargeCsv(['flows', '--events', big, '--engine', 'memory'])).toBe(true);
    expect(readsLargeCsv(['flows', '--engine=memory', '--events', big])).toBe(true);
    expect(readsLargeCsv(['flows', '--events', big, '--engine', 'duckdb'])).toBe(false);
    expect(readsLargeCsv(['flows', '--engine=duckdb', '--events', big])).toBe(false);
    expect(readsLargeCsv(['waist', '--engine', 'postgres', '--events', big])).toBe(false);
  });

  it('follows --input-format over the extension, and leaves out gzip, NDJSON, Parquet and folders', () => {
    const big = sized('big.data', PARALLEL_MIN_BYTES);
    const gz = sized('big.csv.gz', PARALLEL_MIN_BYTES);
    const nd = sized('big.ndjson', PARALLEL_MIN_BYTES);
    const pq = sized('big.parquet', PARALLEL_MIN_BYTES);
    const bigCsv = sized('big2.csv', PARALLEL_MIN_BYTES);
    const folder = join(t.dir, 'folder.csv');
    mkdirSync(folder);
    expect(readsLargeCsv(['flows', '--events', big])).toBe(false);
    expect(readsLargeCsv(['flows', '--events', big, '--input-format', 'csv'])).toBe(true);
    expect(readsLargeCsv(['flows', '--input-format=csv', '--events', big])).toBe(true);
    expect(readsLargeCsv(['flows', '--events', bigCsv, '--input-format', 'ndjson'])).toBe(false);
    expect(readsLargeCsv(['flows', '--events', gz])).toBe(false);
    expect(readsLargeCsv(['flows', '--events', gz, '--input-format', 'csv'])).toBe(false);
    expect(readsLargeCsv(['flows', '--events', nd])).toBe(false);
    expect(readsLargeCsv(['flows', '--events', pq])).toBe(false);
    expect(readsLargeCsv(['flows', '--events', folder])).toBe(false);
  });

  it('starts nothing from the TypeScript sources (the compiled build alone starts a worker early)', () => {
    const big = sized('big3.csv', PARALLEL_MIN_BYTES);
    prestartReader(['flows', '--events', big]);
    expect(hasPrestarted()).toBe(false);
    expect(claimPrestarted()).toBeUndefined();
  });
});
