/**
 * Hostile inputs for projections: planner's documents with odd audiences and shares, scenario texts
 * that try to break the parser or the terminal, segments of a column the data lack, and the most
 * scenarios a run allows. Each ends in a result or one clean refusal line (harness.ts).
 */
import { afterAll, describe, expect, it } from 'vitest';
import { corpusDir, expectClean, expectRefusal, run } from './harness.js';

const c = corpusDir();
afterAll(() => c.done());
const oz = { states: ['rain', 'nice', 'snow'], matrix: [[0.5, 0.25, 0.25], [0.5, 0, 0.5], [0.25, 0.25, 0.5]], start: { rain: 0.2, nice: 0.5, snow: 0.3 } };
const rows = ['user_id,timestamp,event,plan'];
for (let m = 0; m < 90; m++) for (let w = m % 6; w < 10; w++) if ((m + w) % 4) rows.push(`m${m},${new Date(Date.UTC(2026, 0, 5) + w * 7 * 86400000 + 7200000).toISOString()},booking_made,${['hobby', 'studio', '\u001b[31mpro'][m % 3]}`);
const EVENTS = c.file('bookings.csv', rows.join('\n'));
const RULES = c.file('rules.yaml', 'grain: week\nlapseLimit: 2\n');
const project = (...args: string[]) => run('project', '--events', EVENTS, '--rules', RULES, '--quiet', '--samples', '20', '--no-backtest', '--horizon', '4', ...args);

describe('hostile planner documents', () => {
  it.each([
    ['audience NaN (as a string)', { ...oz, audience: 'NaN' }, /"audience" must be a number of users > 0/],
    ['audience negative', { ...oz, audience: -5 }, /> 0/],
    ['audience zero', { ...oz, audience: 0 }, /> 0/],
    ['audience huge (1e400 is Infinity in JSON)', `{"states":["a"],"matrix":[[1]],"start":{"a":1},"audience":1e400}`, /> 0/],
    ['audience without a start', { states: oz.states, matrix: oz.matrix, audience: 100 }, /no "start"/],
    ['shares that sum to 2', { ...oz, start: { rain: 1, nice: 1 }, audience: 10 }, /sum to 2/],
    ['an audience key misspelt', { ...oz, audeince: 10 }, /unknown key "audeince".*audience/],
  ])('%s: refused in one line, exit 1', async (_, doc, pattern) => {
    const f = c.file(`doc${Math.random()}.json`, typeof doc === 'string' ? doc : JSON.stringify(doc));
    expect(expectRefusal(await run('project', '--matrix', f), 1)).toMatch(pattern);
  });

  it('a tiny audience (shares of 3 users) projects without rounding anyone to 0', async () => {
    const f = c.file('tiny.json', JSON.stringify({ ...oz, audience: 3 }));
    const r = await run('project', '--matrix', f, '--horizon', '2');
    expectClean(r);
    expect(r.code).toBe(0);
    expect(r.out).toMatch(/rain\s+0\.60/);
  });
});

describe('hostile scenarios and segments on events', () => {
  it.each([
    ['a control code in a state name', 'a=\u001b]0;title\u0007->dormant*2'],
    ['a right-to-left override in a name position', 'a\u202e=inflow*2'],
    ['a number too large', 'a=inflow*1e999'],
    ['a campaign of 1e400 users', 'a=+1e400 fresh at +2'],
    ['a campaign in a state nobody arrives in', 'a=+10 lapsing at +2'],
    ['an edit of a move that cannot happen', 'a=dormant->fresh=0.1'],
    ['a very long text', `a=${'lapsing->dormant*0.9;'.repeat(2000)}x`],
    ['edits of one row that add up to more than 1', 'a=engaged->lapsing=0.5;engaged->dormant=0.6'],
  ])('%s: refused in one clean line', async (_, text) => {
    const r = await project('--scenario', text);
    expect(expectRefusal(r, 2)).toMatch(/^tidemark: --scenario: /);
  });

  it('nine named scenarios are refused; eight run', async () => {
    const nine = Array.from({ length: 9 }, (_, i) => ['--scenario', `s${i}=inflow*${1 + i / 10}`]).flat();
    expect(expectRefusal(await project(...nine), 2)).toMatch(/at most 8 scenarios/);
    const eight = await project(...nine.slice(0, 16), '--format', 'json');
    expect(eight.code, eight.err).toBe(0);
    expect(JSON.parse(eight.out).scenarios).toHaveLength(8);
  }, 60_000);

  it('--by a column the data lack: exit 2 naming --by with a suggestion; a column whose values hold control codes prints them escaped', async () => {
    expect(expectRefusal(await project('--by', 'plam'), 2)).toMatch(/^tidemark: --by: .*plan/);
    const r = await project('--by', 'plan');
    expectClean(r);
    expect(r.code, r.err).toBe(0);
    expect(r.out).not.toMatch(/\u001b/);
  });
});
