/**
 * `tidemark audience` in-process: the CSV (read back with papaparse, an independent RFC 4180 parser)
 * and JSON contracts on a log worked by hand, the empty list, the privacy note, pseudonyms against
 * RFC 4231 test case 6 (test/fixtures/published-values.md), and options checked before any event is
 * read (an unreadable events path proves nothing was read).
 */
import { readFileSync } from 'node:fs';
import Papa from 'papaparse';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { bufferIo } from '../../src/cli/io.js';
import { main } from '../../src/cli/main.js';
import { tempDir } from '../core/helpers.js';

let t: ReturnType<typeof tempDir>;
let events: string;
let rules: string;

// Weeks from Monday 2026-03-02, lapse limit 1 (worked by hand in test/audience/list.test.ts):
// ada fresh, engaged (pro), lapsing, returned; bo fresh (studio), lapsing, dormant, dormant
const LOG = [
  'user_id,timestamp,event,plan,channel',
  'ada,2026-03-02T10:00:00Z,booking,hobby,open_day',
  'ada,2026-03-10T09:00:00Z,booking,pro,open_day',
  'ada,2026-03-24T09:00:00Z,booking,,open_day',
  'bo,2026-03-03T08:00:00Z,booking,studio,referral',
  'cy,2026-03-29T20:00:00Z,booking,pro,',
].join('\n');

beforeAll(() => {
  t = tempDir();
  events = t.file('bookings.csv', `${LOG}\n`);
  rules = t.file('rules.yaml', 'grain: week\nlapseLimit: 1\n');
});
afterAll(() => t.done());

async function run(...argv: string[]) {
  const io = bufferIo();
  const code = await main(argv, io);
  return { code, out: io.out, err: io.err };
}

const PRIVACY = /note: this list holds personal data .*follow local privacy law and the consent each person gave/;

describe('audience: CSV (the default) and JSON', () => {
  it('lists who entered, with previous state, tenure, last active period and the attributes', async () => {
    const r = await run('audience', '--events', events, '--rules', rules, '--period', '2026-03-18', '--entered', 'dormant');
    expect(r.code, r.err).toBe(0);
    const parsed = Papa.parse<string[]>(r.out.trimEnd());
    expect(parsed.errors).toEqual([]);
    expect(parsed.data).toEqual([
      ['user_id', 'state', 'previous_state', 'tenure', 'last_active', 'plan', 'channel'],
      ['bo', 'dormant', 'lapsing', '2', '2026-03-02', 'studio', 'referral'],
    ]);
    expect(r.err).toMatch(/^audience: 1 user entered dormant at 2026-03-16$/m);
    expect(r.err).toMatch(PRIVACY);
  });

  it('JSON: the query, the definition, the count and one object a user (null for no value or no previous state)', async () => {
    const r = await run('audience', '--events', events, '--rules', rules, '--period', '2026-03-23', '--entered', 'returned', '--format', 'json');
    expect(r.code, r.err).toBe(0);
    expect(JSON.parse(r.out)).toEqual({
      period: '2026-03-23',
      entered: 'returned',
      states: ['returned'],
      fromState: null,
      where: [],
      definition: 'users who are returned in the period and were not the period before',
      pseudonymised: false,
      count: 1,
      attributes: ['plan', 'channel'],
      users: [{ userId: 'ada', state: 'returned', previousState: 'lapsing', tenure: 3, lastActive: '2026-03-23', attributes: { plan: null, channel: 'open_day' } }],
    });
    const fresh = JSON.parse((await run('audience', '--events', events, '--rules', rules, '--period', '2026-03-23', '--entered', 'fresh', '--format', 'json')).out);
    expect(fresh.users).toEqual([{ userId: 'cy', state: 'fresh', previousState: null, tenure: 0, lastActive: '2026-03-23', attributes: { plan: 'pro', channel: null } }]);
  });

  it('an empty list is a valid file holding its header, with a note that nobody entered', async () => {
    const out = `${t.dir}/empty.csv`;
    const r = await run('audience', '--events', events, '--rules', rules, '--period', '2026-03-23', '--entered', 'dormant', '--from-state', 'lapsing', '--where', 'plan=pro', '--out', out);
    expect(r.code, r.err).toBe(0);
    expect(r.out).toBe('');
    expect(readFileSync(out, 'utf8')).toBe('user_id,state,previous_state,tenure,last_active,plan,channel\n');
    expect(r.err).toMatch(/^note: nobody entered dormant at 2026-03-23 from lapsing with plan pro: the list holds its header only$/m);
    const typo = await run('audience', '--events', events, '--rules', rules, '--period', '2026-03-23', '--entered', 'returned', '--where', 'plan=Pro');
    expect(typo.err).toMatch(/^note: no event has plan 'Pro' \(--where matches values exactly as written\)$/m);
    expect(r.err).toMatch(PRIVACY);
    const j = await run('audience', '--events', events, '--rules', rules, '--period', '2026-03-23', '--entered', 'dormant', '--format', 'json');
    expect(JSON.parse(j.out)).toMatchObject({ count: 0, users: [] });
  });

  it('the privacy note is printed even with --quiet', async () => {
    const r = await run('audience', '--events', events, '--rules', rules, '--period', '2026-03-09', '--entered', 'engaged', '--quiet');
    expect(r.code, r.err).toBe(0);
    expect(r.err.trim().split('\n')).toHaveLength(1);
    expect(r.err).toMatch(PRIVACY);
  });

  it('an attribute named like a fixed column is written attribute:NAME', async () => {
    const f = t.file('state-col.csv', 'user_id,timestamp,event,state,tenure\nm1,2026-03-02T10:00:00Z,booking,Oslo,x\n');
    const r = await run('audience', '--events', f, '--period', '2026-03-02', '--entered', 'fresh');
    expect(r.out.split('\n')[0]).toBe('user_id,state,previous_state,tenure,last_active,attribute:state,attribute:tenure');
    expect(r.out.split('\n')[1]).toBe('m1,fresh,,0,2026-03-02,Oslo,x');
  });
});

describe('audience --pseudonymise', () => {
  // RFC 4231 test case 6: key 0xaa × 131, data "Test Using Larger Than Block-Size Key - Hash Key First"
  const RFC_ID = 'Test Using Larger Than Block-Size Key - Hash Key First';
  const RFC_HMAC = '60e431591ee0b67f0d8a26aacbf5b77f8e0bc6213728c5140546040f0ee37f54';

  it('writes HMAC-SHA-256 of the id under the key file\'s bytes, never the id; the same key gives the same pseudonym every week', async () => {
    const key = t.file('rfc.key', Buffer.alloc(131, 0xaa));
    const week1 = t.file('w1.csv', `user_id,timestamp,event\n${RFC_ID},2026-03-02T10:00:00Z,booking\n`);
    const week2 = t.file('w2.csv', `user_id,timestamp,event\n${RFC_ID},2026-03-02T10:00:00Z,booking\n${RFC_ID},2026-03-09T10:00:00Z,booking\n`);
    const a = await run('audience', '--events', week1, '--period', '2026-03-02', '--entered', 'fresh', '--pseudonymise', key);
    expect(a.code, a.err).toBe(0);
    expect(a.out).toBe(`pseudonym,state,previous_state,tenure,last_active\n${RFC_HMAC},fresh,,0,2026-03-02\n`);
    expect(a.out).not.toContain(RFC_ID);
    expect(a.err).toMatch(/personal data \(pseudonyms, which whoever holds the key can link back/);
    const b = await run('audience', '--events', week2, '--period', '2026-03-09', '--entered', 'engaged', '--pseudonymise', key, '--format', 'json');
    expect(JSON.parse(b.out).users[0].pseudonym).toBe(RFC_HMAC);
    expect(JSON.parse(b.out).pseudonymised).toBe(true);
  });

  it('refuses a short or missing key before reading any event (exit 1, naming the file)', async () => {
    const short = t.file('short.key', 'secret\n');
    const r = await run('audience', '--events', '/nonexistent/events.csv', '--period', '2026-03-02', '--entered', 'fresh', '--pseudonymise', short);
    expect(r.code).toBe(1);
    expect(r.err).toBe(`tidemark: ${short}: the key is 7 bytes; a key needs at least 32. Make one with: head -c 32 /dev/urandom > audience.key, keep it secret, and use the same file every week\n`);
    const m = await run('audience', '--events', '/nonexistent/events.csv', '--period', '2026-03-02', '--entered', 'fresh', '--pseudonymise', `${t.dir}/none.key`);
    expect(m.code).toBe(1);
    expect(m.err).toMatch(new RegExp(`^tidemark: ${t.dir}/none\\.key: no such key file\\. Make one with`));
  });
});

describe('audience: options checked before any event is read', () => {
  const unread = ['--events', '/nonexistent/events.csv'];
  it.each([
    [['--entered', 'fresh'], 'tidemark: --period: which period? give a date inside it. For example --period 2026-09-14'],
    [['--period', '2026-02-30', '--entered', 'fresh'], "tidemark: --period: '2026-02-30' is not a date. Write a date as YYYY-MM-DD, e.g. 2026-05-04"],
    [['--period', '2026-03-02'], 'tidemark: --entered: which state? give the state the users entered. For example --entered dormant'],
    [['--period', '2026-03-02', '--entered', 'dormnt'], "tidemark: --entered: 'dormnt' is not a state of these rules. Did you mean 'dormant'?"],
    [['--period', '2026-03-02', '--entered', 'engaged', '--from-state', 'lapsing'], 'tidemark: --from-state: nobody enters engaged from lapsing: a lapsing user who is active the next period becomes returned. Users enter engaged from fresh or returned; users who were lapsing enter returned or dormant'],
    [['--period', '2026-03-02', '--entered', 'fresh', '--waist', '/nonexistent'], 'tidemark: --waist: audience lists users: it needs the events, and a waist holds only counts. Give --events'],
    [['--period', '2026-03-02', '--entered', 'fresh', '--where', 'plan'], "tidemark: --where: 'plan' is not COLUMN=VALUE. For example --where plan=studio (an empty value, plan=, keeps users with no value)"],
  ])('%j', async (args, line) => {
    const r = await run('audience', ...unread, ...args);
    expect(r.code).toBe(2);
    expect(r.err).toBe(`${line}\n`);
  });

  it('checks what only the data can judge after reading, as usage errors at the flag', async () => {
    const w = await run('audience', '--events', events, '--rules', rules, '--period', '2026-03-02', '--entered', 'fresh', '--where', 'plna=pro');
    expect([w.code, w.err]).toEqual([2, "tidemark: --where: the events have no column 'plna'. Did you mean 'plan'?\n"]);
    const p = await run('audience', '--events', events, '--rules', rules, '--period', '2026-05-04', '--entered', 'fresh');
    expect(p.code).toBe(2);
    expect(p.err).toMatch(/^tidemark: --period: the period of 2026-05-04 \(2026-05-04\) is not a period of the data\. The nearest period is 2026-03-23/);
  });
});
