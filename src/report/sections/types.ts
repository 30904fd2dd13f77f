/**
 * A report section written by an analysis outside the waist (the behaviour analyses read events):
 * paragraphs and tables, placed first (the data check) or after the charts. Rendered by html.ts and
 * markdown.ts; its tables and documents are written as files by write.ts.
 */
import type { DataTable } from '../charts/types.js';

export interface ReportSection {
  id: string;
  title: string;
  /** 'first': before the findings and every chart (the data check); 'after-charts': after the charts. */
  placement: 'first' | 'after-charts';
  /** Paragraphs of text (escaped when rendered). */
  paragraphs: string[];
  /** Items flagged as warnings, shown highlighted (escaped when rendered). */
  warnings: string[];
  tables: (DataTable & { title: string; note?: string })[];
  documents: { name: string; value: unknown }[];
}
