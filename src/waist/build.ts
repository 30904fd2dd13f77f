/** Assemble a waist's manifest from what an engine counted and the rules it ran. */
import type { EngineResult } from '../engines/types.js';
import { bandLabels } from '../flows/aggregate.js';
import { stateTable } from '../lifecycle/states.js';
import { GRAIN_NOUN } from '../periods/calendar.js';
import type { Rules } from '../rules/schema.js';
import { WAIST_FORMAT, WAIST_VERSION, type WaistManifest } from './manifest.js';
import type { Waist } from './types.js';

export const TIDEMARK_VERSION = '0.2.0';

/** The waist of one engine run. */
export function waistFromResult(result: EngineResult, rules: Rules, engine: string): Waist {
  const w = result.waist;
  const manifest: WaistManifest = {
    format: WAIST_FORMAT,
    version: WAIST_VERSION,
    rules: {
      name: rules.name ?? null,
      version: rules.version ?? null,
      grain: rules.grain,
      weekStart: rules.weekStart,
      timezone: rules.timezone,
      lapseLimit: rules.lapseLimit,
      minEvents: rules.activity.minEvents,
      keyEvents: rules.activity.keyEvents ?? null,
      tenureEdges: [...rules.tenureBands],
      tenureLabels: bandLabels(rules.tenureBands),
      warmup: w.warmup,
      minCell: rules.minCell,
    },
    states: stateTable({ lapseLimit: rules.lapseLimit, minEvents: rules.activity.minEvents }, GRAIN_NOUN[rules.grain]),
    engine: { name: engine, version: TIDEMARK_VERSION },
    periods: [...w.periods],
    rows: { ...result.rows } as unknown as WaistManifest['rows'],
    rowsInLastPeriod: result.rowsInLastPeriod,
    lastPeriod: { label: result.lastPeriod.label, coverage: result.lastPeriod.coverage, complete: result.lastPeriod.complete },
    users: result.users,
    events: result.events.map((e) => ({ ...e })),
    attributes: result.attributes.map((a) => ({ ...a })),
    by: w.segmentCells?.by ?? null,
    byPerPerson: w.segmentCells?.perPerson ?? false,
  };
  return { manifest, tables: w };
}
