/** The report's findings in Markdown (summary.md): the same text as the page, and its tables. */
import type { ReportModel } from './build.js';
import { escapeControls } from '../errors.js';
import { displayCell, type DataTable } from './charts/types.js';

/**
 * Escape data text for Markdown: HTML-significant characters become entities (many viewers render raw
 * HTML), inline Markdown punctuation gets a backslash (so no emphasis, code, table cell or link can
 * form), line breaks become spaces and other control codes are shown escaped (`\u001b`), so the file
 * is safe to print on a terminal.
 */
export function mdEscape(value: unknown, max = 80): string {
  let s = String(value ?? '').replace(/[\r\n]+/g, ' ');
  if (s.length > max) s = `${s.slice(0, max - 1)}…`;
  return escapeControls(s)
    .replace(/&/g, '&amp;')
    .replace(/</g, '&lt;')
    .replace(/>/g, '&gt;')
    .replace(/([\\`*_[\]|~])/g, '\\$1')
    .replace(/\\\]\(/g, '\\]\\(');
}

export function mdTable(t: DataTable): string {
  const head = `| ${t.header.map((h) => mdEscape(h)).join(' | ')} |`;
  const rule = `|${t.header.map((_, i) => (i === 0 ? ' --- ' : ' ---: ')).join('|')}|`;
  const body = t.rows.map((r) => `| ${r.map((v, i) => mdEscape(displayCell(v, t.formats?.[i]), 48)).join(' | ')} |`);
  return [head, rule, ...body].join('\n');
}

function mdSection(s: ReportModel['sections'][number]): string[] {
  const out = [`## ${mdEscape(s.title, 200)}`, ''];
  for (const w of s.warnings) out.push(`- **${mdEscape(w, 2000)}**`);
  if (s.warnings.length) out.push('');
  for (const p of s.paragraphs) out.push(mdEscape(p, 2000), '');
  for (const t of s.tables) {
    out.push(`### ${mdEscape(t.title, 200)}`, '');
    if (t.note) out.push(mdEscape(t.note, 2000), '');
    out.push(mdTable(t), '');
  }
  return out;
}

export function reportMarkdown(m: ReportModel, generatedAt: string): string {
  const out: string[] = [`# ${mdEscape(m.title, 200)}`, '', mdEscape(m.subtitle, 300), '', `Generated ${mdEscape(generatedAt)} by tidemark.`, ''];
  for (const s of m.sections.filter((x) => x.placement === 'first')) out.push(...mdSection(s));
  out.push('## Findings', '');
  for (const f of m.findings) out.push(`- ${mdEscape(f.text, 2000)}`);
  if (m.warnings.length) {
    out.push('', '**Read with care**', '');
    for (const w of m.warnings) out.push(`- ${mdEscape(w, 2000)}`);
  }
  out.push('', '## Cautions', '');
  for (const c of m.cautions) out.push(`- ${mdEscape(c, 2000)}`);
  out.push('', '## Charts', '');
  for (const c of m.charts) {
    out.push(`### ${mdEscape(c.title, 200)}`, '', mdEscape(c.reading, 2000), '');
    if (c.note) out.push(`_${mdEscape(c.note, 2000)}_`, '');
    out.push(`Data: \`${c.table.name}.csv\`, \`${c.table.name}.json\``, '');
  }
  for (const t of m.tables) {
    out.push(`## ${mdEscape(t.title, 200)}`, '');
    if (t.note) out.push(mdEscape(t.note, 2000), '');
    out.push(mdTable(t), '');
  }
  for (const s of m.sections.filter((x) => x.placement === 'after-charts')) out.push(...mdSection(s));
  return `${out.join('\n').trimEnd()}\n`;
}
