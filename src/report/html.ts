/**
 * The report page: one self-contained HTML file. Inline CSS and inline SVG only: no script, no font,
 * no image and no request of any kind, so it reads offline and as a mail attachment. Every string
 * from data is escaped (escape.ts); the SVG comes from Vega, which escapes its own text.
 */
import type { ReportModel } from './build.js';
import { displayCell, type DataTable } from './charts/types.js';
import { escapeHtml as e, escapeShort } from './escape.js';

const CSS = `
:root { --ink: #1b2733; --muted: #5b6875; --line: #dde3ea; --paper: #ffffff; --wash: #f4f7fb; --warn: #8a4b12; --warnbg: #fff4e5; }
* { box-sizing: border-box; }
html { -webkit-text-size-adjust: 100%; }
body { margin: 0; background: var(--wash); color: var(--ink); font: 15px/1.5 "DejaVu Sans", Verdana, "Segoe UI", Helvetica, Arial, sans-serif; }
main { max-width: 980px; margin: 0 auto; padding: 24px 20px 48px; background: var(--paper); }
h1 { font-size: 24px; margin: 0 0 4px; line-height: 1.25; }
h2 { font-size: 18px; margin: 32px 0 8px; border-bottom: 1px solid var(--line); padding-bottom: 4px; }
.sub, .stamp { color: var(--muted); margin: 0; }
.stamp { font-size: 12px; margin-top: 4px; }
ul.findings { padding-left: 20px; }
ul.findings li { margin: 6px 0; }
.warnings { background: var(--warnbg); border-left: 4px solid #c4622d; padding: 8px 14px; margin: 16px 0; }
.warnings p { margin: 6px 0; color: var(--warn); }
.cautions { border: 1px solid var(--line); background: var(--wash); padding: 8px 14px; margin: 16px 0; font-size: 14px; }
.cautions p { margin: 6px 0; }
.legend { display: flex; flex-wrap: wrap; gap: 6px 16px; margin: 8px 0 0; padding: 0; list-style: none; font-size: 13px; }
.legend li::before { content: ""; display: inline-block; width: 12px; height: 12px; margin-right: 6px; vertical-align: -1px; background: var(--c); border-radius: 2px; }
figure.chart { margin: 24px 0; }
figure.chart .plot { overflow: hidden; }
figure.chart svg { display: block; max-width: 100%; height: auto; }
figcaption { margin-top: 6px; }
figcaption .reading { font-weight: bold; }
figcaption .note, figcaption .data, .table-note { color: var(--muted); font-size: 13px; margin: 4px 0 0; }
.scroll { overflow-x: auto; max-width: 100%; }
table { border-collapse: collapse; font-size: 13px; margin: 8px 0; }
th, td { border-bottom: 1px solid var(--line); padding: 4px 10px; text-align: right; white-space: nowrap; }
th:first-child, td:first-child { text-align: left; }
th { background: var(--wash); font-weight: bold; }
td.cell-text { max-width: 22em; overflow: hidden; text-overflow: ellipsis; }
dl.meta { display: grid; grid-template-columns: max-content 1fr; gap: 2px 16px; font-size: 14px; }
dl.meta dt { color: var(--muted); }
dl.meta dd { margin: 0; overflow-wrap: anywhere; }
@media (max-width: 600px) {
  main { padding: 16px 12px 32px; } h1 { font-size: 20px; } body { font-size: 14px; }
  /* keep chart text readable on a phone: scale a chart to no less than 85% and let its box scroll */
  figure.chart .plot { overflow-x: auto; }
  figure.chart svg { max-width: none; width: calc(var(--w) * 0.85px); }
}
`;

function cell(v: unknown, format: Parameters<typeof displayCell>[1]): string {
  if (typeof v === 'string') return `<td class="cell-text"${v.length > 48 ? ` title="${escapeShort(v, 200)}"` : ''}>${escapeShort(v, 48)}</td>`;
  return `<td>${e(displayCell(v, format))}</td>`;
}

/** A section from an analysis of the events (report/sections/): paragraphs, highlighted warnings, tables; all escaped. */
function htmlSection(s: ReportModel['sections'][number]): string {
  const warn = s.warnings.length ? `<div class="warnings" role="note">${s.warnings.map((w) => `<p>${e(w)}</p>`).join('')}</div>` : '';
  const tables = s.tables.map((t) => `<h3>${e(t.title)}</h3>${t.note ? `<p class="table-note">${e(t.note)}</p>` : ''}${htmlTable(t)}`).join('\n');
  return `<section id="${e(s.id)}">\n<h2>${e(s.title)}</h2>\n${warn}${s.paragraphs.map((p) => `<p>${e(p)}</p>`).join('')}\n${tables}\n</section>`;
}

export function htmlTable(t: DataTable): string {
  return `<div class="scroll"><table><thead><tr>${t.header.map((h) => `<th>${escapeShort(h, 48)}</th>`).join('')}</tr></thead><tbody>${t.rows.map((r) => `<tr>${r.map((v, i) => cell(v, t.formats?.[i])).join('')}</tr>`).join('')}</tbody></table></div>`;
}

/** The natural width of a rendered SVG, from its width attribute. */
function svgWidth(svg: string): number {
  const m = /^<svg[^>]* width="([\d.]+)"/.exec(svg);
  return m ? Math.round(Number(m[1])) : 600;
}

/** "lapsing for up to 2 inactive weeks, then dormant", from the states' roles. */
function exitAfter(m: ReportModel): string {
  const lapse = m.states.find((s) => s.role === 'lapse')!.name;
  const exit = m.states.find((s) => s.role === 'exit')!.name;
  return `${lapse} for up to ${m.rules.lapseLimit} inactive ${m.grainWord}s, then ${exit}`;
}

/** The page; `svgs[i]` is the rendered SVG of `model.charts[i]`. */
export function reportHtml(m: ReportModel, svgs: string[], generatedAt: string): string {
  const legend = m.states.map((s) => `<li style="--c:${s.colour}">${e(s.name)}</li>`).join('');
  const charts = m.charts.map((c, i) => `
<figure class="chart" id="${e(c.id)}">
<div class="plot" role="img" aria-label="${e(c.title)}" style="--w:${svgWidth(svgs[i])}">${svgs[i]}</div>
<figcaption><p class="reading">${e(c.reading)}</p>${c.note ? `<p class="note">${e(c.note)}</p>` : ''}<p class="data">Data: ${e(c.table.name)}.csv, ${e(c.table.name)}.json</p></figcaption>
</figure>`).join('\n');
  const tables = m.tables.map((t) => `<h2>${e(t.title)}</h2>${t.note ? `<p class="table-note">${e(t.note)}</p>` : ''}${htmlTable(t)}`).join('\n');
  const r = m.rows;
  const rejected = Object.entries(r.rejected).map(([k, n]) => `${e(k)} ${n}`).join(', ') || 'none';
  return `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta http-equiv="Content-Security-Policy" content="default-src 'none'; style-src 'unsafe-inline'; img-src data:">
<title>${e(m.title)}</title>
<style>${CSS}</style>
</head>
<body>
<main>
<header>
<h1>${e(m.title)}</h1>
<p class="sub">${e(m.subtitle)}</p>
<p class="stamp">Generated ${e(generatedAt)} by tidemark</p>
<ul class="legend" aria-label="state colours">${legend}</ul>
</header>
${m.sections.filter((s) => s.placement === 'first').map(htmlSection).join('\n')}
<section id="findings">
<h2>Findings</h2>
<ul class="findings">${m.findings.map((f) => `<li>${e(f.text)}</li>`).join('')}</ul>
${m.warnings.length ? `<div class="warnings" role="note"><p><strong>Read with care</strong></p>${m.warnings.map((w) => `<p>${e(w)}</p>`).join('')}</div>` : ''}
<div class="cautions" role="note"><p><strong>Cautions</strong></p>${m.cautions.map((c) => `<p>${e(c)}</p>`).join('')}</div>
</section>
<section id="charts">
${charts}
</section>
<section id="tables">
${tables}
</section>
${m.sections.filter((s) => s.placement === 'after-charts').map(htmlSection).join('\n')}
<section id="about">
<h2>About these numbers</h2>
<dl class="meta">
<dt>rules</dt><dd>${e(m.rules.name ?? 'unnamed')}${m.rules.version ? ` v${e(m.rules.version)}` : ''}: ${e(m.rules.grain)} periods in ${e(m.rules.timezone)}; active = at least ${m.rules.minEvents} ${m.rules.keyEvents ? `of ${m.rules.keyEvents.map((k) => escapeShort(k, 40)).join(', ')}` : 'event(s) of any kind'}; ${e(exitAfter(m))}</dd>
<dt>periods</dt><dd>${e(m.periods.first)} to ${e(m.periods.last)} (${m.periods.count}), labelled by start date</dd>
<dt>rows</dt><dd>${r.read.toLocaleString('en-US')} read, ${r.used.toLocaleString('en-US')} used, ${r.notKeyEvent.toLocaleString('en-US')} not key events, ${r.afterRange.toLocaleString('en-US')} after the range${r.partial ? `, ${r.partial.toLocaleString('en-US')} in the incomplete last period (left out)` : ''}; rejected: ${rejected}</dd>
<dt>states</dt><dd>${m.states.map((s) => `${e(s.name)}: ${e(s.definition)}`).join('; ')}</dd>
</dl>
</section>
</main>
</body>
</html>
`;
}
