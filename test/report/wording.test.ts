/**
 * Wording on logs that are not the demo: nouns come from the rules (state labels) and "users", never
 * from the demo's scenario; a count of one takes the singular (English grammar, common practice). Two
 * logs: one user with one event, and "one of everything" — five users over four weeks, one in each
 * state at the end, one event each active week, one event name, one attribute value.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { runCli, tempDir } from './fixtures.js';

/** Words of the demo's scenario that must not reach a report built from other data. */
const DEMO_NOUNS = /\bmembers?\b|makerspace|booking|workshop|the space\b|tenure \d+ members/i;
/** "1" followed by a plural noun (a count of one written as many). */
const ONE_PLURAL = /(?<![\d.,])1 (?:[a-z-]+ )?(users|periods|weeks|days|months|ages|cohorts|rows|events|transitions|newcomers|problems|warnings|names|findings|groups|states|key rows|key events|event names|returners|regulars|arrivals)\b/;

/** The human text of a report folder: the page without its SVG and tags, the Markdown, the digest. */
function texts(dir: string): Record<string, string> {
  const html = readFileSync(join(dir, 'index.html'), 'utf8').replace(/<svg[\s\S]*?<\/svg>/g, ' ').replace(/<style>[\s\S]*?<\/style>/, ' ').replace(/<[^>]+>/g, ' ').replace(/&#39;/g, "'").replace(/\s+/g, ' ');
  return { 'index.html': html, 'summary.md': readFileSync(join(dir, 'summary.md'), 'utf8'), 'digest.txt': readFileSync(join(dir, 'digest.txt'), 'utf8') };
}

function checkWording(dir: string): void {
  for (const [name, text] of Object.entries(texts(dir))) {
    expect(text.match(DEMO_NOUNS)?.[0], name).toBeUndefined();
    expect(text.match(ONE_PLURAL)?.[0], name).toBeUndefined();
    expect(text, name).not.toMatch(/NaN|undefined|\bnull\b/);
  }
}

const MONDAY = Date.UTC(2026, 2, 2);
const at = (week: number, hour = 10) => new Date(MONDAY + week * 7 * 86_400_000 + hour * 3_600_000).toISOString();

describe('wording on a log that is not the demo', () => {
  it('one user, one event: written, singular, no demo noun', async () => {
    const dir = tempDir();
    writeFileSync(join(dir, 'e.csv'), `user_id,timestamp,event\nsolo,${at(0)},opened\n`);
    const r = await runCli(['report', '--events', join(dir, 'e.csv'), '--out', join(dir, 'out'), '--include-partial', '--quiet']);
    expect(r.code, r.err).toBe(0);
    checkWording(join(dir, 'out'));
    const t = texts(join(dir, 'out'));
    expect(t['index.html']).toMatch(/1 user, 1 week/);
    expect(t['digest.txt']).toMatch(/One period \(2026-03-02\): 1 user in the only week of data/);
    expect(t['digest.txt'].trimEnd().split('\n').length).toBeLessThanOrEqual(15);
  }, 60_000);

  it('one of everything: one user in each state, one event name, one attribute value', async () => {
    const dir = tempDir();
    // active weeks per user, with lapse limit 1: at week 3 d is dormant, l lapsing, r returned, e engaged, f fresh
    const weeks: Record<string, number[]> = { d: [0], l: [2], r: [1, 3], e: [2, 3], f: [3] };
    const rows = ['user_id,timestamp,event,plan', ...Object.entries(weeks).flatMap(([u, ws]) => ws.map((w) => `${u},${at(w)},opened,basic`))];
    writeFileSync(join(dir, 'e.csv'), rows.join('\n'));
    writeFileSync(join(dir, 'rules.yaml'), 'name: small\ngrain: week\nlapseLimit: 1\nminCell: 1\n');
    const r = await runCli(['report', '--events', join(dir, 'e.csv'), '--rules', join(dir, 'rules.yaml'), '--out', join(dir, 'out'), '--by', 'plan', '--include-partial', '--quiet', '--format', 'json']);
    expect(r.code, r.err).toBe(0);
    const flows = JSON.parse(readFileSync(join(dir, 'out', 'flows.json'), 'utf8'));
    expect(flows.stateCounts[3]).toEqual({ fresh: 1, engaged: 1, returned: 1, lapsing: 1, dormant: 1 });
    checkWording(join(dir, 'out'));
    const story = JSON.parse(r.out).story as { kind: string; text: string }[];
    expect(story.length).toBeLessThanOrEqual(5);
    expect(story[0].text).toMatch(/What moved \(2026-03-16 → 2026-03-23\): active users 2 → 3 \(\+50%\): 1 user arrived, 1 came back and 1 went quiet/);
  }, 60_000);
});
