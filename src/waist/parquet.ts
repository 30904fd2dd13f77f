/**
 * The waist's tables as Parquet too, for engines that have a Parquet writer (DuckDB). The CSV tables
 * stay the contract that tidemark reads; the Parquet copies are for warehouses and notebooks. Counts
 * are BIGINT, every other column VARCHAR (period labels and segment values come back exactly as
 * written).
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { WAIST_TABLES, type TableName } from './tables.js';

/** Columns that hold counts (or ages, durations, flags): whole numbers. */
const NUMERIC = new Set(['users', 'retained', 'active', 'last_active', 'last_active_before_final', 'age', 'age_from', 'age_to', 'duration', 'observed']);

/** The Parquet file name of a table: `transitions.csv` → `transitions.parquet`. */
export function parquetName(csvFile: string): string {
  return csvFile.replace(/\.csv$/, '.parquet');
}

/**
 * Parquet copies of the CSV tables in `files` (as `waistFiles` gives them), name → bytes, written by
 * embedded DuckDB (loaded only here) with explicit column types.
 */
export async function waistParquetFiles(files: ReadonlyMap<string, string | Uint8Array>): Promise<Map<string, Uint8Array>> {
  const { DuckDBInstance } = await import('@duckdb/node-api');
  const dir = mkdtempSync(join(tmpdir(), 'tidemark-waist-parquet-'));
  const instance = await DuckDBInstance.create(':memory:');
  const c = await instance.connect();
  const out = new Map<string, Uint8Array>();
  try {
    for (const name of Object.keys(WAIST_TABLES) as TableName[]) {
      const spec = WAIST_TABLES[name];
      const text = files.get(spec.file);
      if (text === undefined) continue;
      const csv = join(dir, spec.file);
      const pq = join(dir, parquetName(spec.file));
      writeFileSync(csv, text);
      const types = spec.columns.map((col) => `'${col}': '${NUMERIC.has(col) ? 'BIGINT' : 'VARCHAR'}'`).join(', ');
      const q = (p: string) => `'${p.replace(/'/g, "''")}'`;
      await c.run(`COPY (SELECT * FROM read_csv(${q(csv)}, header = true, delim = ',', quote = '"', escape = '"', columns = {${types}})) TO ${q(pq)} (FORMAT parquet)`);
      out.set(parquetName(spec.file), new Uint8Array(readFileSync(pq)));
    }
  } finally {
    c.closeSync();
    instance.closeSync();
    rmSync(dir, { recursive: true, force: true });
  }
  return out;
}
