import type { TopLevelSpec } from 'vega-lite';

/** The table behind a chart, written as DIR/<name>.csv and DIR/<name>.json. */
export interface DataTable {
  name: string;
  header: string[];
  rows: (string | number | boolean | null)[][];
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
