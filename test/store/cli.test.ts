/**
 * The store on the command line, in-process: every analysis command and the report give from
 * `--store DIR` the output they give from `--events` over every applied file (the report adds the
 * digest first, and only that), under weekly rules with a warm-up, an incomplete last week and a
 * stray timestamp, and under daily rules in a zone with a daylight-saving change, whose files cut
 * local days (so some updates rebuild). `update` prints at most eight lines of digest, says when a
 * file changes nothing, warns of late events, and refuses a rules change. Invented data (the
 * makerspace booking app), seeded.
 */
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { expectClean, expectRefusal, run } from '../hostile/harness.js';
import { tempDir } from '../core/helpers.js';
import { batchesByPeriod, bookings, bookingsCsv, DAY, type Booking } from './logs.js';

const t = tempDir();
afterAll(() => t.done());

interface Scenario {
  name: string;
  rules: string;
  events: () => Booking[];
  /** Files: batches of this many UTC weeks. */
  weeks: number[];
}

const SCENARIOS: Scenario[] = [
  {
    name: 'weekly, warm-up 1, incomplete last week, a stray early row',
    rules: 'grain: week\nlapseLimit: 2\nwarmup: 1\ntenureBands: [0, 2, 5]\nminCell: 5\n',
    events: () => {
      const e = bookings(71, 90, 86).filter((b) => b.ms < Date.UTC(2026, 2, 2) + 85 * DAY + 12 * 3_600_000);
      e.push({ user: 'm1', ms: Date.UTC(2025, 2, 3, 10), event: 'booking_made', plan: 'pro' });
      return e;
    },
    weeks: [1],
  },
  {
    name: 'daily in America/Chicago across a daylight-saving change, minimum 2 events, files of 1-2 UTC weeks',
    rules: 'grain: day\ntimezone: America/Chicago\nlapseLimit: 3\nactivity:\n  minEvents: 2\nminCell: 3\n',
    events: () => bookings(72, 60, 30),
    weeks: [1, 2],
  },
];

const COMMANDS: string[][] = [
  ['flows'],
  ['flows', '--pool', '3'],
  ['retention'],
  ['retention', '--tenure'],
  ['explain'],
  ['project', '--horizon', '6', '--samples', '60', '--until', 'dormant'],
  ['cohorts'],
  ['survival', '--by', 'cohort'],
  ['curve', '--min-size', '3'],
];

describe.each(SCENARIOS)('$name', (s) => {
  let files: string[], rules: string, store: string;
  beforeAll(async () => {
    const ev = s.events();
    const weekly = batchesByPeriod(ev, 'week', s.weeks);
    files = weekly.map((b, i) => t.file(`${s.weeks.length}-${i}.csv`, bookingsCsv(b)));
    rules = t.file(`${s.weeks.length}.yaml`, s.rules);
    store = join(t.dir, `store-${s.weeks.length}`);
    for (const [i, f] of files.entries()) {
      const r = await run('update', '--store', store, '--events', f, ...(i === 0 ? ['--rules', rules] : []), '--quiet');
      expect(r.code, r.err).toBe(0);
    }
  }, 240_000);

  const cases = COMMANDS.flatMap((c) => (c[0] === 'flows' ? [c] : [c, [...c, '--include-partial']])).map((args) => ({ args, title: args.join(' ') }));
  it.each(cases)('$title gives the same JSON and notes from the store as from the events', async ({ args }) => {
    const [name, ...rest] = args;
    const a = await run(name, '--events', ...files, '--rules', rules, ...rest, '--format', 'json');
    const b = await run(name, '--store', store, ...rest, '--format', 'json');
    expect(a.code, a.err).toBe(0);
    expect(b.code, b.err).toBe(0);
    expect(b.out).toBe(a.out);
    expect(b.err).toBe(a.err);
  }, 60_000);

  it('flows as a table is the same too', async () => {
    const a = await run('flows', '--events', ...files, '--rules', rules);
    const b = await run('flows', '--store', store);
    expect(b.out).toBe(a.out);
  }, 60_000);

  it('audience lists from the store the users it lists from the events, with the personal-data note', async () => {
    const ev = JSON.parse((await run('flows', '--store', store, '--format', 'json')).out);
    const periods = (ev.transitions as { to: string }[]).map((x) => x.to).slice(-6, -1);
    let listed = 0;
    for (const entered of ['dormant', 'engaged']) {
      for (const period of periods) {
        const a = await run('audience', '--events', ...files, '--rules', rules, '--period', period, '--entered', entered, '--format', 'json');
        const b = await run('audience', '--store', store, '--period', period, '--entered', entered, '--format', 'json');
        expect(a.code, a.err).toBe(0);
        expect(b.code, b.err).toBe(0);
        const la = JSON.parse(a.out), lb = JSON.parse(b.out);
        expect(lb.users, `${entered} at ${period}`).toEqual(la.users);
        expect(b.err).toMatch(/personal data/);
        listed += lb.users.length;
      }
    }
    expect(listed).toBeGreaterThan(0);
  }, 120_000);

  it('rules diff reads the store\'s events under its column names', async () => {
    const other = t.file(`other-${s.weeks.length}.yaml`, `${s.rules}lapseLimit: 1\n`.replace(/^lapseLimit: \d+\n/m, ''));
    const a = await run('rules', 'diff', rules, other, '--events', ...files, '--format', 'json');
    const b = await run('rules', 'diff', rules, other, '--store', store, '--format', 'json');
    expect(a.code, a.err).toBe(0);
    expect(b.code, b.err).toBe(0);
    const da = JSON.parse(a.out), db = JSON.parse(b.out);
    expect(db.changed).toBeGreaterThan(0);
    for (const k of ['changes', 'onlyA', 'onlyB', 'compared', 'changed', 'headlines', 'rulesChanged']) expect(db[k], k).toEqual(da[k]);
    const refused = await run('rules', 'diff', rules, other, '--store', store, '--events', files[0]);
    expect(expectRefusal(refused, 2)).toMatch(/--events/);
  }, 120_000);

  it('report writes the files of the events\' report, plus the digest first', async () => {
    const ra = join(t.dir, `ra-${s.weeks.length}`), rb = join(t.dir, `rb-${s.weeks.length}`);
    const a = await run('report', '--events', ...files, '--rules', rules, '--out', ra, '--generated-at', 'x', '--format', 'json');
    const b = await run('report', '--store', store, '--out', rb, '--generated-at', 'x', '--format', 'json');
    expect(a.code, a.err).toBe(0);
    expect(b.code, b.err).toBe(0);
    expect(JSON.parse(b.out).findings).toEqual(JSON.parse(a.out).findings);
    const fa = readdirSync(ra).sort();
    expect(readdirSync(rb).sort()).toEqual([...fa, 'digest.json'].sort());
    const digest = JSON.parse(readFileSync(join(rb, 'digest.json'), 'utf8'));
    const update = JSON.parse((await run('update', '--store', store, '--events', files[files.length - 1], '--format', 'json', '--quiet')).out);
    expect(digest).toEqual(update.digest);
    const html = readFileSync(join(rb, 'index.html'), 'utf8');
    const md = readFileSync(join(rb, 'summary.md'), 'utf8');
    // the digest section comes first, before the data check and the findings; without it the page is the events' page
    expect(html.indexOf('<section id="digest">')).toBeGreaterThan(0);
    expect(html.indexOf('<section id="digest">')).toBeLessThan(html.indexOf('<section id="findings">'));
    for (const line of update.lines) expect(html).toContain(line.replaceAll('&', '&amp;').replaceAll('<', '&lt;').replaceAll('>', '&gt;'));
    expect(html.replace(/<section id="digest">[\s\S]*?<\/section>\n/, '')).toBe(readFileSync(join(ra, 'index.html'), 'utf8'));
    expect(md.replace(/## Since the last update[\s\S]*?(?=## )/, '')).toBe(readFileSync(join(ra, 'summary.md'), 'utf8'));
    for (const f of fa.filter((x) => x !== 'index.html' && x !== 'summary.md')) expect(readFileSync(join(rb, f), 'utf8'), f).toBe(readFileSync(join(ra, f), 'utf8'));
  }, 180_000);
});

describe('tidemark update', () => {
  let files: string[], rules: string, store: string;
  beforeAll(() => {
    files = batchesByPeriod(bookings(81, 60, 42), 'week').map((b, i) => t.file(`u-${i}.csv`, bookingsCsv(b)));
    rules = t.file('u.yaml', 'grain: week\nlapseLimit: 2\n');
    store = join(t.dir, 'u-store');
  });

  it('creates a store, says what it applied, and ends with a digest of at most eight lines', async () => {
    const r = await run('update', '--store', store, '--rules', rules, '--events', files[0], files[1]);
    expectClean(r);
    expect(r.code, r.err).toBe(0);
    expect(r.err).toMatch(/^note: created a store in /m);
    expect(r.err).toMatch(new RegExp(`^applied ${files[0].replace(/[/.]/g, '\\$&')} \\(2026-\\d\\d-\\d\\d to 2026-\\d\\d-\\d\\d\\): rows: \\d+ read, \\d+ used$`, 'm'));
    expect(r.err).toMatch(/^store: 2 weeks from 2026-03-02 to 2026-03-09, \d+ users; rows: /m);
    const lines = r.out.trimEnd().split('\n');
    expect(lines.length).toBeLessThanOrEqual(8);
    expect(r.out).toMatch(/^Week of 2026-03-09: \d+ active users \(\d+ new, \d+ returned\); \d+ went quiet\.$/m);
  }, 60_000);

  it('every later week: the digest compares moves with the previous weeks and tests retention', async () => {
    let r = await run('update', '--store', store, '--events', ...files.slice(2));
    expect(r.code, r.err).toBe(0);
    expect(r.out.trimEnd().split('\n').length).toBeLessThanOrEqual(8);
    expect(r.out).toMatch(/^Grew most against the previous 4 weeks: \w+ → \w+, \d+ users \(average \d+/m);
    expect(r.out).toMatch(/^(No significant retention change since the week before \(Benjamini–Hochberg, 3 tested\)|Retention of .* \(adjusted p .*\))\.$/m);
    r = await run('update', '--store', store, '--events', files[3], '--format', 'json');
    const j = JSON.parse(r.out);
    expect(j.mode).toBe('none');
    expect(j.skipped[0]).toMatchObject({ path: files[3], appliedAs: files[3] });
    for (const k of ['period', 'active', 'arrivals', 'returns', 'wentQuiet', 'grew', 'shrank', 'retention']) expect(j.digest, k).toHaveProperty(k);
    expect(j.lines.length).toBeLessThanOrEqual(8);
  }, 120_000);

  it('a file applied before: says so on standard error, changes nothing', async () => {
    const r = await run('update', '--store', store, '--events', files[1]);
    expect(r.code).toBe(0);
    expect(r.err.replace(/\n/g, ' ')).toMatch(/note: .* holds the same bytes as .*, applied on 20\d\d-.*: skipped, it changes nothing/);
    expect(r.err).toMatch(/note: nothing new to apply: the store is unchanged/);
  }, 60_000);

  it('late events: one warning naming the restated weeks and how many users changed', async () => {
    const late = t.file('u-late.csv', 'user_id,timestamp,event,plan\nm5,2026-03-18T10:00:00Z,booking_made,pro\nnewcomer,2026-03-25T10:00:00Z,booking_made,pro\n');
    const r = await run('update', '--store', store, '--events', late);
    expectClean(r);
    expect(r.code).toBe(0);
    expect(r.err.replace(/\n/g, ' ').replace(/.*?(?=warning:)/, '')).toMatch(/^warning: late events restated 4 stored periods \(2026-03-16, 2026-03-23, 2026-03-30, 2026-04-06\): \d+ users? changed state in them\./);
  }, 60_000);

  it('a rules change is refused at --rules, with what differs and what to do', async () => {
    const other = t.file('u2.yaml', 'grain: week\nlapseLimit: 3\n');
    const r = await run('update', '--store', store, '--rules', other, '--events', files[0]);
    const line = expectRefusal(r, 2);
    expect(line).toMatch(/^tidemark: --rules: differ from the rules the store was built with \(lapseLimit 2 → 3\)\. Pass --reclassify/);
    expectRefusal(await run('update', '--store', store, '--reclassify'), 2);
    const ok = await run('update', '--store', store, '--rules', other, '--reclassify', '--quiet');
    expect(ok.code, ok.err).toBe(0);
  }, 60_000);

  it('options that shaped the store are refused beside --store, as beside --waist', async () => {
    expect(expectRefusal(await run('flows', '--store', store, '--events', files[0]), 2)).toMatch(/--events: give either --store or --events/);
    expect(expectRefusal(await run('flows', '--store', store, '--rules', rules), 2)).toMatch(/--rules: give either --store or --rules/);
    expect(expectRefusal(await run('explain', '--store', store, '--by', 'plan'), 2)).toMatch(/--by: a store holds no split by an attribute/);
    expect(expectRefusal(await run('flows', '--store', store, '--waist', store), 2)).toMatch(/--store: give either --store or --waist/);
    expect(expectRefusal(await run('flows', '--store', join(t.dir, 'no-such-store')), 1)).toMatch(/no such store folder/);
    expect(expectRefusal(await run('flows', '--store', t.dir), 1)).toMatch(/not a store: the folder holds no store\.duckdb/);
  }, 60_000);
});
