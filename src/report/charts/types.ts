import type { TopLevelSpec } from 'vega-lite';
import type { Frame, Timeline } from '../frame.js';

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

/** One entry of a chart's colour key, shown as HTML under the chart (it wraps; an SVG legend would be cut). */
export interface LegendItem {
  label: string;
  colour: string;
  /** How the swatch is drawn: a filled block (areas, bars, cells) or a line with this dash (`[]` solid). */
  dash?: readonly number[];
}

/** One chart of the report: its spec, its data, and a sentence read from its numbers. */
export interface Chart {
  id: string;
  title: string;
  /** A line under the title: what is measured, and how (shown as HTML, so it wraps). */
  subtitle?: string;
  /** One sentence computed from the chart's numbers. */
  reading: string;
  /** Optional caution or note shown under the chart. */
  note?: string;
  /** The spec at the wide frame. Charts without `draw` are fitted to each frame from it (frame.ts). */
  spec: TopLevelSpec;
  /** The spec for a frame (its width, text size, scrolling): used in place of `spec` when given. */
  draw?: (frame: Frame) => TopLevelSpec;
  /** Set on a time chart: its x periods; on a phone it scrolls when they need more room, opening at the latest. */
  timeline?: Timeline;
  /** The colour key as HTML; a chart that gives it draws no legend of its own. */
  legend?: LegendItem[];
  /** The widest the chart is worth drawing, px (a 5 × 5 heat map gains nothing from the page's width). */
  maxWidth?: number;
  table: DataTable;
}

/**
 * Width of the plotting area in a spec written for one size. The renderer fits every spec to its
 * frames (frame.ts), so this only sets the proportions of charts that do not draw per frame.
 */
export const WIDTH = 560;
