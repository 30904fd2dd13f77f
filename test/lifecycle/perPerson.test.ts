/**
 * Per-person columns: the uniqueness measure against an independent computation written here (a map
 * from each value to the set of users holding it), on the makerspace's members with an email-like, a
 * phone-like and two ordinary columns, at the documented threshold's edges, and on random logs.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { TidemarkError } from '../../src/errors.js';
import { EventLogBuilder, type EventLog } from '../../src/ingest/eventLog.js';
import { PER_PERSON_FLAG, PER_PERSON_MIN_USERS, PER_PERSON_SHARE, checkSplitColumn, columnUniqueness, perPersonColumns } from '../../src/lifecycle/perPerson.js';
import { parseRules } from '../../src/rules/load.js';

const RULES = parseRules('grain: week\nlapseLimit: 2\n', 'rules.yaml');

/** rows: [user, values by column]; three events a row, one week apart. */
function logOf(columns: string[], rows: [string, string[]][]): EventLog {
  const b = new EventLogBuilder({ rules: RULES, skipBadRows: false });
  b.startFile('bookings.csv', columns);
  let line = 2;
  for (const [user, values] of rows) {
    for (let w = 0; w < 3; w++) b.add('bookings.csv', line++, user, `2026-03-0${2 + w}T10:00:00Z`, 'booking', values);
  }
  return b.build();
}

/** Independent: users holding a value no other user holds, over users holding any non-empty value. */
function naive(rows: [string, string[]][], col: number): { withValue: number; own: number } {
  const holders = new Map<string, Set<string>>();
  const withValue = new Set<string>();
  for (const [user, values] of rows) {
    const v = values[col];
    if (v === '') continue;
    withValue.add(user);
    if (!holders.has(v)) holders.set(v, new Set());
    holders.get(v)!.add(user);
  }
  const own = new Set<string>();
  for (const users of holders.values()) if (users.size === 1) own.add([...users][0]);
  return { withValue: withValue.size, own: own.size };
}

const PLANS = ['hobby', 'studio', 'pro'];
const REGIONS = ['north', 'south', 'east', 'west', 'centre'];
// 40 members of the fictional makerspace; phone numbers from the UK range reserved for fiction (07700 900xxx)
const MEMBERS: [string, string[]][] = Array.from({ length: 40 }, (_, i) => {
  const n = String(i + 1).padStart(3, '0');
  return [`m${n}`, [`member${n}@makerspace.example`, `+44 7700 900${n}`, PLANS[i % 3], REGIONS[i % 5]]];
});
const COLUMNS = ['email', 'phone', 'plan', 'region'];

describe('columnUniqueness(log, column)', () => {
  const log = logOf(COLUMNS, MEMBERS);

  it('an email-like and a phone-like column are per-person: every member holds a value of their own', () => {
    for (const c of ['email', 'phone']) {
      expect(columnUniqueness(log, c)).toEqual({ column: c, usersWithValue: 40, usersWithOwnValue: 40, share: 1, perPerson: true });
    }
  });

  it('ordinary columns (plan, region) are not: no member holds a value alone', () => {
    for (const c of ['plan', 'region']) {
      expect(columnUniqueness(log, c)).toEqual({ column: c, usersWithValue: 40, usersWithOwnValue: 0, share: 0, perPerson: false });
    }
  });

  it('agrees with the independent computation on each column', () => {
    COLUMNS.forEach((c, i) => {
      const r = naive(MEMBERS, i);
      const u = columnUniqueness(log, c);
      expect([u.usersWithValue, u.usersWithOwnValue], c).toEqual([r.withValue, r.own]);
    });
  });

  it('lists every column for a data check, per-person ones first', () => {
    expect(perPersonColumns(log).map((c) => [c.column, c.perPerson])).toEqual([['email', true], ['phone', true], ['plan', false], ['region', false]]);
  });

  it(`exactly ${PER_PERSON_SHARE * 100}% is not enough; one more member is (the threshold is "more than half")`, () => {
    // 40 members: k hold an own code, the others share codes in pairs
    const rows = (k: number): [string, string[]][] => Array.from({ length: 40 }, (_, i) => [`m${i}`, [i < k ? `own${i}` : `pair${Math.floor(i / 2)}`]]);
    expect(columnUniqueness(logOf(['code'], rows(20)), 'code')).toMatchObject({ usersWithOwnValue: 20, share: 0.5, perPerson: false });
    expect(columnUniqueness(logOf(['code'], rows(22)), 'code')).toMatchObject({ usersWithOwnValue: 22, share: 0.55, perPerson: true });
  });

  it(`needs at least ${PER_PERSON_MIN_USERS} users with a value`, () => {
    const rows = (n: number): [string, string[]][] => Array.from({ length: n }, (_, i) => [`m${i}`, [`m${i}@makerspace.example`]]);
    expect(columnUniqueness(logOf(['email'], rows(PER_PERSON_MIN_USERS - 1)), 'email').perPerson).toBe(false);
    expect(columnUniqueness(logOf(['email'], rows(PER_PERSON_MIN_USERS)), 'email').perPerson).toBe(true);
  });

  it('counts a member who changed email once; a shared household email is nobody\'s own; empty values do not count', () => {
    const rows: [string, string[]][] = [
      ['a', ['a@old.example']], ['a', ['a@new.example']],
      ['b', ['home@family.example']], ['c', ['home@family.example']],
      ['d', ['']],
    ];
    expect(columnUniqueness(logOf(['email'], rows), 'email')).toMatchObject({ usersWithValue: 3, usersWithOwnValue: 1 });
  });

  it('a column nobody filled in has share null and is not per-person', () => {
    const rows: [string, string[]][] = MEMBERS.map(([u]) => [u, ['']]);
    expect(columnUniqueness(logOf(['note'], rows), 'note')).toMatchObject({ usersWithValue: 0, share: null, perPerson: false });
  });

  it('agrees with the independent computation on random logs (seeded)', () => {
    const row = fc.tuple(fc.integer({ min: 0, max: 30 }), fc.oneof(fc.constant(''), fc.integer({ min: 0, max: 40 }).map((v) => `v${v}`)));
    fc.assert(
      fc.property(fc.array(row, { minLength: 1, maxLength: 200 }), (raw) => {
        const rows: [string, string[]][] = raw.map(([u, v]) => [`u${u}`, [v]]);
        const u = columnUniqueness(logOf(['attr'], rows), 'attr');
        const r = naive(rows, 0);
        expect([u.usersWithValue, u.usersWithOwnValue]).toEqual([r.withValue, r.own]);
        expect(u.perPerson).toBe(r.withValue >= PER_PERSON_MIN_USERS && r.own / r.withValue > PER_PERSON_SHARE);
      }),
      { seed: 20260312, numRuns: 150 },
    );
  });
});

describe('checkSplitColumn(log, column, allow)', () => {
  const log = logOf(COLUMNS, MEMBERS);

  it('refuses a per-person column, naming the column, the share and the flag', () => {
    let err: unknown;
    try {
      checkSplitColumn(log, 'email');
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(TidemarkError);
    const e = err as TidemarkError;
    expect(e.code).toBe('INPUT_INVALID');
    expect(e.exitCode).toBe(1);
    expect(e.where.column).toBe('email');
    expect(e.oneLine()).toMatch(/column 'email'.*40 of 40 users \(100%\)/);
    expect(e.oneLine()).toContain(PER_PERSON_FLAG);
  });

  it('lets it through when allowed, and never refuses an ordinary column', () => {
    expect(checkSplitColumn(log, 'phone', true).perPerson).toBe(true);
    expect(checkSplitColumn(log, 'plan').perPerson).toBe(false);
  });

  it('an unknown column: "did you mean"', () => {
    expect(() => checkSplitColumn(log, 'emial')).toThrow(/no column 'emial'/);
    try {
      checkSplitColumn(log, 'emial');
    } catch (e) {
      expect((e as TidemarkError).hint).toBe("did you mean 'email'?");
    }
  });
});
