/**
 * The postgres engine behind the engine seam (src/engines/types.ts): the compiled SQL run on a live
 * PostgreSQL server over a table or view, or a query's result (./run.ts). Only the waist comes back.
 */
import { TidemarkError } from '../../errors.js';
import type { Rules } from '../../rules/schema.js';
import type { ClassifiedSink, Engine, EngineRun, EventSource, RangeOptions } from '../types.js';


export class PostgresEngine implements Engine {
  readonly name = 'postgres';

  async run(source: EventSource, rules: Rules, range: RangeOptions = {}): Promise<EngineRun> {
    if (source.kind === 'files') {
      throw new TidemarkError('USAGE', 'the postgres engine reads a table or a query on a server, not event files', { key: 'engine' }, 'Give the server and a table or query, or use the memory or duckdb engine for files');
    }
    const input = source.kind === 'table'
      ? { url: source.db, table: source.table, skipBadRows: source.skipBadRows }
      : { url: source.db, queryText: source.query, skipBadRows: source.skipBadRows };
    // pg is loaded only when a run starts, so commands start at once
    const { runPostgres } = await import('./run.js');
    return { waist: await runPostgres(input, rules, range) };
  }

  /** Per-user rows would have to come back from the server row by row: refused. */
  async classify(_source: EventSource, _rules: Rules, _range: RangeOptions, _sink: ClassifiedSink): Promise<EngineRun> {
    throw new TidemarkError('USAGE', 'the per-user classification needs the memory engine (the postgres engine sends back only the count tables)', { key: 'engine' }, 'Use the memory engine for classify');
  }
}
