import type { TopLevelSpec } from 'vega-lite';

/** The table behind a chart, written as DIR/<name>.csv and DIR/<name>.json. */
export interface DataTable {
  name: string;
  header: string[];
  rows: (string | number | boolean | null)[][];
  /** How to show each column in HTML and Markdown: whole number, share as a percentage, decimal, text. */
  formats?: ('int' | 'pct' | 'num' | 'text')[];
}

/** A cell for display, by its column's format. */
export function displayCell(v: unknown, format: 'int' | 'pct' | 'num' | 'text' | undefined): string {
  if (v === null || v === undefined || (typeof v === 'number' && !Number.isFinite(v))) return '–';
  if (typeof v === 'boolean') return v ? 'yes' : 'no';
  if (typeof v !== 'number') return String(v);
  switch (format ?? (Number.isInteger(v) ? 'int' : 'num')) {
    case 'int':
      return Math.round(v).toLocaleString('en-US');
    case 'pct':
      return `${(v * 100).toFixed(1)}%`;
    case 'num':
      return v.toFixed(2);
    default:
      return String(v);
  }
}

/** One chart of the report: its spec, its data, and a sentence read from its numbers. */
export interface Chart {
  id: string;
  title: string;
  /** One sentence computed from the chart's numbers. */
  reading: string;
  /** Optional caution or note shown under the chart. */
  note?: string;
  spec: TopLevelSpec;
  table: DataTable;
}

/** Width of the plotting area: charts scale down by CSS on narrow screens. */
export const WIDTH = 560;
