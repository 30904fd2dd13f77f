/**
 * The one place an engine is chosen. Add a new engine here (and to ENGINE_NAMES); every command
 * that reads events then offers it through `--engine`.
 */
import { TidemarkError, suggestion } from '../errors.js';
import type { EngineProgress } from './memory/index.js';
import type { ClassifiedSink, Engine, EngineRun, EventSource, RangeOptions } from './types.js';
import { DuckdbEngine } from './duckdb/index.js';
import { PostgresEngine } from './postgres/index.js';
import type { Rules } from '../rules/schema.js';

/**
 * The memory engine, its modules (the readers, the classifier, the aggregation) loaded when a run
 * starts: a run on another engine does not load them (as the duckdb and postgres engines load theirs).
 */
class MemoryEngineOnDemand implements Engine {
  readonly name = 'memory';

  constructor(private readonly o: { onProgress?: (p: EngineProgress) => void }) {}

  private async engine(): Promise<Engine> {
    const { MemoryEngine } = await import('./memory/index.js');
    return new MemoryEngine(this.o);
  }

  async run(source: EventSource, rules: Rules, range?: RangeOptions): Promise<EngineRun> {
    return (await this.engine()).run(source, rules, range);
  }

  async classify(source: EventSource, rules: Rules, range: RangeOptions, sink: ClassifiedSink): Promise<EngineRun> {
    return (await this.engine()).classify(source, rules, range, sink);
  }
}

export const ENGINE_NAMES = ['memory', 'duckdb', 'postgres'] as const;
export type EngineName = (typeof ENGINE_NAMES)[number];

/** The engine called `name`. @throws TidemarkError INPUT_INVALID (key `engine`) for an unknown name. */
export function createEngine(name: string = 'memory', o: { onProgress?: (p: EngineProgress) => void } = {}): Engine {
  switch (name) {
    case 'memory':
      return new MemoryEngineOnDemand(o);
    case 'duckdb':
      return new DuckdbEngine();
    case 'postgres':
      return new PostgresEngine();
    default:
      throw new TidemarkError('INPUT_INVALID', `no engine called '${name}'`, { key: 'engine' }, suggestion(name, ENGINE_NAMES) ?? `Engines: ${ENGINE_NAMES.join(', ')}`);
  }
}
