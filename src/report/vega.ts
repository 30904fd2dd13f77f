/**
 * Vega-Lite specs → inline SVG, in Node (no browser, no network). The renderer is Vega's SVG string
 * renderer; every text it writes is XML-escaped by Vega itself.
 */
import * as vega from 'vega';
import * as vl from 'vega-lite';
import type { TopLevelSpec } from 'vega-lite';
import { frameConfig, type Frame } from './frame.js';

/** Shared look: fonts, sizes and axis style for every chart. */
export const CHART_CONFIG = {
  font: 'DejaVu Sans, Verdana, Segoe UI, Helvetica, Arial, sans-serif',
  background: 'white',
  view: { stroke: null },
  axis: { labelFontSize: 11, titleFontSize: 12, titleFontWeight: 'normal', gridColor: '#e6e9ef', domainColor: '#9aa3ad', tickColor: '#9aa3ad', labelColor: '#33414e', titleColor: '#33414e' },
  legend: { labelFontSize: 11, titleFontSize: 12, orient: 'bottom', direction: 'horizontal', labelLimit: 320 },
  title: { fontSize: 14, fontWeight: 'bold', anchor: 'start', offset: 10 },
} as const;

const isObject = (v: unknown): v is Record<string, unknown> => typeof v === 'object' && v !== null && !Array.isArray(v);

/** Merge config objects key by key (later wins; nested objects merged, arrays replaced). */
export function mergeConfig(...configs: unknown[]): Record<string, unknown> {
  const out: Record<string, unknown> = {};
  for (const c of configs) {
    if (!isObject(c)) continue;
    for (const [k, v] of Object.entries(c)) out[k] = isObject(v) && isObject(out[k]) ? mergeConfig(out[k], v) : v;
  }
  return out;
}

/**
 * Render one Vega-Lite spec to an SVG string, with the shared look and, when given, the frame's text
 * sizes and legend columns (the spec's own config wins). Rejects a spec that Vega-Lite cannot compile.
 */
export async function renderSvg(spec: TopLevelSpec, frame?: Frame): Promise<string> {
  const full = { ...spec, config: mergeConfig(CHART_CONFIG, frame ? frameConfig(frame) : {}, spec.config ?? {}) } as TopLevelSpec;
  const compiled = vl.compile(full).spec;
  const view = new vega.View(vega.parse(compiled), { renderer: 'none', logLevel: vega.Error });
  try {
    const svg = await view.toSVG();
    // Responsive: keep the viewBox, let CSS size the picture
    return svg.replace(/^<svg([^>]*) width="([\d.]+)" height="([\d.]+)"/, '<svg$1 width="$2" height="$3" preserveAspectRatio="xMinYMin meet"');
  } finally {
    view.finalize();
  }
}
