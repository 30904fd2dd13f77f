/**
 * Write a report to a folder: index.html, summary.md, digest.txt, and every table behind every chart
 * as CSV and JSON, plus the full results as JSON documents. Deterministic for the same input except
 * the one "Generated …" line of index.html, summary.md and digest.txt. The folder is replaced
 * atomically and holds only this run's files (output/atomic.ts).
 */
import { replaceFolder, type WriteHooks } from '../output/atomic.js';
import { toCsv } from '../output/csv.js';
import type { ReportModel } from './build.js';
import type { Chart, DataTable } from './charts/types.js';
import { reportDigest } from './digest.js';
import { fitToFrame, narrowFrame, WIDE, type Frame, type Heading } from './frame.js';
import { reportHtml } from './html.js';
import { reportMarkdown } from './markdown.js';
import { renderSvg } from './vega.js';

export function tableCsv(t: DataTable): string {
  return toCsv(t.header, t.rows);
}

export function tableJson(t: DataTable): string {
  return `${JSON.stringify(t.rows.map((r) => Object.fromEntries(t.header.map((h, i) => [h, r[i]]))), null, 2)}\n`;
}

/**
 * Vega numbers gradient and clip ids with a counter for the whole process; give each drawing its own,
 * so ids are unique on the page and the same on every run.
 */
export function localIds(svg: string, chart: string): string {
  const map = new Map<string, string>();
  return svg.replace(/\b(gradient_\d+|clip\d+)\b/g, (id) => {
    if (!map.has(id)) map.set(id, `${chart}-${map.size}`);
    return map.get(id)!;
  });
}

/** One drawing of a chart: its SVG and the frame it was drawn in. */
export interface Drawing {
  svg: string;
  frame: Frame;
}

/** A chart drawn in both frames, with the heading shown above it. */
export interface RenderedChart {
  heading: Heading;
  wide: Drawing;
  narrow: Drawing;
}

/** Draw a chart in a frame: by its own `draw`, or by fitting its spec (whose title then becomes the heading). */
async function drawIn(c: Chart, f: Frame): Promise<{ drawing: Drawing; heading: Heading }> {
  const frame = c.maxWidth && f.width > c.maxWidth && !f.scroll ? { ...f, width: c.maxWidth } : f;
  if (c.draw) return { drawing: { svg: localIds(await renderSvg(c.draw(frame), frame), `${c.id}-${f.name}`), frame }, heading: { title: c.title, subtitle: c.subtitle } };
  const fitted = fitToFrame(c.spec, frame);
  return { drawing: { svg: localIds(await renderSvg(fitted.spec, frame), `${c.id}-${f.name}`), frame }, heading: { title: fitted.heading.title ?? c.title, subtitle: c.subtitle ?? fitted.heading.subtitle } };
}

/** Render a chart in the wide frame and in its narrow frame. */
export async function renderChart(c: Chart): Promise<RenderedChart> {
  const wide = await drawIn(c, WIDE);
  const narrow = await drawIn(c, narrowFrame(c.timeline));
  return { heading: wide.heading, wide: wide.drawing, narrow: narrow.drawing };
}

/** The report's files, name → content: every chart rendered. */
export async function reportFiles(m: ReportModel, generatedAt: string, onChart?: (done: number, total: number) => void): Promise<Map<string, string>> {
  const rendered: RenderedChart[] = [];
  for (const c of m.charts) {
    rendered.push(await renderChart(c));
    onChart?.(rendered.length, m.charts.length);
  }
  const files = new Map<string, string>();
  files.set('index.html', reportHtml(m, rendered, generatedAt));
  files.set('summary.md', reportMarkdown(m, generatedAt));
  files.set('digest.txt', reportDigest(m, generatedAt));
  for (const t of [...m.charts.map((c) => c.table), ...m.tables, ...m.sections.flatMap((s) => s.tables)]) {
    files.set(`${t.name}.csv`, tableCsv(t));
    files.set(`${t.name}.json`, tableJson(t));
  }
  for (const d of [...m.documents, ...m.sections.flatMap((s) => s.documents)]) files.set(`${d.name}.json`, `${JSON.stringify(d.value, null, 2)}\n`);
  return files;
}

/**
 * Render every chart and replace the folder `dir` with the report, atomically: a crash or a full disk
 * leaves the previous report whole. Returns the files written, relative to `dir`.
 * @throws TidemarkError FILE_UNWRITABLE (the disk is full, no permission, `dir` holds other files).
 */
export async function writeReport(m: ReportModel, dir: string, generatedAt: string, onChart?: (done: number, total: number) => void, hooks?: WriteHooks): Promise<string[]> {
  return replaceFolder(dir, await reportFiles(m, generatedAt, onChart), hooks);
}
