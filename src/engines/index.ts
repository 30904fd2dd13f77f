/**
 * The one place an engine is chosen. Add a new engine here (and to ENGINE_NAMES); every command
 * that reads events then offers it through `--engine`.
 */
import { TidemarkError, suggestion } from '../errors.js';
import { MemoryEngine, type EngineProgress } from './memory/index.js';
import type { Engine } from './types.js';
import { DuckdbEngine } from './duckdb/index.js';
import { PostgresEngine } from './postgres/index.js';

export const ENGINE_NAMES = ['memory', 'duckdb', 'postgres'] as const;
export type EngineName = (typeof ENGINE_NAMES)[number];

/** The engine called `name`. @throws TidemarkError INPUT_INVALID (key `engine`) for an unknown name. */
export function createEngine(name: string = 'memory', o: { onProgress?: (p: EngineProgress) => void } = {}): Engine {
  switch (name) {
    case 'memory':
      return new MemoryEngine(o);
    case 'duckdb':
      return new DuckdbEngine();
    case 'postgres':
      return new PostgresEngine();
    default:
      throw new TidemarkError('INPUT_INVALID', `no engine called '${name}'`, { key: 'engine' }, suggestion(name, ENGINE_NAMES) ?? `Engines: ${ENGINE_NAMES.join(', ')}`);
  }
}
