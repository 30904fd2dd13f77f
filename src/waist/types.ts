/**
 * A waist in memory: the manifest and the tables. Engines make one; `readWaist` reads one from a
 * folder; every analysis reads one (through {@link ./derive.ts analysisWaist}) and nothing else.
 */
import type { WaistTables } from '../flows/types.js';
import type { ReportSection } from '../report/sections/types.js';
import type { WaistManifest } from './manifest.js';

export interface Waist {
  manifest: WaistManifest;
  /**
   * The tables in full form: every period of the range (an incomplete last one included), duration
   * rows split by cohort, cohort rows with `lastActiveAgeBeforeFinal`, and window counts for cohorts
   * observed over up to WINDOW_MAX_AGE + 1 ages.
   */
  tables: WaistTables;
  /**
   * Optional: the report's sections computed from the events (the data check, behaviour analyses),
   * aggregates only, for an incomplete last period left out and kept (`sections.json`). A waist made
   * by SQL has none; the report then says they need events.
   */
  sections?: { leaveOut: ReportSection[]; keep: ReportSection[] };
}
