/**
 * The engine boundary. An engine turns an event source and rules into the waist tables
 * (src/flows/types.ts) and, on request, the per-user classification. Every analysis reads only the
 * waist, so a new engine (out-of-core, warehouse SQL) needs to produce just these.
 */
import type { RowAccount } from '../ingest/eventLog.js';
import type { EventFormat } from '../ingest/read.js';
import type { Rules } from '../rules/schema.js';
import type { WaistTables } from '../flows/types.js';

export interface EventSource {
  files: string[];
  format?: EventFormat;
  skipBadRows?: boolean;
  /** CSV field delimiter (default ','). */
  delimiter?: string;
}

export interface RangeOptions {
  /** A date (YYYY-MM-DD) inside the first period to output. History before it still feeds states. */
  from?: string;
  /** A date inside the last period to analyse. Later events are dropped. */
  to?: string;
  /** Overrides rules.warmup. */
  warmup?: number;
  /** An attribute column to split retention cells by (WaistTables.segmentCells). */
  by?: string;
  /**
   * Split by `by` even when its values are nearly unique per user (lifecycle/perPerson.ts); without
   * it such a column is refused. Sentences never name the values of such a column either way.
   */
  allowPerPersonColumn?: boolean;
  /**
   * An incomplete last period (see {@link LastPeriod}): 'keep' it (the default) or 'drop' it, so that
   * its rows are counted in `RowAccount.partial` and every table ends with the period before. It is
   * kept anyway when dropping it would leave fewer than two periods, or none past the warm-up.
   */
  partial?: 'keep' | 'drop';
}

/** How complete the last period is: the latest event's position in it, 0–1. */
export interface LastPeriod {
  label: string;
  /** (latest event − period start) / period length, in wall-clock time. */
  coverage: number;
  /** False when the data stop before the last seventh of the period (and no later event was cut by --to). */
  complete: boolean;
  /** True when the engine left this period out (`partial: 'drop'`); the tables then end with the period before. */
  leftOut: boolean;
}

export interface EngineResult {
  waist: WaistTables;
  rows: RowAccount;
  lastPeriod: LastPeriod;
  /** Used rows whose period is the last one of the range. */
  rowsInLastPeriod: number;
  /** Number of distinct users with at least one active period in the range. */
  users: number;
  /** Rows per event name, most frequent first (at most 50), and whether each counts toward activity. */
  events: { name: string; rows: number; key: boolean }[];
  /** Attribute columns kept from the input, with their number of distinct values. */
  attributes: { name: string; values: number }[];
  /** Warnings about the data, one line each (rows that stretch the range far beyond the bulk). */
  warnings: string[];
}

/** One classified user-period, for `tidemark classify`. */
export interface ClassifiedRow {
  user: string;
  period: string;
  state: string;
}

export interface Engine {
  readonly name: string;
  run(source: EventSource, rules: Rules, range?: RangeOptions): Promise<EngineResult>;
  /** Rows sorted by user id, then period. */
  classify(source: EventSource, rules: Rules, range?: RangeOptions): Promise<{ rows: ClassifiedRow[]; result: EngineResult }>;
}
