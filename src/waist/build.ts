/** Assemble a waist's manifest from what an engine counted and the rules it ran. */
import { bandLabels } from '../flows/tenure.js';
import type { RowAccount } from '../ingest/eventLog.js';
import { lifecycleStates } from '../lifecycle/states.js';
import { GRAIN_NOUN } from '../periods/calendar.js';
import type { Rules } from '../rules/schema.js';
import { WAIST_FORMAT, WAIST_VERSION, type WaistManifest } from './manifest.js';

/** The version of tidemark written into a waist's manifest. */
export const TIDEMARK_VERSION = '0.2.0';

export interface ManifestInput {
  rules: Rules;
  /** The warm-up in effect (the rules' or an override). */
  warmup: number;
  periods: string[];
  engine: string;
  rows: RowAccount;
  rowsInLastPeriod: number;
  lastPeriod: WaistManifest['lastPeriod'];
  users: number;
  events: WaistManifest['events'];
  attributes: WaistManifest['attributes'];
  by: string | null;
  byPerPerson: boolean;
  warnings: string[];
}

/** The manifest of one engine run. */
export function makeManifest(i: ManifestInput): WaistManifest {
  const r = i.rules;
  return {
    format: WAIST_FORMAT,
    version: WAIST_VERSION,
    rules: {
      name: r.name ?? null,
      version: r.version ?? null,
      grain: r.grain,
      weekStart: r.weekStart,
      timezone: r.timezone,
      lapseLimit: r.lapseLimit,
      minEvents: r.activity.minEvents,
      keyEvents: r.activity.keyEvents ? [...r.activity.keyEvents] : null,
      tenureEdges: [...r.tenureBands],
      tenureLabels: bandLabels(r.tenureBands),
      warmup: i.warmup,
      minCell: r.minCell,
      splits: r.splits.map((x) => ({ ...x, names: [...x.names] as [string, string], ...(x.labels ? { labels: [...x.labels] as [string, string] } : {}) })),
    },
    states: lifecycleStates(r, GRAIN_NOUN[r.grain]),
    engine: { name: i.engine, version: TIDEMARK_VERSION },
    periods: [...i.periods],
    rows: { ...i.rows, lines: { ...i.rows.lines }, rejected: { ...i.rows.rejected } } as unknown as WaistManifest['rows'],
    rowsInLastPeriod: i.rowsInLastPeriod,
    lastPeriod: { ...i.lastPeriod },
    users: i.users,
    events: i.events.map((e) => ({ ...e })),
    attributes: i.attributes.map((a) => ({ ...a })),
    by: i.by,
    byPerPerson: i.byPerPerson,
    warnings: [...i.warnings],
  };
}
