/**
 * Hostile and awkward command lines: every bad option ends in one clean line naming the flag and exit
 * 2 (before any event is read when the data are not needed to judge it), what-ifs on moves the rules
 * rule out are refused with the reason, curve fits that cannot be identified are refused, an incomplete
 * last period is left out and counted, and a Kaplan–Meier median on a flat 0.5 follows its convention.
 */
import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { corpusDir, expectClean, expectRefusal, run } from './harness.js';
import { bookings } from '../cli/bookings.js';

const c = corpusDir();
afterAll(() => c.done());

const EVENTS = c.file('bookings.csv', bookings());
/** An events path no command may open before refusing a bad option. */
const UNREAD = join(c.dir, 'never-read', 'bookings.csv');

/** Refused with exit 2 in one clean line that names `flag` first; returns the line. */
function refusedAt(r: Awaited<ReturnType<typeof run>>, flag: string): string {
  const line = expectRefusal(r, 2);
  expect(line.startsWith(`tidemark: ${flag}: `), line).toBe(true);
  return line;
}

describe('options checked before reading: hostile values', () => {
  it.each([
    ['flows', '--pool', 'banana'],
    ['flows', '--pool', '0'],
    ['flows', '--pool', '2026-04-01..2026-03-01'],
    ['flows', '--pool', '2026-13-01..'],
    ['flows', '--from', '2026-13-01'],
    ['flows', '--from', '2026-02-30'],
    ['flows', '--to', 'dead'],
    ['flows', '--to', ''],
    ['flows', '--warmup', '1.5'],
    ['flows', '--warmup', '0x10'],
    ['flows', '--delimiter', ';;'],
    ['flows', '--delimiter', '"'],
    ['classify', '--from', '2026-05-01T00:00:00Z'],
    ['retention', '--to', '20260501'],
    ['explain', '--base', 'last week'],
    ['explain', '--compare', '2026-9-14'],
    ['project', '--until', 'dead'],
    ['project', '--until', 'Dormant'],
    ['project', '--horizon', '-1'],
    ['project', '--horizon', '0'],
    ['project', '--horizon', '99999999999999999999'],
    ['project', '--horizon', '1e3'],
    ['project', '--seed', 'x'],
    ['project', '--seed', '4294967296'],
    ['project', '--seed', '-1'],
    ['project', '--samples', '1000000000'],
    ['project', '--band', '90,10'],
    ['project', '--band', '10,190'],
    ['project', '--backtest-horizon', 'soon'],
    ['project', '--inflow', 'NaN'],
    ['project', '--inflow', 'Infinity'],
    ['project', '--inflow', '-5'],
    ['project', '--inflow', ''],
    ['project', '--fit', 'last week'],
    ['project', '--fit', '-3'],
    ['project', '--what-if', 'lapsing-engaged'],
    ['project', '--what-if', 'lapsing->dormant*lots'],
    ['project', '--what-if', 'lapsing->dormant=1e999'],
    ['project', '--what-if', 'a->b->c=0.1'],
    ['project', '--what-if', 'lapsing->engaged*1.2'],
    ['project', '--what-if', 'dormant->fresh=0.1'],
    ['project', '--what-if', 'inflow.engaged=100'],
    ['project', '--scenario', 'no name here'],
    ['project', '--scenario', 'inflow=500'],
    ['project', '--scenario', 'a=lapsing->engaged*1.2'],
    ['project', '--scenario', 'a=+3000 dormant at +4'],
    ['project', '--scenario', 'a=+1e400 fresh at +4'],
    ['project', '--scenario', 'a=+3000 fresh at +99999999999999999999'],
    ['project', '--scenario', 'a=+3000 fresh at +0'],
    ['project', '--scenario', `${'x'.repeat(41)}=inflow*2`],
    ['project', '--scenario', 'a=\u001b[31m->dormant*2'],
    ['project', '--inflow-method', 'median;rm'],
    ['project', '--season', '-1'],
    ['project', '--season', '1.5'],
    ['cohorts', '--ages', 'x'],
    ['cohorts', '--ages', '0'],
    ['cohorts', '--ages', '1,,4'],
    ['cohorts', '--ages', '1e9'],
    ['cohorts', '--window', '8..4'],
    ['cohorts', '--window', '0..4'],
    ['survival', '--merge', '0'],
    ['survival', '--merge', 'two'],
    ['curve', '--horizon', '-2'],
    ['curve', '--min-size', '0'],
    ['report', '--horizon', 'x'],
    ['report', '--seed', '1.5'],
    ['report', '--base', '2026-13-01'],
    ['audience', '--period', 'last week'],
    ['audience', '--period', '2026-9-14'],
    ['audience', '--period', ''],
  ])('%s %s %j: exit 2 naming the flag, no event read', async (command, flag, value) => {
    const out = command === 'report' ? ['--out', join(c.dir, 'never')] : [];
    refusedAt(await run(command, '--events', UNREAD, flag, value, ...out), flag);
  });

  it('values with control codes, newlines or great length are echoed escaped and shortened on one line', async () => {
    for (const [flag, value] of [['--from', '2026-05-04\u001b[31m'], ['--pool', 'all\nrm -rf /'], ['--to', `${'9'.repeat(5000)}`], ['--delimiter', '\u0007\u0007']]) {
      const line = refusedAt(await run('flows', '--events', UNREAD, flag, value), flag);
      expect(line).not.toMatch(/[\u0000-\u001f]/);
      expect(line.length).toBeLessThan(400);
    }
    const line = refusedAt(await run('project', '--events', UNREAD, '--what-if', 'lapsing->dormant\u001b]0;x\u0007*0.5'), '--what-if');
    expect(line).toMatch(/\\u001b/);
  });

  it('curve --alive: rising counts, non-numbers, negatives, empty entries, two ages, no members', async () => {
    for (const alive of ['100,120,80', '1000,x,400', '100,-5,3', '100,,50', '1000,600', '1000', '0,0,0', '100,100,100', 'Infinity,5,1', '1e400,5,1']) {
      refusedAt(await run('curve', '--alive', alive), '--alive');
    }
  });

  it('options that contradict each other', async () => {
    refusedAt(await run('curve', '--alive', '100,60,40', '--events', UNREAD), '--alive');
    refusedAt(await run('survival', '--durations', UNREAD, '--events', UNREAD), '--durations');
    refusedAt(await run('survival', '--events', UNREAD, '--merge', '3'), '--merge');
    refusedAt(await run('project', '--matrix', UNREAD, '--events', UNREAD), '--matrix');
  });
});

describe('options that need the data: after reading, still exit 2 naming the flag', () => {
  it.each([
    ['project', '--fit', '100'],
    ['project', '--fit', '2026-01-05..2026-01-19'],
    ['flows', '--pool', '500'],
    ['explain', '--base', '1999-01-04'],
    ['explain', '--compare', '2030-01-07'],
    ['explain', '--by', 'emali'],
    ['report', '--compare', '2030-01-07'],
    ['survival', '--by', 'region'],
    ['flows', '--from', '2030-01-01'],
    ['flows', '--warmup', '99'],
  ])('%s %s %j', async (command, flag, value) => {
    const out = command === 'report' ? ['--out', join(c.dir, `r-${value}`)] : [];
    const line = refusedAt(await run(command, '--events', EVENTS, '--quiet', flag, value, ...out), flag);
    expect(line).not.toMatch(/\bkey (range|scenario|target|base|compare|by|from|to|warmup)\b/);
  }, 30_000);
});

describe('what-ifs on moves the rules make impossible', () => {
  const rules = (lapseLimit: number) => c.file(`rules-${lapseLimit}.yaml`, `grain: week\nlapseLimit: ${lapseLimit}\n`);

  it.each([
    [2, 'lapsing->engaged*1.2', /a lapsing user who is active the next period becomes returned/, 'lapsing->returned*1.2'],
    [2, 'lapsing->engaged=0.3', /a lapsing user who is active the next period becomes returned/, 'lapsing->returned=0.3'],
    [2, 'fresh->returned*2', /a fresh user who is active the next period becomes engaged/, 'fresh->engaged*2'],
    [2, 'dormant->lapsing=0.1', /a dormant user who is inactive the next period becomes dormant/, 'dormant->dormant=0.1'],
    [2, 'engaged->fresh*0.5', /only new users enter fresh/, undefined],
    [1, 'lapsing->lapsing*0.5', /a lapsing user who is inactive the next period becomes dormant/, 'lapsing->dormant*0.5'],
    [0, 'lapsing->dormant*0.5', /no user is ever lapsing under these rules/, undefined],
    [0, 'fresh->lapsing=0.2', /no user is ever lapsing under these rules/, undefined],
  ] as [number, string, RegExp, string | undefined][])('lapseLimit %i, %s: refused with the reason', async (L, edit, reason, instead) => {
    const line = refusedAt(await run('project', '--events', UNREAD, '--rules', rules(L), '--what-if', edit), '--what-if');
    expect(line).toMatch(reason);
    if (instead) expect(line).toContain(`Did you mean '${instead}'?`);
    else expect(line).not.toMatch(/did you mean/i);
  });

  it('a misspelt move suggests only a possible one', async () => {
    const line = refusedAt(await run('project', '--events', UNREAD, '--what-if', 'lapsng->dormant*0.8'), '--what-if');
    expect(line).toContain("Did you mean 'lapsing->dormant*0.8'?");
    const far = refusedAt(await run('project', '--events', UNREAD, '--what-if', 'xyz->abc*0.8'), '--what-if');
    expect(far).toMatch(/Possible moves: fresh->engaged, fresh->lapsing/);
    expect(far).not.toMatch(/->fresh\b/); // nobody moves into fresh
  });

  it('a possible move still runs, with the fitted numbers', async () => {
    const r = await run('project', '--events', EVENTS, '--quiet', '--no-backtest', '--what-if', 'lapsing->returned*0.5', '--format', 'json');
    expectClean(r);
    expect(r.code, r.err).toBe(0);
    expect(JSON.parse(r.out).scenario.edits[0].text).toBe('lapsing->returned*0.5');
  }, 30_000);
});

describe('the incomplete last period is left out, said and counted', () => {
  it.each(['explain', 'project', 'retention', 'cohorts', 'survival'])('%s', async (command) => {
    const r = await run(command, '--events', EVENTS, '--format', 'json');
    expectClean(r);
    expect(r.code, r.err).toBe(0);
    const rows = /rows: ([\d,]+) read, ([\d,]+) used, ([\d,]+) in the incomplete last period/.exec(r.err);
    expect(rows, r.err).not.toBeNull();
    const [read, used, partial] = rows!.slice(1).map((x) => Number(x.replace(/,/g, '')));
    expect(read).toBe(used + partial); // no other row went anywhere in this clean file
    expect(JSON.parse(r.out).lastPeriod).toMatchObject({ leftOut: true, rowsLeftOut: partial });
  }, 30_000);

  it('an empty --include-partial value is not taken: it is a switch', async () => {
    const r = await run('retention', '--events', EVENTS, '--include-partial', '--format', 'json', '--quiet');
    expect(r.code, r.err).toBe(0);
    expect(JSON.parse(r.out).lastPeriod.leftOut).toBe(false);
  }, 30_000);
});

describe('Kaplan–Meier median on a flat stretch at exactly 0.5', () => {
  it('is the midpoint of the stretch (SAS PROC LIFETEST; R survival quantile.survfit)', async () => {
    // by hand: four users ending at 1, 2, 3, 4: Ŝ = 1/2 from 2 to 3, median 2.5 (the sample median)
    const f = c.file('four.csv', 'duration,observed\n1,1\n2,1\n3,1\n4,1\n');
    const r = await run('survival', '--durations', f, '--format', 'json');
    expect(r.code, r.err).toBe(0);
    expect(JSON.parse(r.out).groups[0].median).toBe(2.5);
  });
});

describe('a stray path never crashes the option checks', () => {
  it('a directory given as the events file, with a bad option: the option is refused first', async () => {
    const d = join(c.dir, 'a-folder.csv');
    mkdirSync(d);
    refusedAt(await run('flows', '--events', d, '--pool', 'banana'), '--pool');
  });
});
