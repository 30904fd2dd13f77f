/**
 * summary.md reads cleanly as plain text, and Markdown never misreads it. The reference is an
 * independent Markdown implementation, markdown-it 15 (CommonMark 0.31 plus the GitHub tables and
 * strikethrough), with raw HTML switched on, the worst case for a viewer: whatever mdEscape writes
 * must render back to exactly the original text — no emphasis, link, code, tag, entity, list or
 * heading formed — while text that Markdown would not misread is written unchanged.
 */
import fc from 'fast-check';
import MarkdownIt from 'markdown-it';
import { describe, expect, it } from 'vitest';
import { mdEscape } from '../../src/report/markdown.js';

const md = new MarkdownIt('default', { html: true, linkify: false, typographer: false });
const decode = (html: string) => html.replace(/&lt;/g, '<').replace(/&gt;/g, '>').replace(/&quot;/g, '"').replace(/&#39;/g, "'").replace(/&amp;/g, '&');

/** The text a viewer shows for `s` written as a list item: markdown-it's HTML, checked to hold no tag, decoded. */
function shownInList(s: string): string {
  const html = md.render(`- ${mdEscape(s, 1000)}\n`);
  const m = /^<ul>\n<li>([\s\S]*)<\/li>\n<\/ul>\n$/.exec(html);
  expect(m, html).not.toBeNull();
  expect(m![1], html).not.toMatch(/<[a-z/!?]/i);
  return decode(m![1]);
}

/** The same, as a table cell. */
function shownInCell(s: string): string {
  const html = md.render(`| a |\n| --- |\n| ${mdEscape(s, 1000)} |\n`);
  const m = /<td>([\s\S]*)<\/td>/.exec(html);
  expect(m, html).not.toBeNull();
  expect(m![1], html).not.toMatch(/<[a-z/!?]/i);
  return decode(m![1]);
}

describe('mdEscape', () => {
  it.each([
    'Sao_Paulo', 'snake_case_column', 'a < b', '<30 days', 'R&D', 'x > y', '3 * 4', 'a single * star', 'one ~ tilde',
    'a single _ underscore', 'plan [basic]', 'events: booking_made, checked_in', '2026-05-04 to 2026-11-23', 'rate 12.5% (95% interval 10–15%)',
  ])('leaves %j as it is: Markdown would not misread it', (s) => {
    expect(mdEscape(s, 1000)).toBe(s);
    expect(shownInList(s)).toBe(s);
  });

  it.each([
    ['*bold*', '\\*bold\\*'],
    ['_under_', '\\_under\\_'],
    ['~~gone~~', '\\~\\~gone\\~\\~'],
    ['`code`', '\\`code\\`'],
    ['<b>x</b>', '&lt;b&gt;x&lt;/b&gt;'],
    ['&amp; &#65;', '&amp;amp; &amp;#65;'],
    ['# heading', '\\# heading'],
    ['> quote', '\\> quote'],
    ['- item', '\\- item'],
    ['+ item', '\\+ item'],
    ['1. item', '1\\. item'],
    ['[a](b)', '\\[a\\]\\(b)'],
    ['a | b', 'a \\| b'],
    ['back\\*slash', 'back\\\\*slash'],
  ])('escapes %j where Markdown would misread it', (s, want) => {
    expect(mdEscape(s, 1000)).toBe(want);
    expect(shownInList(s)).toBe(s);
  });

  it('round-trips any text over the characters Markdown reads, in a list item and a table cell (seeded)', () => {
    const alphabet = fc.constantFrom(...'ab_*~`<>&#[]()!|\\-+=.1 :/;'.split(''), 'x', 'é');
    fc.assert(fc.property(fc.array(alphabet, { minLength: 1, maxLength: 24 }).map((a) => a.join('').trim()).filter((s) => s.length > 0 && !/\s\s/.test(s)), (s) => {
      expect(shownInList(s)).toBe(s);
      expect(shownInCell(s)).toBe(s);
    }), { seed: 1414, numRuns: 600 });
  });

  it('puts line breaks on one line and shows control codes escaped (safe to print on a terminal)', () => {
    expect(mdEscape('a\nb')).toBe('a b');
    expect(mdEscape('red\u001b[31m')).toBe('red\\u001b[31m');
  });
});
