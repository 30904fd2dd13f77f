/**
 * The command-line contract, run in-process through `main(argv, io)`: the JSON shape of `flows`, the
 * CSV of `classify`, and exit codes with one-line messages (common practice for CLIs: 0 success,
 * 1 bad input or data, 2 bad usage).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { main } from '../../src/cli/main.js';
import { bufferIo } from '../../src/cli/io.js';
import { refClassify, refRows, STATES, type RefEvent, type RefRules } from './reference.js';
import { eventsCsv, rulesYaml, tempDir } from './helpers.js';

let t: ReturnType<typeof tempDir>;
let events: string;
let rules: string;

// members of the makerspace booking app over four days (day grain, UTC, lapseLimit 1)
const LOG: RefEvent[] = [
  { user: 'ada', timestamp: '2026-03-01T09:00:00Z', event: 'booking' },
  { user: 'ada', timestamp: '2026-03-02T09:00:00Z', event: 'tool_reservation' },
  { user: 'ada', timestamp: '2026-03-04T09:00:00Z', event: 'booking' },
  { user: 'bo', timestamp: '2026-03-01T18:00:00Z', event: 'booking' },
  { user: 'cy', timestamp: '2026-03-03T12:00:00Z', event: 'booking' },
  { user: 'cy', timestamp: '2026-03-04T12:00:00Z', event: 'booking' },
];
const RULES: RefRules = { grain: 'day', lapseLimit: 1 };

beforeAll(() => {
  t = tempDir();
  events = t.file('bookings.csv', eventsCsv(LOG));
  rules = t.file('rules.yaml', rulesYaml(RULES));
});
afterAll(() => t.done());

async function run(...argv: string[]) {
  const io = bufferIo();
  const code = await main(argv, io);
  return { code, out: io.out, err: io.err };
}

/** Exit 1, exactly one non-empty line on stderr, no stack trace. */
function expectOneLineFailure(r: { code: number; err: string }) {
  expect(r.code, r.err).toBe(1);
  const lines = r.err.split('\n').filter((l) => l.trim() !== '');
  expect(lines, r.err).toHaveLength(1);
  expect(r.err).not.toMatch(/^\s+at /m);
  expect(r.err).not.toMatch(/TidemarkError/);
  return lines[0];
}

describe('flows --format json', () => {
  it('has states, periods, transitions, pooled and rows; counts follow the order of states', async () => {
    const r = await run('flows', '--events', events, '--rules', rules, '--format', 'json');
    expect(r.code, r.err).toBe(0);
    const j = JSON.parse(r.out);
    for (const k of ['states', 'periods', 'transitions', 'pooled', 'rows']) expect(j, k).toHaveProperty(k);
    expect(j.states).toEqual([...STATES]);
    expect(j.periods).toEqual(['2026-03-01', '2026-03-02', '2026-03-03', '2026-03-04']);
    expect(j.transitions).toHaveLength(3);
    for (const tr of j.transitions) for (const k of ['from', 'to', 'counts', 'fresh', 'rates', 'retention']) expect(tr, k).toHaveProperty(k);

    // by hand: D1→D2 ada fresh→engaged, bo fresh→lapsing; D2→D3 ada engaged→lapsing, bo lapsing→dormant,
    // cy enters; D3→D4 ada lapsing→returned, bo dormant→dormant, cy fresh→engaged
    const at = (tr: { counts: number[][] }, a: string, b: string) => tr.counts[j.states.indexOf(a)][j.states.indexOf(b)];
    const [t1, t2, t3] = j.transitions;
    expect([at(t1, 'fresh', 'engaged'), at(t1, 'fresh', 'lapsing'), t1.fresh]).toEqual([1, 1, 0]);
    expect([at(t2, 'engaged', 'lapsing'), at(t2, 'lapsing', 'dormant'), t2.fresh]).toEqual([1, 1, 1]);
    expect([at(t3, 'lapsing', 'returned'), at(t3, 'dormant', 'dormant'), at(t3, 'fresh', 'engaged'), t3.fresh]).toEqual([1, 1, 1, 0]);
    for (const tr of j.transitions) expect(tr.counts.flat().reduce((a: number, b: number) => a + b, 0)).toBe(tr === t1 ? 2 : tr === t2 ? 2 : 3);

    // the same as the reference
    const ref = refClassify(LOG, RULES);
    expect(j.transitions.map((x: { from: string; to: string; counts: number[][]; fresh: number }) => ({ from: x.from, to: x.to, counts: x.counts, fresh: x.fresh }))).toEqual(
      ref.transitions,
    );
    expect(t1.retention.fresh).toEqual({ n: 2, retained: 1, rate: 0.5 });
    expect(t1.rates[j.states.indexOf('fresh')]).toEqual([0, 0.5, 0, 0.5, 0]);
    expect(j.rows).toMatchObject({ read: 6, used: 6 });
  });

  it('stdout is JSON alone: notes go to stderr', async () => {
    const r = await run('flows', '--events', events, '--rules', rules, '--format', 'json');
    expect(() => JSON.parse(r.out)).not.toThrow();
  });
});

describe('classify', () => {
  it('writes CSV with the header user_id,period,state, sorted by user then period', async () => {
    const r = await run('classify', '--events', events, '--rules', rules);
    expect(r.code, r.err).toBe(0);
    const lines = r.out.trimEnd().split(/\r?\n/);
    expect(lines[0]).toBe('user_id,period,state');
    expect(lines.slice(1)).toEqual(refRows(refClassify(LOG, RULES)).map((x) => `${x.user},${x.period},${x.state}`));
    // written out by hand
    expect(lines.slice(1, 5)).toEqual(['ada,2026-03-01,fresh', 'ada,2026-03-02,engaged', 'ada,2026-03-03,lapsing', 'ada,2026-03-04,returned']);
  });

  it('--from narrows the rows; history before it still shapes states', async () => {
    const r = await run('classify', '--events', events, '--rules', rules, '--from', '2026-03-03', '--quiet');
    expect(r.code, r.err).toBe(0);
    expect(r.out.trimEnd().split(/\r?\n/)).toEqual([
      'user_id,period,state',
      'ada,2026-03-03,lapsing',
      'ada,2026-03-04,returned',
      'bo,2026-03-03,dormant',
      'bo,2026-03-04,dormant',
      'cy,2026-03-03,fresh',
      'cy,2026-03-04,engaged',
    ]);
  });

  it('--to ignores later events', async () => {
    const r = await run('classify', '--events', events, '--rules', rules, '--to', '2026-03-02', '--quiet');
    expect(r.code, r.err).toBe(0);
    expect(r.out.trimEnd().split(/\r?\n/)).toEqual(['user_id,period,state', 'ada,2026-03-01,fresh', 'ada,2026-03-02,engaged', 'bo,2026-03-01,fresh', 'bo,2026-03-02,lapsing']);
  });
});

describe('exit codes and messages', () => {
  it('a bad rules key: exit 1, one line naming the key', async () => {
    const bad = t.file('bad-key.yaml', 'grain: day\nlapseLimit: 1\nlapse_limit: 2\n');
    const line = expectOneLineFailure(await run('flows', '--events', events, '--rules', bad, '--format', 'json'));
    expect(line).toContain('lapse_limit');
    expect(line).toContain('bad-key.yaml');
  });

  it('a bad rules value: exit 1, one line naming the key', async () => {
    const bad = t.file('bad-grain.yaml', 'grain: fortnight\nlapseLimit: 1\n');
    const line = expectOneLineFailure(await run('classify', '--events', events, '--rules', bad));
    expect(line).toContain('grain');
  });

  it('a missing events file: exit 1, one line naming the file', async () => {
    const line = expectOneLineFailure(await run('flows', '--events', `${t.dir}/no-such-bookings.csv`, '--rules', rules));
    expect(line).toContain('no-such-bookings.csv');
  });

  it('a missing rules file: exit 1, one line naming the file', async () => {
    const line = expectOneLineFailure(await run('flows', '--events', events, '--rules', `${t.dir}/no-such-rules.yaml`));
    expect(line).toContain('no-such-rules.yaml');
  });

  it('a bad row: exit 1, one line with file:line, column and value', async () => {
    const f = t.file('bad-row.csv', 'user_id,timestamp,event\nada,2026-03-01T09:00:00Z,booking\nbo,half past nine,booking\n');
    const line = expectOneLineFailure(await run('flows', '--events', f, '--rules', rules, '--format', 'json'));
    expect(line).toContain('bad-row.csv:3');
    expect(line).toContain('timestamp');
    expect(line).toContain('half past nine');
  });

  it('--skip-bad-rows turns the same file into exit 0', async () => {
    const f = t.file('bad-row2.csv', 'user_id,timestamp,event\nada,2026-03-01T09:00:00Z,booking\nbo,half past nine,booking\n');
    const r = await run('flows', '--events', f, '--rules', rules, '--format', 'json', '--skip-bad-rows');
    expect(r.code, r.err).toBe(0);
    expect(JSON.parse(r.out).rows).toMatchObject({ read: 2, used: 1, rejected: { 'bad timestamp': 1 } });
  });

  it('a --warmup that leaves no period to analyse: exit 2 naming the flag, one line', async () => {
    const r = await run('flows', '--events', events, '--rules', rules, '--warmup', '9');
    expect(r.code, r.err).toBe(2);
    expect(r.err.split('\n').filter((l) => l.trim() !== '')).toEqual([expect.stringMatching(/^tidemark: --warmup: a warm-up of 9 periods leaves no period/)]);
  });

  it('the same warm-up from the rules file is a data problem: exit 1, one line naming the key', async () => {
    const warm = t.file('warm-rules.yaml', rulesYaml({ ...RULES, warmup: 9 }));
    const line = expectOneLineFailure(await run('flows', '--events', events, '--rules', warm));
    expect(line).toMatch(/key warmup: a warm-up of 9 periods/);
  });

  it('an unknown option: exit 2', async () => {
    const r = await run('flows', '--events', events, '--rules', rules, '--colour');
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/colour/);
    expect(r.err).not.toMatch(/^\s+at /m);
  });

  it('an unknown command: exit 2', async () => {
    const r = await run('flow', '--events', events);
    expect(r.code).toBe(2);
    expect(r.err).not.toMatch(/^\s+at /m);
  });

  it('a bad --format choice: exit 2', async () => {
    const r = await run('flows', '--events', events, '--rules', rules, '--format', 'xml');
    expect(r.code).toBe(2);
  });

  it('--help exits 0 and prints usage on stdout', async () => {
    const top = await run('--help');
    expect(top.code).toBe(0);
    expect(top.out).toMatch(/Usage:/);
    expect(top.out).toMatch(/flows/);
    expect(top.out).toMatch(/classify/);
    const sub = await run('flows', '--help');
    expect(sub.code).toBe(0);
    expect(sub.out).toMatch(/--events/);
  });
});
