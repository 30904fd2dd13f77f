/**
 * With the duckdb engine, `tidemark waist` writes each table as Parquet beside its CSV. Checked with
 * two readers that are not DuckDB: each Parquet file read by hyparquet (an independent Parquet
 * implementation in JavaScript) holds exactly the rows of its CSV read by papaparse (an independent
 * RFC 4180 parser), counts as whole numbers and labels as text, a segment value with a comma and a
 * quote included. Invented data (the makerspace booking app), seeded.
 */
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { asyncBufferFromFile, parquetRead, parquetSchema, parquetMetadataAsync } from 'hyparquet';
import Papa from 'papaparse';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { corpusDir, run } from '../hostile/harness.js';
import { mulberry32 } from '../stats/prng.js';

const dir = corpusDir();
afterAll(() => dir.done());

const PLANS = ['hobby', 'studio, "pro"', 'pro'];

function events(seed: number): string {
  const rng = mulberry32(seed);
  const start = Date.UTC(2026, 2, 2, 8);
  const rows = ['user_id,timestamp,event,plan'];
  for (let m = 0; m < 120; m++) {
    let day = Math.floor(rng() * 40);
    const plan = PLANS[m % 3];
    while (day < 70) {
      rows.push(`member${m},${new Date(start + day * 86_400_000).toISOString()},booking,"${plan.replace(/"/g, '""')}"`);
      if (rng() > 0.8) break;
      day += 1 + Math.floor(rng() * 12);
    }
  }
  return `${rows.join('\n')}\n`;
}

async function parquetRows(file: string): Promise<{ columns: string[]; rows: unknown[][] }> {
  const buf = await asyncBufferFromFile(file);
  const meta = await parquetMetadataAsync(buf);
  const columns = parquetSchema(meta).children.map((c) => c.element.name);
  let rows: unknown[][] = [];
  await parquetRead({ file: buf, metadata: meta, onComplete: (r: unknown[][]) => void (rows = r) });
  return { columns, rows };
}

describe('waist --engine duckdb writes Parquet copies of the tables', () => {
  let out: string;
  beforeAll(async () => {
    const ev = dir.file('bookings.csv', events(7));
    out = join(dir.dir, 'waist');
    const r = await run('waist', '--engine', 'duckdb', '--events', ev, '--by', 'plan', '--out', out);
    expect(r.code, r.err).toBe(0);
  }, 60_000);

  it('one Parquet file for every CSV table', () => {
    const files = readdirSync(out);
    const csv = files.filter((f) => f.endsWith('.csv')).map((f) => f.replace(/\.csv$/, ''));
    const pq = files.filter((f) => f.endsWith('.parquet')).map((f) => f.replace(/\.parquet$/, ''));
    expect(csv.length).toBe(9);
    expect(pq.sort()).toEqual(csv.sort());
  });

  it('each Parquet file holds exactly its CSV rows (hyparquet against papaparse)', async () => {
    let nonEmpty = 0, sawQuoted = false;
    for (const f of readdirSync(out).filter((x) => x.endsWith('.csv'))) {
      const parsed = Papa.parse<string[]>(readFileSync(join(out, f), 'utf8'), { skipEmptyLines: true });
      const [head, ...body] = parsed.data;
      const { columns, rows } = await parquetRows(join(out, f.replace(/\.csv$/, '.parquet')));
      expect(columns, f).toEqual(head);
      // counts are whole numbers (BIGINT), everything else text: compared as text, in file order
      const asText = rows.map((r) => r.map((v) => (typeof v === 'bigint' || typeof v === 'number' ? String(v) : v)));
      for (const r of rows) r.forEach((v) => expect(['bigint', 'string']).toContain(typeof v));
      // a column whose every CSV value is a whole number (counts, ages, flags; no label here is all
      // digits) is BIGINT in Parquet, every other one text: the writer's list of count columns is complete
      head.forEach((col, j) => {
        if (!body.length) return;
        const whole = body.every((r) => /^[0-9]+$/.test(r[j]));
        expect(rows.every((r) => typeof r[j] === (whole ? 'bigint' : 'string')), `${f} ${col}`).toBe(true);
      });
      expect(asText, f).toEqual(body);
      if (body.length) nonEmpty++;
      if (body.some((r) => r.includes('studio, "pro"'))) sawQuoted = true;
    }
    expect(nonEmpty).toBeGreaterThanOrEqual(8);
    expect(sawQuoted).toBe(true);
  });

  it('the memory engine writes CSV only, and the analyses read either folder alike', async () => {
    const ev = join(dir.dir, 'bookings.csv');
    const mem = join(dir.dir, 'waist-memory');
    expect((await run('waist', '--events', ev, '--by', 'plan', '--out', mem)).code).toBe(0);
    expect(readdirSync(mem).filter((f) => f.endsWith('.parquet'))).toEqual([]);
    const a = await run('flows', '--waist', out, '--format', 'json');
    const b = await run('flows', '--waist', mem, '--format', 'json');
    expect(a.code, a.err).toBe(0);
    expect(a.out).toBe(b.out);
  });
});
