/**
 * A waist written by `tidemark waist` and read back with `--waist DIR` gives every analysis command
 * and the report byte-for-byte the output of the events path, on logs of varied shape: warm-up,
 * tenure bands, an attribute split (`--by`), an incomplete last period (left out, and kept with
 * --include-partial), daily and weekly grain. Invented data (the makerspace booking app), seeded.
 */
import { readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mulberry32 } from '../../src/numerics/random.js';
import { corpusDir, run } from '../hostile/harness.js';

const dir = corpusDir();
afterAll(() => dir.done());

interface Scenario {
  name: string;
  rules: string;
  /** Days between the first and last event; the last event's hour decides whether the last period is complete. */
  days: number;
  by?: string;
}

const SCENARIOS: Scenario[] = [
  { name: 'weekly, warm-up 2, tenure bands, split by plan, incomplete last week', rules: 'grain: week\nlapseLimit: 2\nwarmup: 2\ntenureBands: [0, 2, 5]\nminCell: 5\n', days: 100, by: 'plan' },
  { name: 'daily in America/Chicago across a DST change, minEvents 2', rules: 'grain: day\ntimezone: America/Chicago\nlapseLimit: 3\nactivity:\n  minEvents: 2\nminCell: 3\n', days: 40 },
];

/** A booking log: members arrive over time, book in bursts, some drift away. */
function events(seed: number, days: number): string {
  const rng = mulberry32(seed);
  const start = Date.UTC(2026, 1, 23, 6);
  const rows = ['user_id,timestamp,event,plan'];
  for (let m = 0; m < 160; m++) {
    let day = Math.floor(rng() * days * 0.7);
    const plan = ['hobby', 'pro', 'studio'][m % 3];
    const stay = 0.55 + 0.3 * rng();
    while (day < days) {
      for (let k = 0; k < 1 + Math.floor(rng() * 3); k++) rows.push(`member${m},${new Date(start + day * 86_400_000 + Math.floor(rng() * 12) * 3_600_000).toISOString()},booking,${plan}`);
      if (rng() > stay) break;
      day += 1 + Math.floor(-Math.log(rng()) * 4);
    }
  }
  return `${rows.join('\n')}\n`;
}

const COMMANDS = (s: Scenario): string[][] => [
  ['flows'],
  ['flows', '--pool', '3'],
  ['retention'],
  ['retention', '--tenure'],
  ['explain', ...(s.by ? ['--by', s.by] : [])],
  ['project', '--horizon', '6', '--samples', '60', '--until', 'dormant'],
  ...(s.by ? [['project', '--horizon', '4', '--samples', '40', '--by', s.by]] : []),
  ['cohorts'],
  ['survival', '--by', 'cohort'],
  ...(s.by ? [['survival', '--by', s.by]] : []),
  ['curve', '--min-size', '3'],
];

describe.each(SCENARIOS)('$name', (s) => {
  let ev: string, rules: string, waist: string, waistKept: string;
  beforeAll(async () => {
    ev = dir.file(`${s.days}.csv`, events(s.days, s.days));
    rules = dir.file(`${s.days}.yaml`, s.rules);
    waist = join(dir.dir, `w${s.days}`);
    const by = s.by ? ['--by', s.by] : [];
    const w = await run('waist', '--events', ev, '--rules', rules, '--out', waist, ...by);
    expect(w.code, w.err).toBe(0);
    waistKept = waist; // the waist always keeps the last period; analyses decide
  }, 60_000);

  it('the waist keeps an incomplete last period, so the commands below leave it out or keep it', () => {
    const m = JSON.parse(readFileSync(join(waist, 'manifest.json'), 'utf8'));
    expect(m.lastPeriod.complete).toBe(false);
  });

  const cases = COMMANDS(s).flatMap((c) => (c[0] === 'flows' ? [c] : [c, [...c, '--include-partial']])).map((args) => ({ args, title: args.join(' ') }));
  it.each(cases)('$title gives the same JSON from events and from the waist', async ({ args }) => {
    const [name, ...rest] = args;
    const a = await run(name, '--events', ev, '--rules', rules, ...rest, '--format', 'json');
    const b = await run(name, '--waist', waistKept, ...rest, '--format', 'json');
    expect(a.code, a.err).toBe(0);
    expect(b.code, b.err).toBe(0);
    expect(b.out).toBe(a.out);
    expect(b.err).toBe(a.err);
  }, 60_000);

  it('report writes the same files from events and from the waist', async () => {
    const by = s.by ? ['--by', s.by] : [];
    const ra = join(dir.dir, `ra${s.days}`), rb = join(dir.dir, `rb${s.days}`);
    const a = await run('report', '--events', ev, '--rules', rules, ...by, '--out', ra, '--generated-at', 'x', '--format', 'json');
    const b = await run('report', '--waist', waist, ...(s.by ? ['--by', s.by] : []), '--out', rb, '--generated-at', 'x', '--format', 'json');
    expect(a.code, a.err).toBe(0);
    expect(b.code, b.err).toBe(0);
    const files = readdirSync(ra).sort();
    expect(readdirSync(rb).sort()).toEqual(files);
    for (const f of files) expect(readFileSync(join(rb, f), 'utf8'), f).toBe(readFileSync(join(ra, f), 'utf8'));
  }, 120_000);
});

describe('a waist cannot answer what needs per-user rows', () => {
  let waist: string;
  beforeAll(async () => {
    const ev = dir.file('small.csv', events(3, 30));
    waist = join(dir.dir, 'small-waist');
    expect((await run('waist', '--events', ev, '--out', waist)).code).toBe(0);
  }, 60_000);
  it('--by on a column the waist was not split by says it needs events', async () => {
    const r = await run('explain', '--waist', waist, '--by', 'plan');
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/--by: the waist holds no split by an attribute, so --by plan needs events/);
  });
  it('classify says it needs events', async () => {
    const r = await run('classify', '--waist', waist);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/--waist: classify lists every user in every period: it needs the events/);
  });
  it('options that shaped the waist cannot be given with it', async () => {
    const r = await run('flows', '--waist', waist, '--from', '2026-03-01');
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/--from: give either --waist or --from/);
  });
  it('a waist from a newer tidemark is refused with what to do', async () => {
    const m = join(waist, 'manifest.json');
    writeFileSync(m, readFileSync(m, 'utf8').replace('"version": 1', '"version": 2'));
    const r = await run('flows', '--waist', waist);
    expect(r.code).toBe(1);
    expect(r.err).toMatch(/format version 2, from a newer tidemark; this one reads version 1\. Upgrade tidemark/);
  });
});
