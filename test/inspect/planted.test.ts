/**
 * The data check on a log with three planted problems (the brief's acceptance case): a stray
 * timestamp (one booking dated 1990), an email column (one address per member), and a missing week
 * (2026-04-06 to 2026-04-12 removed). `inspect` must name all three, and the report must warn before
 * any chart. Plus the other checks on planted cases: exact duplicates, a heavy user, local time
 * written as UTC. The log itself is invented for the test (the makerspace scenario).
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { inspectLog, quietCentre } from '../../src/inspect/check.js';
import { userTimelines } from '../../src/lifecycle/timelines.js';
import { tempDir } from '../core/helpers.js';
import { run } from '../hostile/harness.js';
import { mulberry32, randInt } from '../stats/prng.js';
import { readRaw, weeklyRules } from '../lifecycle/randomEvents.js';

const DAY = 86_400_000;
const START = Date.UTC(2026, 2, 2); // Monday
const MISSING = [Date.UTC(2026, 3, 6), Date.UTC(2026, 3, 13)]; // the week of 2026-04-06

/** 200 members booking over 12 weeks, every day of the week; an email per member. */
function plantedCsv(): string {
  const rnd = mulberry32(4);
  const lines = ['user_id,timestamp,event,email,plan'];
  for (let u = 0; u < 200; u++) {
    for (let d = 0; d < 84; d++) {
      if (rnd() > 0.3) continue;
      const ms = START + d * DAY + randInt(rnd, 8, 20) * 3_600_000;
      if (ms >= MISSING[0] && ms < MISSING[1]) continue;
      lines.push(`m${u},${new Date(ms).toISOString()},booking_made,member${u}@example.org,${['hobby', 'studio'][u % 2]}`);
    }
  }
  lines.splice(40, 0, 'm3,1990-06-01T10:00:00Z,booking_made,member3@example.org,studio'); // line 40
  return `${lines.join('\n')}\n`;
}

let t: ReturnType<typeof tempDir>;
let file: string;
beforeAll(() => {
  t = tempDir();
  file = t.file('planted.csv', plantedCsv());
});
afterAll(() => t.done());

describe('inspect on the planted log', () => {
  it('names the stray timestamp with its line, the email column and the missing week; --format json gives the findings', async () => {
    const r = await run('inspect', '--events', file, '--format', 'json');
    expect(r.code, r.err).toBe(0);
    const out = JSON.parse(r.out) as { findings: { id: string; kind: string; text: string; action: string; data: any }[]; warnings: number };
    const byId = new Map(out.findings.map((x) => [x.id, x]));
    const stray = byId.get('outlying-timestamps')!;
    expect(stray.kind).toBe('warning');
    expect(stray.data).toEqual([{ file, line: 41, timestamp: '1990-06-01T10:00:00Z' }]);
    expect(stray.action).toMatch(/--from 2026-03-02/);
    const email = byId.get('per-person-columns')!;
    expect(email.data.map((c: { column: string }) => c.column)).toEqual(['email']);
    expect(email.action).toMatch(/--publish-per-person-values/);
    const missing = byId.get('missing-data')!;
    expect(missing.data.emptyPeriods).toEqual(['2026-04-06']);
    expect(missing.data.emptyDays).toEqual(['2026-04-06', '2026-04-07', '2026-04-08', '2026-04-09', '2026-04-10', '2026-04-11', '2026-04-12']);
    expect(out.warnings).toBe(3);
    for (const x of out.findings) expect(x.action.length).toBeGreaterThan(0);
    // no member id in any finding
    expect(r.out).not.toMatch(/"m\d+"|\bm3\b/);
  });

  it('the table output says what to do for each finding', async () => {
    const r = await run('inspect', '--events', file);
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/Data check: 3 warnings/);
    expect(r.out.match(/What to do:/g)!.length).toBeGreaterThanOrEqual(5);
  });

  it('the report warns before any chart, with the data check as its first section', async () => {
    const out = join(t.dir, 'report');
    const r = await run('report', '--events', file, '--out', out, '--quiet', '--format', 'json');
    expect(r.code, r.err).toBe(0);
    const html = readFileSync(join(out, 'index.html'), 'utf8');
    const check = html.indexOf('<section id="data-check"');
    expect(check).toBeGreaterThan(0);
    expect(check).toBeLessThan(html.indexOf('<figure class="chart"'));
    expect(check).toBeLessThan(html.indexOf('<section id="findings"'));
    const section = html.slice(check, html.indexOf('</section>', check));
    expect(section).toMatch(/far outside the bulk/);
    expect(section).toMatch(/email/);
    expect(section).toMatch(/2026-04-06/);
    expect(JSON.parse(r.out).warnings[0]).toMatch(/data check found 3 problems/);
    const md = readFileSync(join(out, 'summary.md'), 'utf8');
    expect(md.indexOf('## Data check')).toBeLessThan(md.indexOf('## Findings'));
    expect(JSON.parse(readFileSync(join(out, 'inspect.json'), 'utf8')).warnings).toBe(3);
  }, 60_000);
});

describe('the other checks, planted', () => {
  it('exact duplicates, and a heavy user against the Tukey far-out fence on log counts', async () => {
    const rnd = mulberry32(5);
    const raw = [];
    for (let u = 0; u < 60; u++) for (let w = 0; w < 6; w++) for (let k = 0; k < randInt(rnd, 1, 4); k++) raw.push({ user: `m${u}`, ms: START + w * 7 * DAY + randInt(rnd, 0, 6) * DAY + randInt(rnd, 8, 20) * 3_600_000 + randInt(rnd, 0, 3599) * 1000, event: 'booking_made', plan: 'hobby', amount: '1.00' });
    raw.push({ ...raw[5] }, { ...raw[9] }); // two exact repeats, beside any the generator made by chance
    for (let k = 0; k < 400; k++) raw.push({ user: 'bot', ms: START + 2 * 7 * DAY + k * 60_000, event: 'booking_made', plan: 'hobby', amount: '1.00' });
    const log = await readRaw(raw, weeklyRules());
    const r = inspectLog(log, userTimelines(log, 1), weeklyRules());
    const dup = r.findings.find((x) => x.id === 'duplicates')!;
    expect(dup.kind).toBe('warning');
    // independent: rows whose (user, instant, event, attributes) appeared before
    const seen = new Set<string>();
    let repeats = 0;
    for (const e of raw) {
      const key = JSON.stringify([e.user, e.ms, e.event, e.plan, e.amount]);
      if (seen.has(key)) repeats++;
      seen.add(key);
    }
    expect(repeats).toBeGreaterThanOrEqual(2);
    expect((dup.data as { rows: number }).rows).toBe(repeats);
    const heavy = r.findings.find((x) => x.id === 'heavy-users')!;
    expect(heavy.data).toMatchObject({ users: 1, periods: 1, max: 400 });
    expect(heavy.text).not.toMatch(/bot/);
  });

  it('local time written as UTC: evening bookings in Australia/Sydney written with a Z', async () => {
    // members of a Sydney makerspace book between 08:00 and 21:00 local; the exporter wrote that clock time with a Z
    const rnd = mulberry32(6);
    const lines = ['user_id,timestamp,event'];
    for (let k = 0; k < 800; k++) lines.push(`m${k % 50},2026-03-${String(2 + (k % 20)).padStart(2, '0')}T${String(randInt(rnd, 8, 21)).padStart(2, '0')}:15:00Z,booking_made`);
    const f = t.file('sydney.csv', `${lines.join('\n')}\n`);
    const rules = t.file('sydney.yaml', 'grain: week\nlapseLimit: 2\ntimezone: Australia/Sydney\n');
    const r = await run('inspect', '--events', f, '--rules', rules, '--format', 'json');
    expect(r.code, r.err).toBe(0);
    const x = JSON.parse(r.out).findings.find((y: { id: string }) => y.id === 'local-time-as-utc');
    expect(x?.kind).toBe('warning');
    expect(x.data.quietCentreAsWritten).toBe(quietCentre([...Array(24)].map((_, h) => (h >= 8 && h <= 21 ? 1 : 0))));
    // the same times written without the Z are local time in the zone: nothing to flag
    const g = t.file('sydney-local.csv', `${lines.map((l) => l.replace(/Z,/, ',')).join('\n')}\n`);
    const ok = await run('inspect', '--events', g, '--rules', rules, '--format', 'json');
    expect(JSON.parse(ok.out).findings.some((y: { id: string }) => y.id === 'local-time-as-utc')).toBe(false);
  });

  it('quietCentre: the centre of the quietest 6 hours, circular', () => {
    // busy 08:00-21:00: the 6-hour windows starting 22:00, 23:00, 00:00, 01:00 and 02:00 are empty; the middle one starts at 00:00 → centre 03:00
    expect(quietCentre([...Array(24)].map((_, h) => (h >= 8 && h <= 21 ? 1 : 0)))).toBe(3);
    expect(quietCentre([...Array(24)].map((_, h) => (h >= 2 && h <= 7 ? 0 : 5)))).toBe(5);
  });
});
