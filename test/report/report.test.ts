import { readFileSync, readdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { mdEscape } from '../../src/report/markdown.js';
import { escapeHtml } from '../../src/report/escape.js';
import { demoEvents, runCli, tempDir } from './fixtures.js';

const GENERATED = /^.*Generated .* by tidemark.*$/m;

function folder(dir: string): Map<string, string> {
  return new Map(readdirSync(dir).map((f) => [f, readFileSync(join(dir, f), 'utf8')]));
}

describe('tidemark report on the demo', () => {
  let dir: string;
  let ids: Set<string>;
  let files: Map<string, string>;
  let headline: string;

  beforeAll(async () => {
    const work = tempDir();
    const ev = demoEvents(work);
    ids = ev.ids;
    dir = join(work, 'out');
    const r = await runCli(['report', '--events', ev.file, '--out', dir, '--base', '2026-08-10', '--compare', '2026-09-14', '--by', 'channel', '--quiet', '--scenario', 'keep-lapsers=lapsing->dormant*0.8']);
    expect(r.code).toBe(0);
    headline = r.out;
    files = folder(dir);
  }, 60_000);

  it('writes index.html, summary.md and a CSV and JSON file for every chart table', () => {
    expect(files.has('index.html')).toBe(true);
    expect(files.has('summary.md')).toBe(true);
    const html = files.get('index.html')!;
    for (const m of html.matchAll(/Data: ([\w-]+)\.csv, ([\w-]+)\.json/g)) {
      expect(files.has(`${m[1]}.csv`)).toBe(true);
      expect(files.has(`${m[2]}.json`)).toBe(true);
    }
  });

  it('is self-contained: no script, no external resource, no link', () => {
    const html = files.get('index.html')!;
    expect(html).not.toMatch(/<script/i);
    expect(html).not.toMatch(/\ssrc\s*=/i);
    expect(html).not.toMatch(/\shref\s*=/i);
    expect(html).not.toMatch(/@import/i);
    // url() only for fragment references inside the page (SVG gradients), never a file or address
    expect([...html.matchAll(/url\(([^)]*)\)/g)].every((m) => m[1].startsWith('#'))).toBe(true);
    // the only URLs are XML namespace names inside the SVGs, which load nothing
    const urls = [...html.matchAll(/https?:\/\/[^\s"'<>]+/g)].map((m) => m[0]);
    expect(new Set(urls)).toEqual(new Set(['http://www.w3.org/2000/svg', 'http://www.w3.org/1999/xlink']));
  });

  it('has at least six charts, each with a title and a reading; with --scenario, the scenario chart and its data', () => {
    const html = files.get('index.html')!;
    expect(html).toMatch(/<figure class="chart" id="scenarios">/);
    expect(files.get('scenarios.csv')!.split('\n')[0]).toBe('scenario,step,period,active,active_lower,active_upper,difference,difference_lower,difference_upper');
    const figures = html.match(/<figure class="chart"/g) ?? [];
    expect(figures.length).toBeGreaterThanOrEqual(6);
    // each chart is drawn twice, for wide and for narrow screens (report/frame.ts), under an HTML title
    expect((html.match(/<div class="frame wide"/g) ?? []).length).toBe(figures.length);
    expect((html.match(/<div class="frame narrow/g) ?? []).length).toBe(figures.length);
    expect((html.match(/<svg[^>]*class="marks"/g) ?? []).length).toBe(2 * figures.length);
    expect((html.match(/<figure class="chart"[^>]*>\n<h3>.{5,}?<\/h3>/g) ?? []).length).toBe(figures.length);
    expect((html.match(/<p class="reading">[^<]{20,}/g) ?? []).length).toBe(figures.length);
  });

  it('contains no raw user id in any file', () => {
    for (const [name, text] of files) {
      const found = text.match(/m\d{6}/g) ?? [];
      expect(found.filter((t) => ids.has(t)), name).toEqual([]);
    }
  });

  it('tells the planted story in its findings', () => {
    const html = files.get('index.html')!;
    expect(html).toMatch(/newcomers&#39; own retention gained/);
    expect(html).toMatch(/the shift toward newcomers cost/);
    expect(html).toMatch(/Cautions/);
    expect(html).toMatch(/personal data/);
    expect(html).toMatch(/correlation, not a cause/);
    // the story printed on the terminal: the fall, beyond chance, and the shift toward newcomers as its main part
    expect(headline).toMatch(/one-week retention fell from [\d.]+%\s+to\s+[\d.]+%/);
    expect(headline).toMatch(/more than chance\s+explains/);
    expect(headline).toMatch(/the shift toward newcomers\s+cost/);
  });

  it('tells the story in at most five lines, every one on the chosen comparison, the numbers checked against flows.json', () => {
    const digest = files.get('digest.txt')!;
    const story = digest.split('\n').filter((l) => l.startsWith('- '));
    expect(story.length).toBeGreaterThanOrEqual(4);
    expect(story.length).toBeLessThanOrEqual(5);
    const [moved, matters, why, next] = story;
    for (const l of [moved, matters, why]) expect(l).toContain('(2026-08-10 → 2026-09-14)');
    // the projection runs 12 weeks on from the latest week: 2026-11-23 + 84 days
    expect(next).toContain(`(2026-11-23 → ${new Date(Date.UTC(2026, 10, 23) + 84 * 86_400_000).toISOString().slice(0, 10)})`);
    // independent sums over flows.json: active users in each period, arrivals between, overall retention into each
    const flows = JSON.parse(files.get('flows.json')!) as { states: string[]; periods: string[]; stateCounts: Record<string, number>[]; transitions: { to: string; fresh: number; retention: Record<string, { n: number; retained: number }> }[] };
    const active = ['fresh', 'engaged', 'returned'];
    const activeIn = (p: string) => active.reduce((a, s) => a + flows.stateCounts[flows.periods.indexOf(p)][s], 0);
    expect(moved).toContain(`active users ${activeIn('2026-08-10').toLocaleString('en-US')} → ${activeIn('2026-09-14').toLocaleString('en-US')}`);
    const arrived = flows.transitions.filter((t) => t.to > '2026-08-10' && t.to <= '2026-09-14').reduce((a, t) => a + t.fresh, 0);
    expect(moved).toContain(`${arrived.toLocaleString('en-US')} users arrived`);
    const into = (p: string) => {
      const t = flows.transitions.find((x) => x.to === p)!;
      const kept = active.reduce((a, s) => a + t.retention[s].retained, 0);
      return `${((100 * kept) / active.reduce((a, s) => a + t.retention[s].n, 0)).toFixed(1)}%`;
    };
    expect(matters).toContain(`one-week retention fell from ${into('2026-08-10')} to ${into('2026-09-14')}`);
    expect(why).toMatch(/the shift toward newcomers cost/);
  });

  it('writes digest.txt: plain text, at most 15 lines, with the comparison and the cautions, and no markup or escapes', () => {
    const digest = files.get('digest.txt')!;
    const lines = digest.trimEnd().split('\n');
    expect(lines.length).toBeLessThanOrEqual(15);
    expect(lines[1]).toBe('Every finding compares 2026-08-10 → 2026-09-14 (as chosen).');
    expect(digest).toMatch(/Cautions: .*aggregates only.*correlation, not a cause/);
    // no Markdown or HTML: no emphasis, escapes, entities, tags or headings
    expect(digest).not.toMatch(/\*\*|\\[_*\[\]<>#|`]|&(lt|gt|amp|#\d+);|<\/?[a-z]|^#/m);
  });

  it('explains the terms of the trade it uses, once, on the page', () => {
    const html = files.get('index.html')!;
    expect(html).toMatch(/<dt>quick ratio<\/dt><dd>users who arrived or came back for each user who went quiet/);
    expect(html).toMatch(/<dt>lapsing \(lapsing users\)<\/dt><dd>quiet for up to 2 weeks in a row\.<\/dd>/);
    expect(html).toMatch(/<dt>significant<\/dt>/);
  });

  it('is deterministic: a second run differs only in the generated-at line', async () => {
    const work = tempDir();
    const ev = demoEvents(work);
    const again = join(work, 'again');
    await runCli(['report', '--events', ev.file, '--out', again, '--base', '2026-08-10', '--compare', '2026-09-14', '--by', 'channel', '--quiet', '--scenario', 'keep-lapsers=lapsing->dormant*0.8']);
    const second = folder(again);
    expect([...second.keys()].sort()).toEqual([...files.keys()].sort());
    for (const [name, text] of files) expect(second.get(name)!.replace(GENERATED, ''), name).toBe(text.replace(GENERATED, ''));
  }, 60_000);
});

describe('hostile strings from data', () => {
  const HOSTILE = [
    '<script>alert(1)</script>',
    '"><img src=x onerror=alert(1)>',
    "javascript:alert('x')",
    `long_${'x'.repeat(5000)}`,
    '</style><b>bold</b>',
    '| --- | *md* [link](javascript:alert(1))',
  ];

  it('never reach the page or the Markdown unescaped', async () => {
    const work = tempDir();
    const lines = ['user_id,timestamp,event,plan'];
    for (let m = 0; m < 120; m++) {
      for (let w = m % 3; w < 8; w += 1 + (m % 2)) {
        const ev = HOSTILE[(m + w) % HOSTILE.length];
        lines.push(`u${m},${new Date(Date.UTC(2026, 2, 2) + w * 7 * 86_400_000 + 3600_000).toISOString()},"${ev.replace(/"/g, '""')}","${HOSTILE[m % HOSTILE.length].replace(/"/g, '""')}"`);
      }
    }
    writeFileSync(join(work, 'hostile.csv'), lines.join('\n'));
    writeFileSync(join(work, 'rules.yaml'), `name: "<script>alert('rules')</script>"\ngrain: week\nlapseLimit: 1\n`);
    const out = join(work, 'out');
    const r = await runCli(['report', '--events', join(work, 'hostile.csv'), '--rules', join(work, 'rules.yaml'), '--out', out, '--by', 'plan', '--quiet']);
    expect(r.code, r.err).toBe(0);
    const html = readFileSync(join(out, 'index.html'), 'utf8');
    const md = readFileSync(join(out, 'summary.md'), 'utf8');
    expect(html).not.toMatch(/<script/i);
    expect(html).not.toMatch(/<img/i);
    expect(html).not.toMatch(/<b>bold/);
    expect(html).not.toMatch(/\shref=/i);
    expect(html).toContain('&lt;script&gt;alert(1)&lt;/script&gt;');
    expect(html.length).toBeLessThan(2_000_000);
    // a very long name is shortened on the page
    expect(html).not.toContain('x'.repeat(200));
    expect(md).not.toMatch(/<script|<img|\]\(javascript:/i);
    expect(md).toContain('&lt;script&gt;');
  }, 60_000);

  it('escapeHtml and mdEscape neutralise markup (hand-checked examples)', () => {
    expect(escapeHtml(`<a href="x" onclick='y'>&\``)).toBe('&lt;a href=&quot;x&quot; onclick=&#39;y&#39;&gt;&amp;&#96;');
    // a lone * pairs with nothing, so it is left as it is (CommonMark 0.31 §6.2: emphasis needs a closing delimiter)
    expect(mdEscape('[a](javascript:b) <i>|*')).toBe('\\[a\\]\\(javascript:b) &lt;i&gt;\\|*');
  });
});
