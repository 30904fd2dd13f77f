/**
 * Hostile corpus, limits and time: huge rules values, YAML built to exhaust a parser, a stray
 * timestamp that stretches a log over three centuries, and a report over thousands of periods. Every
 * case ends in a result or in one clean line with exit 1 or 2, within seconds. The test timeouts only
 * bound a hang: each case takes well under them (the two slowest used to run 51 s and 54 s before
 * ending in a crash or a result).
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { corpusDir, expectClean, expectRefusal, run } from './harness.js';

const corpus = corpusDir();
afterAll(() => corpus.done());

/** Seeded generator (Park–Miller) so that the corpus files are the same on every run. */
function lcg(seed: number): () => number {
  let s = seed;
  return () => (s = (s * 48271) % 2147483647) / 2147483647;
}

/** A weekly log of 40 members over 20 weeks from 2026-01-05: 200 bookings. */
function weeklyRows(): string[] {
  const r = lcg(1);
  const start = Date.UTC(2026, 0, 5);
  return Array.from({ length: 200 }, (_, i) => `m${i % 40},${new Date(start + Math.floor(r() * 20 * 7 * 86_400_000)).toISOString()},booking_made`);
}
const HEADER = 'user_id,timestamp,event';
const weekly = corpus.file('weekly.csv', [HEADER, ...weeklyRows()].join('\n') + '\n');
const rules = (name: string, body: string) => corpus.file(name, body);

/**
 * The daily log of the stray-timestamp case: 4,000 members booking over 60 days from 2026-03-01
 * (11,993 rows), one booking in 1900 on line 501 and one in 2199 on the last line.
 */
function strayLog(): string {
  const r = lcg(1);
  const rows = [HEADER];
  for (let u = 0; u < 4000; u++) {
    const n = 1 + Math.floor(r() * 5);
    for (let k = 0; k < n; k++) rows.push(`u${u},${new Date(Date.UTC(2026, 2, 1) + Math.floor(r() * 60 * 86_400_000)).toISOString()},booking_made`);
  }
  rows.splice(500, 0, 'u7,1900-01-01T00:00:00Z,booking_made');
  rows.push('u9,2199-12-31T00:00:00Z,booking_made');
  return rows.join('\n') + '\n';
}
const stray = corpus.file('stray.csv', strayLog());
const strayLines = readFileSync(stray, 'utf8').trimEnd().split('\n').length;
const daily = rules('daily.yaml', 'grain: day\nlapseLimit: 7\n');

describe('rules values at and beyond their bounds', () => {
  it('lapseLimit 100000 (the bound) runs at once: the plan does not grow with it', { timeout: 30_000 }, async () => {
    const r = await run('flows', '--events', weekly, '--rules', rules('l1e5.yaml', 'grain: week\nlapseLimit: 100000\n'), '--format', 'json');
    expectClean(r);
    expect(r.code, r.err).toBe(0);
    // with a lapse limit beyond the data nobody is ever dormant
    const out = JSON.parse(r.out) as { stateCounts: Record<string, number>[] };
    expect(out.stateCounts.every((c) => c.dormant === 0)).toBe(true);
  });

  it.each([
    ['lapseLimit: 1000000000', 'lapseLimit', '100,000 periods'],
    ['lapseLimit: 1e400', 'lapseLimit', 'from 0 to 100,000 periods'],
    ['lapseLimit: .nan', 'lapseLimit', 'from 0 to 100,000 periods'],
    ['lapseLimit: 2\nwarmup: 1e9', 'warmup', '100,000 periods'],
    ['lapseLimit: 2\nminCell: 1e12', 'minCell', '1,000,000 users'],
    ['lapseLimit: 2\nactivity: { minEvents: 5000000 }', 'activity.minEvents', '1,000,000 events'],
    ['lapseLimit: 2\ntenureBands: [0, 1, 1e9]', 'tenureBands[2]', '100,000 periods'],
  ])('%j is refused with one line naming the file, the key and the bound', async (body, key, bound) => {
    const file = rules('bound.yaml', `grain: week\n${body}\n`);
    const line = expectRefusal(await run('flows', '--events', weekly, '--rules', file), 1);
    expect(line).toContain(`${file}:`);
    expect(line).toContain(`key ${key}`);
    expect(line).toContain(bound);
  });

  it('--warmup 1e9 on the command line is refused with one line', async () => {
    // a command-line option is checked before reading: a usage error (exit 2) naming --warmup
    expect(expectRefusal(await run('flows', '--events', weekly, '--warmup', '1e9'), 2)).toMatch(/--warmup/);
  });
});

describe('YAML built to exhaust a parser', () => {
  it('an alias bomb ("billion laughs") is refused at once, naming the file', async () => {
    const lines = ['a: &a ["lol","lol","lol","lol","lol","lol","lol","lol","lol"]'];
    for (const [x, y] of ['ba', 'cb', 'dc', 'ed', 'fe', 'gf', 'hg', 'ih']) lines.push(`${x}: &${x} [${Array(9).fill(`*${y}`).join(',')}]`);
    const file = rules('bomb.yaml', `${lines.join('\n')}\ngrain: week\nlapseLimit: 2\n`);
    const line = expectRefusal(await run('rules', 'check', file), 1);
    expect(line).toMatch(/bomb\.yaml: the YAML expands its aliases too often/);
  });

  it.each([
    ['flow lists 20,000 deep', `name: ${'['.repeat(20_000)}${']'.repeat(20_000)}`],
    ['block lists 5,000 deep on one line', `name:\n  ${'- '.repeat(5000)}x`],
  ])('%s are refused before the parser recurses', async (_what, body) => {
    const line = expectRefusal(await run('rules', 'check', rules('deep.yaml', `grain: week\nlapseLimit: 2\n${body}\n`)), 1);
    expect(line).toContain('nests more than 32 levels');
  });

  it('a rules "file" that never ends (/dev/zero) is refused after 256 KB', async () => {
    expect(expectRefusal(await run('flows', '--events', weekly, '--rules', '/dev/zero'), 1)).toContain('larger than 256 KB');
  });

  it('a folder given as the rules file is refused with one line', async () => {
    expectRefusal(await run('flows', '--events', weekly, '--rules', corpus.dir), 1);
  });
});

describe('one stray timestamp in a daily log (1900 and 2199 among 4,000 members of 2026)', () => {
  it('is refused within seconds with one line naming both rows and the --from/--to that rescue it', { timeout: 30_000 }, async () => {
    const line = expectRefusal(await run('flows', '--events', stray, '--rules', daily), 1);
    expect(line).toMatch(/classifying 1900-01-01 to 2199-12-31 \(109,573 days, 4,000 users\) needs about \d+ GB, more than the [\d.]+ GB memory budget/);
    expect(line).toContain(`stray.csv:501 '1900-01-01T00:00:00Z'`);
    expect(line).toContain(`stray.csv:${strayLines} '2199-12-31T00:00:00Z'`);
    expect(line).toContain('Pass --from 2026-03-01 --to 2026-04-29');
  });

  it('classify (which also builds a row per user-period) is refused the same way', { timeout: 30_000 }, async () => {
    expect(expectRefusal(await run('classify', '--events', stray, '--rules', daily), 1)).toContain('memory budget');
  });

  it('with the suggested --from/--to it runs: the 1900 booking is history, the 2199 one is after --to', { timeout: 30_000 }, async () => {
    const r = await run('flows', '--events', stray, '--rules', daily, '--from', '2026-03-01', '--to', '2026-04-29', '--format', 'json');
    expectClean(r);
    expect(r.code, r.err).toBe(0);
    const out = JSON.parse(r.out) as { periods: string[]; rows: { read: number; used: number; afterRange: number } };
    expect([out.periods[0], out.periods[out.periods.length - 1], out.periods.length]).toEqual(['2026-03-01', '2026-04-29', 60]);
    expect(out.rows).toMatchObject({ read: strayLines - 1, used: strayLines - 2, afterRange: 1 });
    expect(r.err).not.toContain('warning:');
  });

  it('with --from only, the 2199 row still stretches the range: refused, naming that row and suggesting --to', { timeout: 30_000 }, async () => {
    const line = expectRefusal(await run('flows', '--events', stray, '--rules', daily, '--from', '2026-03-01'), 1);
    expect(line).toContain(`stray.csv:${strayLines} '2199-12-31T00:00:00Z'`);
    expect(line).not.toContain("'1900-01-01T00:00:00Z'");
    expect(line).toContain('Pass --to 2026-04-29');
  });
});

describe('a handful of far rows that still fit in memory', () => {
  // the weekly log, one booking in 1970 (epoch 0) on line 52 and one in 2031 on the last line
  const rows = weeklyRows();
  rows.splice(50, 0, 'm3,0,booking_made');
  rows.push('m4,2031-06-02T10:00:00Z,booking_made');
  const both = corpus.file('both.csv', [HEADER, ...rows].join('\n') + '\n');

  it('are named in a warning on standard error with the --from/--to of the bulk', { timeout: 30_000 }, async () => {
    const r = await run('flows', '--events', both, '--format', 'json');
    expectClean(r);
    expect(r.code, r.err).toBe(0);
    const warnings = r.lines.filter((l) => l.startsWith('warning:'));
    expect(warnings).toHaveLength(1);
    expect(warnings[0]).toContain("both.csv:52 '0'");
    expect(warnings[0]).toContain(`both.csv:${rows.length + 1} '2031-06-02T10:00:00Z'`);
    expect(warnings[0]).toMatch(/pass --from 2026-01-05 --to 2026-05-\d\d to analyse the bulk only/);
  });

  it('once --from and --to leave them out, no warning is given', async () => {
    const r = await run('flows', '--events', both, '--from', '2026-01-05', '--to', '2026-05-18', '--format', 'json');
    expect(r.code, r.err).toBe(0);
    expect(r.err).not.toContain('warning:');
  });
});

describe('the report on a weekly log with one epoch-0 timestamp (201 rows, 2,933 weeks)', () => {
  const rows = weeklyRows();
  rows.splice(50, 0, 'm3,0,booking_made');
  const epoch = corpus.file('epoch.csv', [HEADER, ...rows].join('\n') + '\n');

  it('finishes in seconds, warns on stderr and in the report, naming the line and the value', { timeout: 60_000 }, async () => {
    const out = join(corpus.dir, 'report-epoch');
    const r = await run('report', '--events', epoch, '--out', out, '--format', 'json');
    expectClean(r);
    expect(r.code, r.err).toBe(0);
    const warning = r.lines.find((l) => l.startsWith('warning:'));
    expect(warning).toContain("epoch.csv:52 '0'");
    expect(warning).toContain('pass --from 2026-01-05');
    const html = readFileSync(join(out, 'index.html'), 'utf8');
    expect(html).toContain('epoch.csv:52 &#39;0&#39;');
    const headline = JSON.parse(r.out) as { warnings: string[] };
    expect(headline.warnings.some((w) => w.includes("epoch.csv:52 '0'"))).toBe(true);
  });

  it('project (whose backtest scores every origin) finishes too', { timeout: 60_000 }, async () => {
    const r = await run('project', '--events', epoch, '--format', 'json');
    expectClean(r);
    expect(r.code, r.err).toBe(0);
  });
});
