/**
 * The conformance suite's list of engines. Every test in test/core runs once per engine named here,
 * through these two functions: a new engine joins the suite by adding its name to ENGINES.
 */
import { createEngine } from '../../src/engines/index.js';
import type { EventSource, LastPeriod, RangeOptions } from '../../src/engines/types.js';
import type { WaistTables } from '../../src/flows/types.js';
import type { RowAccount } from '../../src/ingest/eventLog.js';
import type { Rules } from '../../src/rules/schema.js';
import { analysisWaist } from '../../src/waist/derive.js';
import type { WaistManifest } from '../../src/waist/manifest.js';
import type { Waist } from '../../src/waist/types.js';

export const ENGINES: readonly string[] = ['memory'];

/** One classified user-period. */
export interface ClassifiedRow {
  user: string;
  period: string;
  state: string;
}

/** An engine run as the tests read it: the analysis tables (every period kept) and the manifest's figures. */
export interface RunResult {
  waist: WaistTables;
  rows: RowAccount;
  users: number;
  lastPeriod: LastPeriod;
  manifest: WaistManifest;
  full: Waist;
}

function resultOf(full: Waist): RunResult {
  const { waist } = analysisWaist(full, { includePartial: true });
  const m = waist.manifest;
  return { waist: waist.tables, rows: m.rows as unknown as RowAccount, users: m.users, lastPeriod: m.lastPeriod, manifest: m, full };
}

/** Run `engine` on a source. */
export async function runWith(engine: string, source: EventSource, rules: Rules, range: RangeOptions = {}): Promise<RunResult> {
  return resultOf((await createEngine(engine).run(source, rules, range)).waist);
}

/** Run `engine` and collect its classification. */
export async function classifyWith(engine: string, source: EventSource, rules: Rules, range: RangeOptions = {}): Promise<{ rows: ClassifiedRow[]; result: RunResult }> {
  const rows: ClassifiedRow[] = [];
  const { waist } = await createEngine(engine).classify(source, rules, range, { row: (user, period, state) => rows.push({ user, period, state }) });
  return { rows, result: resultOf(waist) };
}
