/**
 * The report in Markdown (summary.md): the story, the comparison, the terms, the longer findings, the
 * warnings and cautions, each chart's reading, and the tables. It must read cleanly as plain text
 * too, so data text is escaped only where Markdown would misread it (see {@link mdEscape}).
 */
import type { ReportModel } from './build.js';
import { escapeControls } from '../errors.js';
import { displayCell, type DataTable } from './charts/types.js';
import { comparisonText, lineText } from './story.js';

const ALNUM = /[\p{L}\p{N}]/u;
const SPACE = /\s/u;

/**
 * Escape a backslash, `*`, `_` or `~` only where Markdown could read it as an escape, emphasis or
 * strikethrough: a backslash before ASCII punctuation; the delimiters only when the text holds two or
 * more of one kind (one alone pairs with nothing), and then not inside a word for `_`
 * (`Sao_Paulo` is never emphasis, CommonMark §6.2) nor between spaces (`3 * 4`).
 */
function escapeDelimiters(s: string): string {
  const counts = { '*': 0, _: 0, '~': 0 } as Record<string, number>;
  for (const ch of s) if (ch in counts) counts[ch]++;
  let out = '';
  for (let i = 0; i < s.length; i++) {
    const ch = s[i];
    const prev = s[i - 1] ?? ' ', next = s[i + 1] ?? ' ';
    if (ch === '\\' && /[!-/:-@[-`{-~]/.test(next)) out += '\\\\';
    else if (ch in counts && counts[ch] >= 2 && !(SPACE.test(prev) && SPACE.test(next)) && !(ch === '_' && ALNUM.test(prev) && ALNUM.test(next))) out += `\\${ch}`;
    else out += ch;
  }
  return out;
}

/**
 * Escape data text for Markdown where, and only where, Markdown would misread it, so that the file
 * reads cleanly as plain text (`Sao_Paulo`, `a < b` and `R&D` stay as they are):
 * - line breaks become spaces, other control codes are shown escaped (`\u001b`), so the file is safe
 *   to print on a terminal; long text is cut with `…`;
 * - text that holds an HTML tag or autolink (`<` before a letter, `/`, `!` or `?`) has its `<` and `>`
 *   written as entities (many viewers render raw HTML); an `&` that would read as an entity becomes
 *   `&amp;`;
 * - `` ` `` (code), `|` (a table cell's end) always get a backslash; `[` and `]` when the text could
 *   form a link (`](` or `][`, and the `(` after it); `*`, `_`, `~` and `\` as in {@link escapeDelimiters};
 * - a start that would open a block (`#`, `>`, `-`, `+`, `*`, `=`, `1.` or `1)`, `[`) gets a backslash.
 * Rules from CommonMark 0.31 and the GitHub Flavored Markdown spec (tables, strikethrough).
 * @example mdEscape('Sao_Paulo & <b>x</b>') // 'Sao_Paulo & &lt;b&gt;x&lt;/b&gt;'
 */
export function mdEscape(value: unknown, max = 80): string {
  let s = String(value ?? '').replace(/[\r\n]+/g, ' ').trimStart();
  if (s.length > max) s = `${s.slice(0, max - 1)}…`;
  s = escapeControls(s);
  s = escapeDelimiters(s);
  s = s.replace(/&(?=#\d+;|#[xX][0-9A-Fa-f]+;|[A-Za-z][A-Za-z0-9]*;)/g, '&amp;');
  if (/<[A-Za-z/!?]/.test(s)) s = s.replace(/</g, '&lt;').replace(/>/g, '&gt;');
  s = s.replace(/[`|]/g, '\\$&');
  if (/\][([]/.test(s)) s = s.replace(/[[\]]/g, '\\$&').replace(/\\\]\(/g, '\\]\\(');
  s = s.replace(/^([#>+\-*=[]|\d+(?=[.)]))/, (m) => (/^\d/.test(m) ? `${m}\\` : `\\${m}`));
  return s.replace(/(\s)(#+)$/, (_, sp: string, h: string) => `${sp}${h.replace(/#/g, '\\#')}`);
}

export function mdTable(t: DataTable): string {
  const head = `| ${t.header.map((h) => mdEscape(h)).join(' | ')} |`;
  const rule = `|${t.header.map((_, i) => (i === 0 ? ' --- ' : ' ---: ')).join('|')}|`;
  const body = t.rows.map((r) => `| ${r.map((v, i) => mdEscape(displayCell(v, t.formats?.[i]), 48)).join(' | ')} |`);
  return [head, rule, ...body].join('\n');
}

function mdSection(s: ReportModel['sections'][number]): string[] {
  const out = [`## ${mdEscape(s.title, 200)}`, ''];
  for (const w of s.warnings) out.push(`- ${mdEscape(w, 2000)}`);
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
  const out: string[] = [`# ${mdEscape(m.title, 200)}`, '', mdEscape(m.subtitle, 300), '', `Generated ${mdEscape(generatedAt)} by tidemark. The same findings, short enough to paste into a message, are in digest.txt.`, ''];
  for (const s of m.sections.filter((x) => x.placement === 'first')) out.push(...mdSection(s));
  out.push('## Findings', '', mdEscape(comparisonText(m.comparison, m.grainWord), 400), '');
  for (const l of m.story) out.push(`- ${mdEscape(lineText(l), 2000)}`);
  if (m.terms.length) {
    out.push('', 'Terms:', '');
    for (const t of m.terms) out.push(`- ${mdEscape(`${t.term}: ${t.meaning}`, 400)}`);
  }
  if (m.findings.length) {
    out.push('', '### More detail', '');
    for (const f of m.findings) out.push(`- ${mdEscape(f.text, 2000)}`);
  }
  if (m.warnings.length) {
    out.push('', '### Read with care', '');
    for (const w of m.warnings) out.push(`- ${mdEscape(w, 2000)}`);
  }
  out.push('', '## Cautions', '');
  for (const c of m.cautions) out.push(`- ${mdEscape(c, 2000)}`);
  out.push('', '## Charts', '');
  for (const c of m.charts) {
    out.push(`### ${mdEscape(c.title, 200)}`, '', mdEscape(c.reading, 2000), '');
    if (c.note) out.push(mdEscape(c.note, 2000), '');
    out.push(`Data: ${c.table.name}.csv, ${c.table.name}.json`, '');
  }
  for (const t of m.tables) {
    out.push(`## ${mdEscape(t.title, 200)}`, '');
    if (t.note) out.push(mdEscape(t.note, 2000), '');
    out.push(mdTable(t), '');
  }
  for (const s of m.sections.filter((x) => x.placement === 'after-charts')) out.push(...mdSection(s));
  return `${out.join('\n').trimEnd()}\n`;
}
