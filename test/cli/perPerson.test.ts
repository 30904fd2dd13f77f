/**
 * `--by` on a per-person column, end to end: report, explain and survival refuse an email-like or a
 * phone-like column with one line naming the column and the flag, accept an ordinary one, and when
 * forced never name the values in a sentence (findings, readings, notes), only in tables.
 */
import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { PER_PERSON_FLAG } from '../../src/lifecycle/perPerson.js';
import { corpusDir, expectRefusal, run } from '../hostile/harness.js';

let t: ReturnType<typeof corpusDir>;
let events: string;

const PLANS = ['hobby', 'studio', 'pro'];
const EMAIL = /member\d+@makerspace\.example/;
const PHONE = /7700 ?900\d{3}/;

beforeAll(() => {
  t = corpusDir();
  // 80 members of the fictional makerspace over 8 weeks from Monday 2026-03-02; each joins in one of
  // the first four weeks and books on a fixed pattern; phones are from the UK range reserved for fiction
  const lines = ['user_id,timestamp,event,email,phone,plan'];
  const start = Date.UTC(2026, 2, 2, 10);
  for (let i = 0; i < 80; i++) {
    const n = String(i + 1).padStart(3, '0');
    for (let w = i % 4; w < 8; w++) {
      if ((i * 7 + w) % 3 === 0 && w !== i % 4) continue;
      const ts = new Date(start + (w * 7 + (i % 7)) * 86_400_000).toISOString();
      lines.push(`m${n},${ts},booking,member${n}@makerspace.example,+44 7700 900${n},${PLANS[i % 3]}`);
    }
  }
  events = t.file('bookings.csv', `${lines.join('\n')}\n`);
});
afterAll(() => t.done());

describe('a per-person --by column is refused', () => {
  for (const [cmd, col] of [['report', 'email'], ['explain', 'phone'], ['survival', 'email'], ['explain', 'email'], ['report', 'phone']] as const) {
    it(`${cmd} --by ${col}: exit 1, one line naming the column and ${PER_PERSON_FLAG}`, async () => {
      const out = join(t.dir, `out-${cmd}-${col}`);
      const r = await run(cmd, '--events', events, '--by', col, ...(cmd === 'report' ? ['--out', out] : []));
      const line = expectRefusal(r, 1);
      expect(line).toContain(`column '${col}'`);
      expect(line).toContain(PER_PERSON_FLAG);
      expect(line).toMatch(/80 of 80 users \(100%\)/);
      expect(r.out).toBe('');
      if (cmd === 'report') expect(existsSync(out)).toBe(false);
    });
  }

  it('an ordinary column (plan) is split as before', async () => {
    const r = await run('explain', '--events', events, '--by', 'plan', '--format', 'json', '--quiet');
    expect(r.code, r.err).toBe(0);
    expect(JSON.parse(r.out).bySegment.groups.map((g: { group: string }) => g.group).sort()).toEqual(['hobby', 'pro', 'studio']);
  });
});

describe(`forced with ${PER_PERSON_FLAG}`, () => {
  it('explain: the groups hold the values, the sentence names none of them', async () => {
    const r = await run('explain', '--events', events, '--by', 'email', PER_PERSON_FLAG, '--format', 'json', '--quiet');
    expect(r.code, r.err).toBe(0);
    const seg = JSON.parse(r.out).bySegment;
    expect(seg.groups.length).toBeGreaterThan(20);
    expect(seg.groups.every((g: { group: string }) => EMAIL.test(g.group))).toBe(true);
    expect(seg.sentence).toMatch(/changes within the groups|the shift between groups|held steady|no part/);
    expect(seg.sentence).toContain('not named');
    expect(seg.sentence).not.toMatch(EMAIL);
    const table = await run('explain', '--events', events, '--by', 'email', PER_PERSON_FLAG, '--quiet');
    const byLine = table.out.split('\n').find((l) => l.startsWith('By email:'));
    expect(byLine, table.out).toBeDefined();
    expect(byLine).not.toMatch(EMAIL);
  });

  it('survival: the table holds the values (exit 0)', async () => {
    const r = await run('survival', '--events', events, '--by', 'phone', PER_PERSON_FLAG, '--format', 'json', '--quiet');
    expect(r.code, r.err).toBe(0);
    expect(JSON.parse(r.out).groups.some((g: { group: string }) => PHONE.test(g.group))).toBe(true);
  });

  it('report: no finding, warning, reading, note or table note names a value', async () => {
    const out = join(t.dir, 'forced-report');
    const r = await run('report', '--events', events, '--by', 'email', PER_PERSON_FLAG, '--out', out, '--quiet', '--base', '2026-03-16', '--compare', '2026-04-13');
    expect(r.code, r.err).toBe(0);
    const html = readFileSync(join(out, 'index.html'), 'utf8');
    const md = readFileSync(join(out, 'summary.md'), 'utf8');
    const sentences = [
      ...html.matchAll(/<li>([^<]*)<\/li>|<p class="(?:reading|note|table-note)">([^<]*)<\/p>|<div class="warnings"[^>]*>(.*?)<\/div>/gs),
    ].map((m) => m[1] ?? m[2] ?? m[3]);
    expect(sentences.some((s) => /not named/.test(s)), 'the by-email table note is a sentence').toBe(true);
    for (const s of sentences) expect(s).not.toMatch(EMAIL);
    // in summary.md every line outside a table is prose
    for (const line of md.split('\n').filter((l) => !l.startsWith('|'))) expect(line).not.toMatch(EMAIL);
    expect(r.out).not.toMatch(EMAIL);
    // the table itself holds them: the user asked for it
    expect(html).toMatch(EMAIL);
    expect(readFileSync(join(out, 'by-email.csv'), 'utf8')).toMatch(EMAIL);
  }, 60_000);
});
