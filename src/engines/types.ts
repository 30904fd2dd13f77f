/**
 * The engine boundary. An engine turns an event source and rules into a waist (src/waist/): the
 * small count tables every analysis reads, with their manifest. It may also stream the per-user
 * classification to a sink. An engine that produces the same waist (an out-of-core or warehouse
 * engine) feeds every analysis unchanged.
 */
import type { EventFormat } from '../ingest/read.js';
import type { Rules } from '../rules/schema.js';
import type { Waist } from '../waist/types.js';

/** Where the events are: files, a table or view in a database, or a query's result. */
export type EventSource =
  | {
      kind: 'files';
      files: string[];
      format?: EventFormat;
      skipBadRows?: boolean;
      /** CSV field delimiter (default ','). */
      delimiter?: string;
    }
  | { kind: 'table'; db: string; table: string; skipBadRows?: boolean }
  /** `query`: the text of one SELECT whose rows are the events. */
  | { kind: 'query'; db: string; query: string; skipBadRows?: boolean };

/** Event files as a source. */
export function filesSource(files: string[], o: { format?: EventFormat; skipBadRows?: boolean; delimiter?: string } = {}): EventSource {
  return { kind: 'files', files, ...o };
}

export interface RangeOptions {
  /** A date (YYYY-MM-DD) inside the first period to output. History before it still feeds states. */
  from?: string;
  /** A date inside the last period to analyse. Later events are dropped. */
  to?: string;
  /** Overrides rules.warmup. */
  warmup?: number;
  /** An attribute column to split retention cells and durations by. */
  by?: string;
  /**
   * Split by `by` even when its values are nearly unique per user (lifecycle/perPerson.ts); without
   * it such a column is refused. Sentences never name the values of such a column either way.
   */
  allowPerPersonColumn?: boolean;
}

/** How complete the last period is: the latest event's position in it, 0–1. */
export interface LastPeriod {
  label: string;
  /** (latest event − period start) / period length, in wall-clock time. */
  coverage: number;
  /** False when the data stop before the last seventh of the period (and no later event was cut by --to). */
  complete: boolean;
}

/** What an engine run gives: the waist in full form (every period, an incomplete last one included). */
export interface EngineRun {
  waist: Waist;
}

/** Receives classified user-periods in order: by user id (code-unit order), then period. */
export interface ClassifiedSink {
  row(user: string, period: string, state: string): void;
}

export interface Engine {
  readonly name: string;
  run(source: EventSource, rules: Rules, range?: RangeOptions): Promise<EngineRun>;
  /** Stream the classification to `sink`, and give the run's waist. */
  classify(source: EventSource, rules: Rules, range: RangeOptions, sink: ClassifiedSink): Promise<EngineRun>;
}
