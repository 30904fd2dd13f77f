/**
 * Write a report to a folder: index.html, summary.md, and every table behind every chart as CSV and
 * JSON, plus the full results as JSON documents. Deterministic for the same input except the one
 * "Generated …" line of index.html and summary.md. The folder is replaced atomically and holds only
 * this run's files (output/atomic.ts).
 */
import { replaceFolder, type WriteHooks } from '../output/atomic.js';
import { toCsv } from '../output/csv.js';
import type { ReportModel } from './build.js';
import type { DataTable } from './charts/types.js';
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
 * Vega numbers gradient and clip ids with a counter for the whole process; give each chart its own,
 * so ids are unique on the page and the same on every run.
 */
export function localIds(svg: string, chart: string): string {
  const map = new Map<string, string>();
  return svg.replace(/\b(gradient_\d+|clip\d+)\b/g, (id) => {
    if (!map.has(id)) map.set(id, `${chart}-${map.size}`);
    return map.get(id)!;
  });
}

/** The report's files, name → content: every chart rendered. */
export async function reportFiles(m: ReportModel, generatedAt: string, onChart?: (done: number, total: number) => void): Promise<Map<string, string>> {
  const svgs: string[] = [];
  for (const c of m.charts) {
    svgs.push(localIds(await renderSvg(c.spec), c.id));
    onChart?.(svgs.length, m.charts.length);
  }
  const files = new Map<string, string>();
  files.set('index.html', reportHtml(m, svgs, generatedAt));
  files.set('summary.md', reportMarkdown(m, generatedAt));
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
