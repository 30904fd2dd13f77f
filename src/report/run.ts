/**
 * The report job: from a waist in full form to the report model, leaving out an incomplete last
 * period unless asked to keep it (from the waist already in memory: the events are read once). Pure.
 */
import { analysisWaist, partialPeriodSentence, type DroppedPeriod } from '../waist/derive.js';
import type { Waist } from '../waist/types.js';
import { buildReport, type ReportModel, type ReportOptions } from './build.js';

export interface ReportJobOptions extends Omit<ReportOptions, 'droppedPartial'> {
  /** Keep an incomplete last period. */
  includePartial?: boolean;
}

/** The report of a waist, and the incomplete last period it left out, if any. */
export function reportOf(full: Waist, o: ReportJobOptions = {}): { model: ReportModel; waist: Waist; dropped?: DroppedPeriod } {
  const { waist, dropped } = analysisWaist(full, { includePartial: o.includePartial });
  const sentence = partialPeriodSentence(waist, dropped, { leaveOut: true, asked: Boolean(o.includePartial) });
  return { model: buildReport(waist, { ...o, droppedPartial: sentence }), waist, dropped };
}
