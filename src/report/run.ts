/**
 * The report job: from a waist in full form to the report model, leaving out an incomplete last
 * period unless asked to keep it (from the waist already in memory: the events are read once). Pure.
 */
import { analysisWaist, partialPeriodSentence, type DroppedPeriod } from '../waist/derive.js';
import type { Waist } from '../waist/types.js';
import { buildReport, type ReportModel, type ReportOptions } from './build.js';
import type { ReportSection } from './sections/types.js';

/** In place of the data check, for a waist that holds no sections (one built by SQL, say). */
const NO_SECTIONS: ReportSection = {
  id: 'data-check', title: 'Data check', placement: 'first', warnings: [], tables: [], documents: [],
  paragraphs: ['This report was built from a waist that holds only counts, so the data check and the behaviour sections, which need every event, are not shown. Build the report from the events, or the waist with tidemark waist, to see them.'],
};

export interface ReportJobOptions extends Omit<ReportOptions, 'droppedPartial' | 'sections'> {
  /** Keep an incomplete last period. */
  includePartial?: boolean;
}

/** The report of a waist, and the incomplete last period it left out, if any. */
export function reportOf(full: Waist, o: ReportJobOptions = {}): { model: ReportModel; waist: Waist; dropped?: DroppedPeriod } {
  const { waist, dropped } = analysisWaist(full, { includePartial: o.includePartial });
  const sentence = partialPeriodSentence(waist, dropped, { leaveOut: true, asked: Boolean(o.includePartial) });
  const sections = full.sections ? (dropped ? full.sections.leaveOut : full.sections.keep) : [NO_SECTIONS];
  return { model: buildReport(waist, { ...o, droppedPartial: sentence, sections }), waist, dropped };
}
