/**
 * Options are checked before any event is read: a bad value ends in exit 2 and one line naming the
 * flag, even when the event file could not be read at all. Checks that need the data (a --fit longer
 * than the data, a --base the data do not hold, a --by column they lack) come after reading and still
 * exit 2 naming the flag, never a library key. Exit codes follow common CLI practice (2 = usage).
 */
import { execFileSync } from 'node:child_process';
import { createWriteStream, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { runCli, tempDir } from '../report/fixtures.js';
import { bookings } from './bookings.js';

const dir = tempDir('tidemark-options-');
/** A path that cannot be read: any command that opened it would fail with exit 1, not 2. */
const MISSING = join(dir, 'no-such-folder', 'bookings.csv');

const EVENTS = join(dir, 'bookings.csv');
writeFileSync(EVENTS, bookings());

/** Exactly one line on stderr, starting `tidemark: FLAG: `, and exit 2. */
function expectFlagRefusal(r: { code: number; err: string }, flag: string): string {
  expect(r.code, r.err).toBe(2);
  const lines = r.err.split('\n').filter((l) => l.startsWith('tidemark:'));
  expect(lines, r.err).toHaveLength(1);
  expect(lines[0]).toMatch(new RegExp(`^tidemark: ${flag}: `));
  expect(r.err).not.toMatch(/key (range|scenario|target|base|compare|by|from|to|warmup|inflow)\b/);
  return lines[0];
}

describe('a bad option is refused before any event file is opened (the events path cannot be read)', () => {
  it('control: with good options the unreadable path is an input error, exit 1', async () => {
    const r = await runCli(['flows', '--events', MISSING]);
    expect(r.code, r.err).toBe(1);
  });

  it.each([
    ['classify', ['--from', '2026-13-01'], '--from'],
    ['flows', ['--pool', 'banana'], '--pool'],
    ['flows', ['--to', 'dead'], '--to'],
    ['retention', ['--warmup', '-1'], '--warmup'],
    ['retention', ['--from', '2026-05-01', '--to', '2026-04-01'], '--from'],
    ['explain', ['--base', '2026-02-30'], '--base'],
    ['project', ['--what-if', 'lapsing->engaged*1.2'], '--what-if'],
    ['project', ['--what-if', 'lapsing-engaged'], '--what-if'],
    ['project', ['--horizon', '-1'], '--horizon'],
    ['project', ['--seed', 'x'], '--seed'],
    ['project', ['--until', 'dead'], '--until'],
    ['project', ['--fit', '0'], '--fit'],
    ['project', ['--inflow', '1e400'], '--inflow'],
    ['project', ['--scenario', 'keep=lapsing->engaged*1.2'], '--scenario'],
    ['project', ['--scenario', 'lapsing->dormant*0.8'], '--scenario'],
    ['project', ['--scenario', 'launch=+3000 fresh at +40'], '--scenario'],
    ['project', ['--scenario', 'launch=+3000 dormant at +4'], '--scenario'],
    ['project', ['--inflow-method', 'mode'], '--inflow-method'],
    ['project', ['--season', '0'], '--season'],
    ['cohorts', ['--ages', '1,x'], '--ages'],
    ['cohorts', ['--window', '5..2'], '--window'],
    ['survival', ['--merge', '0'], '--merge'],
    ['curve', ['--horizon', 'x'], '--horizon'],
    ['report', ['--seed', 'x', '--out', join(dir, 'r0')], '--seed'],
    ['report', ['--compare', '2026-13-01', '--out', join(dir, 'r1')], '--compare'],
    ['report', ['--scenario', 'x=lapsing->engaged*2', '--out', join(dir, 'r3')], '--scenario'],
    ['audience', ['--period', '2026-13-01', '--entered', 'fresh'], '--period'],
    ['audience', ['--period', '2026-03-02', '--entered', 'engaged', '--from-state', 'lapsing'], '--from-state'],
    ['audience', ['--period', '2026-03-02', '--entered', 'fresh', '--where', 'plan'], '--where'],
  ] as [string, string[], string][])('%s %j: exit 2 naming the flag', async (command, args, flag) => {
    expectFlagRefusal(await runCli([command, '--events', MISSING, ...args]), flag);
  });

  it('curve --alive is checked without any file: rising counts, non-numbers, two ages', async () => {
    expect(expectFlagRefusal(await runCli(['curve', '--alive', '100,120,80']), '--alive')).toMatch(/entry 2 \(120\) is above entry 1 \(100\)/);
    expect(expectFlagRefusal(await runCli(['curve', '--alive', '1000,x,400']), '--alive')).toMatch(/entry 2 \('x'\)/);
    expect(expectFlagRefusal(await runCli(['curve', '--alive', '1000,600']), '--alive')).toMatch(/2 ages cannot identify the curve/);
    expect(expectFlagRefusal(await runCli(['curve', '--alive', '0,0,0']), '--alive')).toMatch(/no users at age 0/);
  });

  it('demo --seed is checked before anything is written', async () => {
    expectFlagRefusal(await runCli(['demo', '--seed', 'x', '--out', join(dir, 'never', 'demo')]), '--seed');
  });
});

describe('checks that need the data come after reading, still exit 2 naming the flag', () => {
  it.each([
    ['project', ['--fit', '100'], '--fit', /cannot take the last 100 transitions: the data have 5/],
    ['project', ['--fit', '2026-01-05..'], '--fit', /start '2026-01-05' is not a period of the data/],
    ['flows', ['--pool', '100'], '--pool', /the data have 6/], // flows keeps the incomplete week
    ['explain', ['--base', '2026-01-05'], '--base', /2026-01-05 is not a period retained into/],
    ['explain', ['--by', 'plam'], '--by', /no column 'plam'.*Did you mean 'plan'/],
    ['survival', ['--by', 'region'], '--by', /no column 'region'/],
    ['flows', ['--from', '2027-01-01'], '--from', /after the last period of the data/],
    ['flows', ['--warmup', '40'], '--warmup', /leaves no period to analyse/],
    ['project', ['--what-if', 'returned->engaged*5'], '--what-if', /returned->engaged would become .*, above 1/],
    ['report', ['--base', '2026-01-05', '--out', join(dir, 'r2')], '--base', /2026-01-05 is not a period retained into/],
    ['audience', ['--period', '2026-03-02', '--entered', 'fresh', '--where', 'plam=pro'], '--where', /no column 'plam'.*Did you mean 'plan'/],
    ['audience', ['--period', '2026-01-05', '--entered', 'fresh'], '--period', /\(2026-01-05\) is not a period of the data/],
  ] as [string, string[], string, RegExp][])('%s %j', async (command, args, flag, message) => {
    const line = expectFlagRefusal(await runCli([command, '--events', EVENTS, '--quiet', ...args]), flag);
    expect(line).toMatch(message);
  }, 30_000);

  it('a period in the incomplete last period that was left out says so, and how to keep it', async () => {
    const line = expectFlagRefusal(await runCli(['explain', '--events', EVENTS, '--quiet', '--compare', '2026-04-13']), '--compare');
    expect(line).toMatch(/2026-04-13 is the incomplete last period, left out; pass --include-partial to keep it/);
    const kept = await runCli(['explain', '--events', EVENTS, '--quiet', '--compare', '2026-04-13', '--include-partial', '--format', 'json']);
    expect(kept.code, kept.err).toBe(0);
    expect(JSON.parse(kept.out).compare).toBe('2026-04-13');
  }, 30_000);

  it('a --what-if on a planner\'s matrix is checked against its own states, exit 2', async () => {
    const m = join(dir, 'weather.json');
    writeFileSync(m, JSON.stringify({ states: ['sun', 'rain'], matrix: [[0.8, 0.2], [0.4, 0.6]], start: { sun: 10, rain: 5 } }));
    expect(expectFlagRefusal(await runCli(['project', '--matrix', m, '--what-if', 'sun->snow*2']), '--what-if')).toMatch(/'snow' is not a state/);
    expect(expectFlagRefusal(await runCli(['project', '--matrix', m, '--until', 'snow']), '--until')).toMatch(/'snow' is not a state/);
    // on a planner's chain every move is allowed: setting a new route is fine
    expect((await runCli(['project', '--matrix', m, '--what-if', 'rain->sun=0.5', '--format', 'json'])).code).toBe(0);
  });
});

describe('report reads its input once', () => {
  it('from a FIFO, with an incomplete last period to leave out', async () => {
    const fifo = join(dir, 'events-pipe.csv');
    execFileSync('mkfifo', [fifo]);
    const writer = createWriteStream(fifo);
    writer.end(bookings());
    const r = await runCli(['report', '--events', fifo, '--out', join(dir, 'fifo-report'), '--format', 'json']);
    expect(r.code, r.err).toBe(0);
    expect(JSON.parse(r.out).warnings.join(' ')).toMatch(/2026-04-13, looks incomplete .* left out of every rate \(60 rows\)/);
    expect(r.err).toMatch(/rows: 300 read, 240 used, 60 in the incomplete last period/);
  }, 60_000); // a bound on a hang (a second read of the FIFO would wait for a writer forever), not a timing assertion
});
