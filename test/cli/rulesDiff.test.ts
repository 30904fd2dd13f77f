/**
 * `tidemark rules diff A B --events F` in-process: the JSON contract, the table within 80 columns
 * (common practice for terminal output), the CSV read back with papaparse (an independent RFC 4180
 * parser), headlines equal to what `retention`, `project` and `explain` print for each rule set, and
 * the refusals (other grains, a pipe, --rules).
 */
import { execFileSync } from 'node:child_process';
import Papa from 'papaparse';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { bufferIo } from '../../src/cli/io.js';
import { main } from '../../src/cli/main.js';
import { mulberry32, randInt } from '../stats/prng.js';
import { tempDir } from '../core/helpers.js';

let t: ReturnType<typeof tempDir>;
let events: string;
let lapse2: string;
let lapse3: string;

const DAY = 86_400_000;
const MONDAY = Date.UTC(2026, 2, 2);

/** 300 members of the makerspace over 14 weeks, seeded: each joins in some week and comes back now and then. */
function bookings(seed: number): string {
  const rnd = mulberry32(seed);
  const rows = ['user_id,timestamp,event,plan'];
  for (let m = 0; m < 300; m++) {
    const join = randInt(rnd, 0, 12);
    const keen = rnd() < 0.5;
    for (let w = join; w < 14; w++) {
      if (w > join && rnd() > (keen ? 0.75 : 0.35)) continue;
      rows.push(`m${m},${new Date(MONDAY + w * 7 * DAY + randInt(rnd, 0, 6) * DAY + 3_600_000 * randInt(rnd, 8, 20)).toISOString()},booking_made,${keen ? 'studio' : 'hobby'}`);
    }
  }
  // the data run to the Sunday of the last week, so every week is complete
  rows.push(`m0,${new Date(MONDAY + 13 * 7 * DAY + 6 * DAY + 3_600_000 * 20).toISOString()},booking_made,hobby`);
  return rows.join('\n');
}

beforeAll(() => {
  t = tempDir();
  events = t.file('bookings.csv', bookings(7));
  lapse2 = t.file('lapse2.yaml', 'name: weekly\ngrain: week\nlapseLimit: 2\n');
  lapse3 = t.file('lapse3.yaml', 'name: weekly-lapse3\ngrain: week\nlapseLimit: 3\n');
});
afterAll(() => t.done());

async function run(...argv: string[]) {
  const io = bufferIo();
  const code = await main(argv, io);
  return { code, out: io.out, err: io.err };
}

describe('rules diff', () => {
  it('JSON: changes as {from, to, count}, counts apart, and the headlines under each rule set', async () => {
    const r = await run('rules', 'diff', lapse2, lapse3, '--events', events, '--format', 'json');
    expect(r.code, r.err).toBe(0);
    const j = JSON.parse(r.out);
    for (const k of ['a', 'b', 'rulesChanged', 'changes', 'compared', 'changed', 'onlyA', 'onlyB', 'headlines', 'rows']) expect(j, k).toHaveProperty(k);
    expect(j.rulesChanged).toEqual([{ key: 'lapseLimit', a: 2, b: 3 }]);
    for (const c of j.changes) expect(Object.keys(c)).toEqual(['from', 'to', 'count']);
    // a longer lapse limit only keeps some dormant user-periods lapsing (README state table): nothing else moves
    const moved = j.changes.filter((c: { from: string; to: string }) => c.from !== c.to);
    expect(moved).toEqual([{ from: 'dormant', to: 'lapsing', count: j.changed }]);
    expect(j.changed).toBeGreaterThan(0);
    expect([j.onlyA, j.onlyB]).toEqual([[], []]);
    for (const side of ['a', 'b']) for (const k of ['periods', 'retention', 'latestMix', 'longRun', 'decomposition']) expect(j.headlines[side], `${side}.${k}`).toHaveProperty(k);
    // retention reads the active states only, which the lapse limit does not change
    expect(j.headlines.b.retention).toEqual(j.headlines.a.retention);
    expect(r.err).not.toMatch(/version/);
  });

  it('notes a B that keeps A\'s name and version but classifies differently', async () => {
    const same = t.file('same-version.yaml', 'name: weekly\ngrain: week\nlapseLimit: 3\n');
    const r = await run('rules', 'diff', lapse2, same, '--events', events);
    expect(r.err).toMatch(/^note: A and B share the name and version weekly \(none\) but classify users differently \(lapseLimit\): give B a new version before using it$/m);
  });

  it('the headlines are what retention, project and explain print for each rule set', async () => {
    const j = JSON.parse((await run('rules', 'diff', lapse2, lapse3, '--events', events, '--format', 'json')).out);
    for (const [side, rules] of [['a', lapse2], ['b', lapse3]] as const) {
      const h = j.headlines[side];
      const flows = JSON.parse((await run('flows', '--events', events, '--rules', rules, '--format', 'json')).out);
      expect(h.retention.map((x: { state: string; n: number; retained: number }) => [x.state, x.n, x.retained])).toEqual(Object.entries(flows.pooled.retention).map(([s, x]) => [s, (x as { n: number }).n, (x as { retained: number }).retained]));
      const project = JSON.parse((await run('project', '--events', events, '--rules', rules, '--format', 'json', '--no-backtest', '--samples', '1')).out);
      expect(Object.fromEntries(h.longRun.shares.map((x: { state: string; share: number }) => [x.state, x.share]))).toEqual(project.steadyState);
      const explain = JSON.parse((await run('explain', '--events', events, '--rules', rules, '--format', 'json')).out);
      expect([h.decomposition.base, h.decomposition.compare, h.decomposition.sentence]).toEqual([explain.base, explain.compare, explain.sentence]);
    }
  }, 30_000);

  it('the table fits 80 columns, also with 40-character state names', async () => {
    const long = t.file('long.yaml', `grain: week\nlapseLimit: 3\nsplits:\n  - state: engaged\n    atLeast: 2\n    names: [${'a'.repeat(40)}, ${'b'.repeat(40)}]\n`);
    for (const b of [lapse3, long]) {
      const r = await run('rules', 'diff', lapse2, b, '--events', events);
      expect(r.code, r.err).toBe(0);
      const wide = r.out.split('\n').filter((l) => [...l].length > 80);
      expect(wide, r.out).toEqual([]);
      expect(r.out).toMatch(/^A: .*lapse2\.yaml \(weekly\)$/m);
      expect(r.out).toMatch(/user-periods under both; [\d,]+ \([\d.]+%\) change state\./);
    }
  });

  it('CSV: state_a, state_b, user_periods (an empty cell for a side without the user-period)', async () => {
    const r = await run('rules', 'diff', lapse2, lapse3, '--events', events, '--format', 'csv');
    const rows = Papa.parse<string[]>(r.out.trimEnd()).data;
    expect(rows[0]).toEqual(['state_a', 'state_b', 'user_periods']);
    const j = JSON.parse((await run('rules', 'diff', lapse2, lapse3, '--events', events, '--format', 'json')).out);
    expect(rows.slice(1)).toEqual(j.changes.map((c: { from: string; to: string; count: number }) => [c.from, c.to, String(c.count)]));
  });

  it('other key events: user-periods present under one rule set only are counted apart', async () => {
    const f = t.file('two-events.csv', 'user_id,timestamp,event\nm1,2026-03-02T10:00:00Z,booking_made\nm1,2026-03-09T10:00:00Z,checked_in\nm2,2026-03-09T11:00:00Z,checked_in\n');
    const key = t.file('key.yaml', 'grain: week\nlapseLimit: 2\nactivity:\n  keyEvents: [booking_made]\n');
    const j = JSON.parse((await run('rules', 'diff', lapse2, key, '--events', f, '--format', 'json')).out);
    // worked by hand: under A m1 is fresh then engaged, m2 fresh in the second week; under B only m1's first week
    // counts, and B's data end there: m1 week 1 fresh under both; m1 and m2 in week 2 under A only
    expect(j.changes).toEqual([{ from: 'fresh', to: 'fresh', count: 1 }]);
    expect(j.onlyA).toEqual([{ state: 'fresh', count: 1 }, { state: 'engaged', count: 1 }]);
    expect(j.onlyB).toEqual([]);
  });

  it('its options load with it: `rules diff --help` lists them, `rules help diff` says where they are', async () => {
    const h = await run('rules', 'diff', '--help');
    expect(h.code).toBe(0);
    for (const o of ['--events', '--format', '--include-partial', '--out']) expect(h.out).toContain(o);
    expect((await run('rules', 'help', 'diff')).out).toContain('tidemark rules diff --help');
  });

  it('refuses rule sets of other grains (exit 1, naming B\'s file and the key), --rules, and a pipe', async () => {
    const daily = t.file('daily.yaml', 'grain: day\nlapseLimit: 3\n');
    const g = await run('rules', 'diff', lapse2, daily, '--events', events);
    expect(g.code).toBe(1);
    expect(g.err).toMatch(new RegExp(`^tidemark: ${daily}, key grain: the two rule sets cut time into different periods \\(grain week against day\\)`));
    const r = await run('rules', 'diff', lapse2, lapse3, '--events', events, '--rules', lapse2);
    expect([r.code, r.err.split('.')[0]]).toEqual([2, 'tidemark: --rules: the two rules files are the arguments A and B']);
    const fifo = `${t.dir}/pipe.csv`;
    execFileSync('mkfifo', [fifo]);
    const p = await run('rules', 'diff', lapse2, lapse3, '--events', fifo);
    expect(p.code).toBe(2);
    expect(p.err).toMatch(/^tidemark: --events: '.*pipe\.csv' is not a regular file: rules diff reads the events once for each rule set/);
  });
});
