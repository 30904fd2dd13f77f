/**
 * The report page: one self-contained HTML file. Inline CSS and inline SVG only: no script, no font,
 * no image and no request of any kind, so it reads offline and as a mail attachment. Every string
 * from data is escaped (escape.ts); the SVG comes from Vega, which escapes its own text.
 *
 * Layout without script: every chart is drawn twice (frame.ts). The wide drawing fills the text
 * column up to the page's width; below 700 px the narrow one shows instead, in one column. A narrow
 * time chart too long for the screen sits in a scroll box laid out right to left (`direction: rtl`),
 * so the box opens at its right end — the latest period — and scrolls back in time; its value axis is
 * on the right, beside the latest period. Titles, subtitles and colour keys are HTML, so they wrap.
 */
import type { ReportModel } from './build.js';
import { displayCell, type DataTable, type LegendItem } from './charts/types.js';
import { escapeControls } from '../errors.js';
import { escapeHtml, escapeShort } from './escape.js';
import { NARROW_BELOW, NARROW_MAX, PAGE_WIDTH } from './frame.js';
import { comparisonText } from './story.js';
import type { RenderedChart } from './write.js';
import { plural } from '../text/plural.js';

/**
 * Text for the page: line breaks as spaces, control codes and direction overrides shown escaped
 * (`\u202e` could reorder what a reader sees), then HTML-escaped. Text from the rules (a name, a
 * state's label) and from data reaches the page only through here or {@link escapeShort}.
 */
const e = (v: unknown): string => escapeHtml(escapeControls(String(v ?? '').replace(/[\r\n]+/g, ' ')));

const CSS = `
:root { --ink: #1b2733; --muted: #5b6875; --line: #dde3ea; --paper: #ffffff; --wash: #f4f7fb; --warn: #8a4b12; --warnbg: #fff4e5; }
* { box-sizing: border-box; }
html { -webkit-text-size-adjust: 100%; }
body { margin: 0; background: var(--wash); color: var(--ink); font: 15px/1.5 "DejaVu Sans", Verdana, "Segoe UI", Helvetica, Arial, sans-serif; overflow-wrap: break-word; }
main { max-width: ${PAGE_WIDTH + 40}px; margin: 0 auto; padding: 24px 20px 48px; background: var(--paper); }
h1 { font-size: 24px; margin: 0 0 4px; line-height: 1.25; }
h2 { font-size: 18px; margin: 32px 0 8px; border-bottom: 1px solid var(--line); padding-bottom: 4px; }
h3 { font-size: 16px; margin: 20px 0 4px; }
.sub, .stamp { color: var(--muted); margin: 0; }
.stamp { font-size: 12px; margin-top: 4px; }
p.comparison { color: var(--muted); margin: 4px 0 8px; font-size: 14px; }
ol.story { padding-left: 0; list-style: none; margin: 8px 0; }
ol.story li { margin: 6px 0; padding-left: 12px; border-left: 3px solid var(--line); }
ol.story .periods { color: var(--muted); white-space: nowrap; }
dl.terms { display: grid; grid-template-columns: max-content 1fr; gap: 2px 14px; font-size: 13px; margin: 12px 0; color: var(--ink); }
dl.terms dt { font-weight: bold; }
dl.terms dd { margin: 0; color: var(--muted); }
details.more { margin: 8px 0; }
details.more summary { cursor: pointer; color: var(--muted); font-size: 14px; }
ul.findings { padding-left: 20px; }
ul.findings li { margin: 6px 0; }
.warnings { background: var(--warnbg); border-left: 4px solid #a0522d; padding: 8px 14px; margin: 16px 0; }
.warnings p { margin: 6px 0; color: var(--warn); }
.cautions { border: 1px solid var(--line); background: var(--wash); padding: 8px 14px; margin: 16px 0; font-size: 14px; }
.cautions p { margin: 6px 0; }
.legend { display: flex; flex-wrap: wrap; gap: 4px 16px; margin: 8px 0 0; padding: 0; list-style: none; font-size: 13px; }
.legend li { display: inline-flex; align-items: center; min-width: 0; overflow-wrap: anywhere; }
.legend li.block::before { content: ""; flex: none; display: inline-block; width: 12px; height: 12px; margin-right: 6px; background: var(--c); border-radius: 2px; }
.legend li svg { flex: none; margin-right: 6px; }
figure.chart { margin: 28px 0; }
figure.chart h3 { margin: 0 0 2px; }
figure.chart .subtitle { color: var(--muted); font-size: 13px; margin: 0 0 8px; }
.frame svg { display: block; width: 100%; height: auto; }
.frame.narrow { display: none; }
figcaption { margin-top: 6px; }
figcaption .reading { font-weight: bold; margin: 6px 0 0; }
figcaption .note, figcaption .data, .table-note { color: var(--muted); font-size: 13px; margin: 4px 0 0; }
.scroll { overflow-x: auto; max-width: 100%; }
.nw { white-space: nowrap; }
table { border-collapse: collapse; font-size: 13px; margin: 8px 0; }
th, td { border-bottom: 1px solid var(--line); padding: 4px 10px; text-align: right; white-space: nowrap; }
th:first-child, td:first-child { text-align: left; }
th { background: var(--wash); font-weight: bold; }
td.cell-text { max-width: 22em; overflow: hidden; text-overflow: ellipsis; }
dl.meta { display: grid; grid-template-columns: max-content 1fr; gap: 2px 16px; font-size: 14px; }
dl.meta dt { color: var(--muted); }
dl.meta dd { margin: 0; overflow-wrap: anywhere; min-width: 0; }
@media (max-width: ${NARROW_BELOW - 1}px) {
  main { padding: 16px 12px 32px; } h1 { font-size: 20px; } body { font-size: 14px; }
  .frame.wide { display: none; }
  .frame.narrow { display: block; max-width: ${NARROW_MAX}px; }
  /* a time chart longer than the screen: drawn at its own width, opening at its right end (the latest period) */
  .frame.narrow.scroll { max-width: 100%; overflow-x: auto; direction: rtl; }
  .frame.narrow.scroll svg { direction: ltr; max-width: none; width: var(--w); }
  dl.terms { grid-template-columns: 1fr; } dl.terms dd { margin-bottom: 4px; }
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
export function svgWidth(svg: string): number {
  const m = /^<svg[^>]* width="([\d.]+)"/.exec(svg);
  return m ? Math.round(Number(m[1])) : 600;
}

/** "lapsing for up to 2 inactive weeks, then dormant", from the states' roles. */
function exitAfter(m: ReportModel): string {
  const lapse = m.states.find((s) => s.role === 'lapse')!.name;
  const exit = m.states.find((s) => s.role === 'exit')!.name;
  return `${lapse} for up to ${plural(m.rules.lapseLimit, `inactive ${m.grainWord}`)}, then ${exit}`;
}

/** A colour key as a list that wraps: a block swatch, or a line drawn with the series' dash. */
export function htmlLegend(items: readonly LegendItem[], label: string): string {
  const swatch = (i: LegendItem) => (i.dash
    ? `<svg width="26" height="10" aria-hidden="true"><line x1="1" y1="5" x2="25" y2="5" stroke="${e(i.colour)}" stroke-width="3"${i.dash.length ? ` stroke-dasharray="${i.dash.join(' ')}"` : ''}/></svg>`
    : '');
  return `<ul class="legend" aria-label="${e(label)}">${items.map((i) => `<li class="${i.dash ? 'line' : 'block'}"${i.dash ? '' : ` style="--c:${e(i.colour)}"`}>${swatch(i)}${escapeShort(i.label, 60)}</li>`).join('')}</ul>`;
}

/** Keep each date of escaped text on one line (a title never breaks "2026-11-23" at a hyphen). */
const keepDates = (html: string) => html.replace(/\d{4}-\d{2}-\d{2}/g, '<span class="nw">$&</span>');

function htmlChart(c: ReportModel['charts'][number], r: RenderedChart): string {
  const latest = c.timeline?.periods[c.timeline.periods.length - 1];
  const n = r.narrow;
  const narrow = n.frame.scroll
    ? `<div class="frame narrow scroll" style="--w:${svgWidth(n.svg)}px">${n.svg}</div>`
    : `<div class="frame narrow">${n.svg}</div>`;
  return `
<figure class="chart" id="${e(c.id)}"${latest ? ` data-latest="${e(latest)}"` : ''}>
<h3>${keepDates(e(r.heading.title ?? c.title))}</h3>${r.heading.subtitle ? `<p class="subtitle">${e(r.heading.subtitle)}</p>` : ''}
<div class="plot" role="img" aria-label="${e(r.heading.title ?? c.title)}">
<div class="frame wide" style="max-width:${svgWidth(r.wide.svg)}px">${r.wide.svg}</div>
${narrow}
</div>
${c.legend?.length ? htmlLegend(c.legend, 'colour key') : ''}
<figcaption><p class="reading">${e(c.reading)}</p>${c.note ? `<p class="note">${e(c.note)}</p>` : ''}<p class="data">Data: ${e(c.table.name)}.csv, ${e(c.table.name)}.json</p></figcaption>
</figure>`;
}

/** The page; `rendered[i]` is `model.charts[i]` drawn in both frames. */
export function reportHtml(m: ReportModel, rendered: readonly RenderedChart[], generatedAt: string): string {
  const legend = htmlLegend(m.states.map((s) => ({ label: s.name, colour: s.colour })), 'state colours');
  const charts = m.charts.map((c, i) => htmlChart(c, rendered[i])).join('\n');
  const tables = m.tables.map((t) => `<h2>${e(t.title)}</h2>${t.note ? `<p class="table-note">${e(t.note)}</p>` : ''}${htmlTable(t)}`).join('\n');
  const r = m.rows;
  const rejected = Object.entries(r.rejected).map(([k, n]) => `${e(k)} ${n}`).join(', ') || 'none';
  const story = m.story.map((l) => `<li><strong>${e(l.lead)}</strong>${l.periods ? ` <span class="periods">(${e(l.periods)})</span>` : ''}: ${e(l.text)}</li>`).join('');
  const terms = m.terms.map((t) => `<dt>${e(t.term)}</dt><dd>${e(t.meaning)}</dd>`).join('');
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
${legend}
</header>
${m.sections.filter((s) => s.placement === 'first').map(htmlSection).join('\n')}
<section id="findings">
<h2>Findings</h2>
<p class="comparison">${e(comparisonText(m.comparison, m.grainWord))}</p>
<ol class="story">${story}</ol>
${terms ? `<dl class="terms" aria-label="terms">${terms}</dl>` : ''}
${m.findings.length ? `<details class="more"><summary>More detail (${plural(m.findings.length, 'finding')})</summary><ul class="findings">${m.findings.map((f) => `<li>${e(f.text)}</li>`).join('')}</ul></details>` : ''}
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
<dt>rules</dt><dd>${e(m.rules.name ?? 'unnamed')}${m.rules.version ? ` v${e(m.rules.version)}` : ''}: ${e(m.rules.grain)} periods in ${e(m.rules.timezone)}; active = at least ${plural(m.rules.minEvents, 'key event')}${m.rules.keyEvents ? ` (${m.rules.keyEvents.map((k) => escapeShort(k, 40)).join(', ')})` : ' of any kind'}; ${e(exitAfter(m))}</dd>
<dt>periods</dt><dd>${e(m.periods.first)} to ${e(m.periods.last)} (${plural(m.periods.count, m.grainWord)}), labelled by start date</dd>
<dt>rows</dt><dd>${r.read.toLocaleString('en-US')} read, ${r.used.toLocaleString('en-US')} used, ${r.notKeyEvent.toLocaleString('en-US')} not key events, ${r.afterRange.toLocaleString('en-US')} after the range${r.partial ? `, ${r.partial.toLocaleString('en-US')} in the incomplete last period (left out)` : ''}; rejected: ${rejected}</dd>
<dt>states</dt><dd>${m.states.map((s) => `${e(s.name)}: ${e(s.definition)}`).join('; ')}</dd>
</dl>
</section>
</main>
</body>
</html>
`;
}
