/**
 * Frames: the sizes a chart is drawn at. A static SVG cannot reflow (Vega-Lite's `width: 'container'`
 * needs a browser and a script), so every chart is drawn twice — in the wide frame, the page's full
 * text width, which CSS scales down a little on a narrower window; and in the narrow frame, a phone's
 * width, shown instead below {@link NARROW_BELOW} px. A time chart whose periods would be too tight in
 * the narrow frame is drawn wider there and scrolls sideways, opening at the latest period (the
 * scroll box is laid out right to left: see html.ts). Titles and legends are HTML around the SVG, so
 * they wrap instead of being cut.
 */
import type { TopLevelSpec } from 'vega-lite';

export interface Frame {
  name: 'wide' | 'narrow';
  /** Width of the whole SVG in px: plot, axes and labels. */
  width: number;
  /** Size of axis labels and text marks in px (axis titles are one px larger). */
  fontSize: number;
  /** Drawn wider than the screen: the chart scrolls sideways and puts its value axis on the right. */
  scroll: boolean;
}

/** The page's text width in px (html.ts: main is 980 px wide with 20 px padding on each side). */
export const PAGE_WIDTH = 940;
/** Below this window width (px) the page shows the narrow frames. */
export const NARROW_BELOW = 700;
/** The narrow frame is shown up to this width: 1.5× its own, so its text stays below 17 px. */
export const NARROW_MAX = 540;

export const WIDE: Frame = { name: 'wide', width: PAGE_WIDTH, fontSize: 12, scroll: false };
export const NARROW: Frame = { name: 'narrow', width: 360, fontSize: 11, scroll: false };

/** A time chart's periods, and the fewest px a period needs in the narrow frame before it scrolls. */
export interface Timeline {
  periods: readonly string[];
  minStep: number;
}

/** The widest a scrolling narrow frame is drawn, px (ten phone screens): longer spans draw their periods closer. */
export const SCROLL_MAX = 3600;

/** The narrow frame of a chart: wider than a phone (up to {@link SCROLL_MAX}), and scrolling, when its periods need the room. */
export function narrowFrame(timeline?: Timeline): Frame {
  if (!timeline) return NARROW;
  const need = timeline.periods.length * timeline.minStep + 70;
  return need > NARROW.width ? { ...NARROW, width: Math.min(SCROLL_MAX, Math.ceil(need)), scroll: true } : NARROW;
}

/** Room left for the plot in a frame: the width less a value axis and its title (an estimate for tick spacing). */
export function plotWidth(f: Frame, axisPx = 64): number {
  return Math.max(40, f.width - axisPx);
}

/** Vega-Lite config for a frame: text sizes, and legends that wrap into columns that fit the width. */
export function frameConfig(f: Frame): Record<string, unknown> {
  return {
    axis: { labelFontSize: f.fontSize, titleFontSize: f.fontSize + 1 },
    legend: { labelFontSize: f.fontSize, titleFontSize: f.fontSize + 1, columns: Math.max(1, Math.floor(f.width / 150)), labelLimit: Math.max(80, Math.floor(f.width / 2) - 40) },
    text: { fontSize: f.fontSize },
  };
}

/** A chart title pulled out of a spec, shown as HTML above the SVG so that it wraps. */
export interface Heading {
  title?: string;
  subtitle?: string;
}

const textOf = (t: unknown): string | undefined => (typeof t === 'string' ? t : Array.isArray(t) ? t.join(' ') : undefined);

/**
 * Fit a spec written for one width to a frame: its title goes out (to be shown as HTML), the SVG is
 * exactly the frame's width (`autosize: fit-x`: Vega shrinks the plot to leave room for axes and
 * labels), and the frame's text sizes and legend columns apply. For charts that do not draw
 * themselves per frame (see `Chart.draw`).
 */
export function fitToFrame(spec: TopLevelSpec, f: Frame): { spec: TopLevelSpec; heading: Heading } {
  const s = { ...(spec as unknown as Record<string, unknown>) };
  const t = s.title as string | { text?: unknown; subtitle?: unknown } | undefined;
  const heading: Heading = typeof t === 'string' ? { title: t } : t ? { title: textOf(t.text), subtitle: textOf(t.subtitle) } : {};
  delete s.title;
  s.width = f.width;
  s.autosize = { type: 'fit-x', contains: 'padding' };
  return { spec: fitLegends(s, f) as unknown as TopLevelSpec, heading };
}

/** Channels that may draw a legend. */
const LEGEND_CHANNELS = ['color', 'fill', 'stroke', 'strokeDash', 'shape', 'size', 'opacity'];

/**
 * Give every legend of a spec columns that fit the frame, and labels that fit a column: a legend's
 * own settings (an encoding's `legend`) win over config, so they are set on each encoding. On a narrow
 * frame, one column, so that a long label ("no change (mix as at origin)") is shown whole.
 */
export function fitLegends(spec: Record<string, unknown>, f: Frame): Record<string, unknown> {
  const columns = f.name === 'narrow' ? 1 : Math.max(1, Math.floor(f.width / 200));
  const labelLimit = Math.floor(f.width / columns) - 40;
  const visit = (node: unknown): unknown => {
    if (Array.isArray(node)) return node.map(visit);
    if (typeof node !== 'object' || node === null) return node;
    const out: Record<string, unknown> = {};
    for (const [k, v] of Object.entries(node)) out[k] = k === 'data' ? v : visit(v);
    const enc = out.encoding as Record<string, Record<string, unknown> | undefined> | undefined;
    if (enc) {
      for (const ch of LEGEND_CHANNELS) {
        const c = enc[ch];
        if (!c || typeof c !== 'object' || c.legend === null || (!('field' in c) && !('condition' in c))) continue;
        const own = (c.legend ?? {}) as Record<string, unknown>;
        enc[ch] = { ...c, legend: { ...own, columns, labelLimit: Math.min(Number(own.labelLimit ?? labelLimit), labelLimit) } };
      }
    }
    return out;
  };
  return visit(spec) as Record<string, unknown>;
}
