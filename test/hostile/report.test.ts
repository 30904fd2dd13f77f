/**
 * The hostile-input corpus for the report's layout and text: state labels and a rules name built to
 * break markup, terminals and layouts (tags, escape sequences, a right-to-left override, 60-character
 * words), and a daily log over three years. Whatever comes in, the report is written; the page and
 * summary.md show it escaped; digest.txt stays plain text of at most 15 lines with no control code;
 * a scrolling chart stays within its bound.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { SCROLL_MAX } from '../../src/report/frame.js';
import { corpusDir, expectClean, run } from './harness.js';

const corpus = corpusDir();
afterAll(() => corpus.done());

const MONDAY = Date.UTC(2026, 2, 2);
const at = (day: number) => new Date(MONDAY + day * 86_400_000 + 10 * 3_600_000).toISOString();

// 40 users over 8 weeks, with 1 to 4 events in their active weeks, so that a split of engaged by events has users on both sides
const weekly = ['user_id,timestamp,event', ...Array.from({ length: 40 }, (_, u) => Array.from({ length: 8 }, (_, w) => ((u + w) % 3 === 0 && w > 0 ? [] : Array.from({ length: 1 + ((u * w) % 4) }, (_, k) => `u${u},${at(w * 7 + k)},opened`))).flat(2)).flat()];
const events = corpus.file('weekly.csv', weekly.join('\n'));

const LABEL = '<b>keen</b>\u001b[31m\u202eREVERSED\u202c lots-of-dashes-------------';

describe('state labels and a rules name that carry markup and control codes', () => {
  const rules = corpus.file('rules.yaml', [
    'name: "weekly <script>x</script>\\e[2J\\nsecond line"',
    'grain: week',
    'lapseLimit: 1',
    'splits:',
    '  - state: engaged',
    '    atLeast: 3',
    '    names: [steady, keen]',
    `    labels: ["steady &amp; *calm* users", ${JSON.stringify(LABEL)}]`,
  ].join('\n'));

  it('are escaped on the page and in summary.md, and replaced in the plain-text digest', { timeout: 60_000 }, async () => {
    const out = join(corpus.dir, 'labels');
    const r = await run('report', '--events', events, '--rules', rules, '--out', out, '--include-partial');
    expectClean(r);
    expect(r.code, r.err).toBe(0);
    const html = readFileSync(join(out, 'index.html'), 'utf8');
    const md = readFileSync(join(out, 'summary.md'), 'utf8');
    const digest = readFileSync(join(out, 'digest.txt'), 'utf8');
    for (const text of [html, md]) {
      expect(text).not.toMatch(/<script|<b>keen/);
      expect(text).not.toMatch(/[\u0000-\u0008\u000b-\u001f\u202a-\u202e]/);
    }
    expect(html).toContain('&lt;b&gt;keen&lt;/b&gt;');
    expect(digest.trimEnd().split('\n').length).toBeLessThanOrEqual(15);
    expect(digest).not.toMatch(/[\u0000-\u0009\u000b-\u001f\u007f-\u009f\u202a-\u202e\u2066-\u2069]/);
    // plain text: the rules name is one line, as written but for the replaced codes; no entity, no backslash escape
    expect(digest.split('\n')[0]).toContain('weekly <script>x</script>\uFFFD[2J second line');
    expect(digest).not.toMatch(/&lt;|&amp;amp;|\\\*/);
  });
});

describe('a daily log over three years (1,100 days, 5 users)', () => {
  const rows = ['user_id,timestamp,event', ...Array.from({ length: 1100 }, (_, d) => (d % 3 === 0 ? [`a,${at(d)},opened`, `b${d % 5},${at(d)},opened`] : [])).flat()];
  const file = corpus.file('long.csv', rows.join('\n'));

  // the timeout bounds a hang only: the run takes a few seconds
  it('is written, its scrolling charts stay within their bound, and their axes name every year', { timeout: 120_000 }, async () => {
    const out = join(corpus.dir, 'long');
    const r = await run('report', '--events', file, '--rules', 'rules/daily.yaml', '--out', out, '--include-partial');
    expectClean(r);
    expect(r.code, r.err).toBe(0);
    const html = readFileSync(join(out, 'index.html'), 'utf8');
    const widths = [...html.matchAll(/<div class="frame narrow scroll" style="--w:(\d+)px">/g)].map((m) => Number(m[1]));
    expect(widths.length).toBeGreaterThanOrEqual(2);
    for (const w of widths) expect(w).toBeLessThanOrEqual(SCROLL_MAX);
    const mix = html.slice(html.indexOf('<figure class="chart" id="state-mix"'), html.indexOf('</figure>', html.indexOf('id="state-mix"')));
    for (const year of ['2026', '2027', '2028', '2029']) expect(mix).toContain(`>${year}</tspan>`);
  });
});
