/**
 * The duckdb engine behind the engine seam (src/engines/types.ts): event files (CSV, NDJSON, Parquet,
 * gzip) or a table or view of a DuckDB database file, run as the compiled SQL on embedded DuckDB
 * (./run.ts). Only the waist comes back.
 */
import { mkdtempSync, rmSync, statSync } from 'node:fs';
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
 * DuckDB's memory limit for the engine of the commands, out of core beyond it (DuckDB's own default is
 * 80% of the machine's memory): 1 GB for event files of up to 1 GB on disk, 2 GB for larger ones and
 * for a database table (whose size is not known here). Measured (README, "Performance"): 10M events
 * (0.5 GB of CSV) peaked at 1.5 GB with 1 GB instead of 1.9 GB without a limit, for about 9% more
 * time; 100M events (1.6 GB of Parquet) ran out of a 1 GB limit (a step that does not spill) and
 * completed with 2 GB at a peak of 2.9 GB.
 */
export function duckdbMemoryLimit(source: EventSource): string {
  if (source.kind !== 'files') return '2GB';
  let bytes = 0;
  for (const f of source.files) {
    try {
      bytes += statSync(f).size;
    } catch {
      // a missing file is reported by the run
    }
  }
  return bytes <= 1e9 ? '1GB' : '2GB';
}

export class DuckdbEngine implements Engine {
  readonly name = 'duckdb';

  /** `options` default to {@link duckdbMemoryLimit} and a spill folder of the run's own in the temp folder, removed after. */
  constructor(private readonly options: DuckdbOptions = {}) {}

  async run(source: EventSource, rules: Rules, range: RangeOptions = {}): Promise<EngineRun> {
    const input = duckdbInput(source);
    const { runDuckdb } = await import('./run.js');
    // DuckDB spills beside a database file, or into ./.tmp for one in memory: never into the user's folder
    const spill = this.options.tempDirectory ? undefined : mkdtempSync(join(tmpdir(), 'tidemark-duckdb-'));
    try {
      return { waist: await runDuckdb(input, rules, range, { memoryLimit: duckdbMemoryLimit(source), tempDirectory: spill, ...this.options }) };
    } finally {
      if (spill) rmSync(spill, { recursive: true, force: true });
    }
  }

  /** Per-user rows would have to come back row by row: refused. */
  async classify(_source: EventSource, _rules: Rules, _range: RangeOptions, _sink: ClassifiedSink): Promise<EngineRun> {
    throw new TidemarkError('USAGE', 'the per-user classification needs the memory engine (the duckdb engine sends back only the count tables)', { key: 'engine' }, 'Use the memory engine for classify');
  }
}
