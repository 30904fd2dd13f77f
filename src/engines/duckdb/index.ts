/**
 * The duckdb engine behind the engine seam (src/engines/types.ts): event files (CSV, NDJSON, Parquet,
 * gzip) or a table or view of a DuckDB database file, run as the compiled SQL on embedded DuckDB
 * (./run.ts). Only the waist comes back.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { TidemarkError } from '../../errors.js';
import type { Rules } from '../../rules/schema.js';
import type { ClassifiedSink, Engine, EngineRun, EventSource, RangeOptions } from '../types.js';
// the run (and the native DuckDB binding) is loaded only when a run starts, so commands start at once
import type { DuckdbInput, DuckdbOptions } from './run.js';

/** The DuckDB input of an event source. @throws TidemarkError USAGE (key `query`) for a query source. */
export function duckdbInput(source: EventSource): DuckdbInput {
  switch (source.kind) {
    case 'files':
      return { files: source.files, format: source.format, skipBadRows: source.skipBadRows, delimiter: source.delimiter };
    case 'table':
      return { db: source.db, table: source.table, skipBadRows: source.skipBadRows };
    default:
      throw new TidemarkError('USAGE', 'the duckdb engine reads a table or view of a DuckDB database, not a query', { key: 'query' }, 'Make the query a view in the database and give its name as the table, or use the postgres engine');
  }
}

/**
 * DuckDB's memory limit for the engine of the commands: out of core beyond it (DuckDB's own default is
 * 80% of the machine's memory). At 10M events it kept the process's peak at 1.5 GB instead of 1.9 GB,
 * for about 9% more time (README, "Performance").
 */
export const DUCKDB_MEMORY_LIMIT = '1GB';

export class DuckdbEngine implements Engine {
  readonly name = 'duckdb';

  /** `options` default to {@link DUCKDB_MEMORY_LIMIT} and a spill folder of the run's own in the temp folder, removed after. */
  constructor(private readonly options: DuckdbOptions = {}) {}

  async run(source: EventSource, rules: Rules, range: RangeOptions = {}): Promise<EngineRun> {
    const input = duckdbInput(source);
    const { runDuckdb } = await import('./run.js');
    // DuckDB spills beside a database file, or into ./.tmp for one in memory: never into the user's folder
    const spill = this.options.tempDirectory ? undefined : mkdtempSync(join(tmpdir(), 'tidemark-duckdb-'));
    try {
      return { waist: await runDuckdb(input, rules, range, { memoryLimit: DUCKDB_MEMORY_LIMIT, tempDirectory: spill, ...this.options }) };
    } finally {
      if (spill) rmSync(spill, { recursive: true, force: true });
    }
  }

  /** Per-user rows would have to come back row by row: refused. */
  async classify(_source: EventSource, _rules: Rules, _range: RangeOptions, _sink: ClassifiedSink): Promise<EngineRun> {
    throw new TidemarkError('USAGE', 'the per-user classification needs the memory engine (the duckdb engine sends back only the count tables)', { key: 'engine' }, 'Use the memory engine for classify');
  }
}
