/**
 * Reading event files: RFC 4180 CSV (quotes, doubled quotes, embedded newlines, CRLF, UTF-8 BOM),
 * NDJSON, column mapping, attributes, bad rows and the row accounting
 * read = used + notKeyEvent + afterRange + Σ rejected.
 */
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { readEvents } from '../../src/ingest/read.js';
import type { EventLog } from '../../src/ingest/eventLog.js';
import { filesSource } from '../../src/engines/types.js';
import { ENGINES, runWith } from './engines.js';
import { parseRules } from '../../src/rules/load.js';
import { expectTidemarkError, rulesOf, tempDir } from './helpers.js';

let t: ReturnType<typeof tempDir>;
beforeEach(() => {
  t = tempDir();
});
afterEach(() => t.done());

const dayRules = rulesOf({ grain: 'day', lapseLimit: 2 });
const bookingRules = rulesOf({ grain: 'day', lapseLimit: 2, keyEvents: ['booking', 'tool, reservation'] });

/** Per used row: the value of attribute `name`. */
function attr(log: EventLog, name: string): string[] {
  const a = log.attributes.find((x) => x.name === name);
  expect(a, `attribute ${name} among ${log.attributes.map((x) => x.name).join(', ')}`).toBeDefined();
  return Array.from(a!.codes, (c) => a!.values[c]);
}
const usersOf = (log: EventLog) => Array.from(log.user, (u) => log.users[u]);
const rejectedTotal = (log: EventLog) => Object.values(log.rows.rejected).reduce((a, b) => a + (b ?? 0), 0);
function expectBalanced(log: { rows: EventLog['rows'] }) {
  const r = log.rows;
  expect(r.read, JSON.stringify(r)).toBe(r.used + r.notKeyEvent + r.afterRange + Object.values(r.rejected).reduce((a, b) => a + (b ?? 0), 0));
}

describe('CSV, RFC 4180', () => {
  it('quoted fields with commas, doubled quotes and an embedded newline (RFC 4180 §2 rules 5–7)', async () => {
    const f = t.file(
      'bookings.csv',
      [
        'user_id,timestamp,event,tool,note',
        '"m,1",2026-03-01T10:00:00Z,booking,"Laser ""Big Red"" cutter",plain',
        'm2,2026-03-01T11:00:00Z,"tool, reservation",lathe,"first line',
        'second line"',
        'm3,2026-03-02T09:00:00Z,booking,,""',
        '',
      ].join('\n'),
    );
    const log = await readEvents([f], { rules: bookingRules });
    expect(log.size).toBe(3);
    expect(usersOf(log)).toEqual(['m,1', 'm2', 'm3']);
    expect(attr(log, 'tool')).toEqual(['Laser "Big Red" cutter', 'lathe', '']);
    expect(attr(log, 'note')).toEqual(['plain', 'first line\nsecond line', '']);
    // 'tool, reservation' (quoted, with a comma) matched the key event of that name
    expect(log.rows).toMatchObject({ read: 3, used: 3, notKeyEvent: 0, afterRange: 0 });
    expectBalanced(log);
  });

  it('CRLF line ends and a UTF-8 BOM: the first header name and the last field come out clean', async () => {
    const text = '\uFEFFuser_id,timestamp,event\r\nm1,2026-03-01T10:00:00Z,booking\r\nm2,2026-03-02T10:00:00Z,booking\r\n';
    const f = t.file('bookings.csv', text);
    const log = await readEvents([f], { rules: rulesOf({ grain: 'day', lapseLimit: 2, keyEvents: ['booking'] }) });
    // a stray \r on the event name would make these "not a key event"
    expect(log.rows).toMatchObject({ read: 2, used: 2, notKeyEvent: 0 });
    expect(usersOf(log)).toEqual(['m1', 'm2']);
  });

  it('CRLF with an attribute as the last column: no \\r is left on its values', async () => {
    const f = t.file('bookings.csv', 'user_id,timestamp,event,tool\r\nm1,2026-03-01T10:00:00Z,booking,lathe\r\nm2,2026-03-01T12:00:00Z,booking,"drill\r\npress"\r\n');
    const log = await readEvents([f], { rules: dayRules });
    expect(attr(log, 'tool')).toEqual(['lathe', 'drill\r\npress']);
  });

  it('columns are found by name in any order; blank lines are counted apart from rows', async () => {
    const f = t.file('bookings.csv', 'event,user_id,timestamp\nbooking,m1,2026-03-01T10:00:00Z\n\nbooking,m2,2026-03-01T10:00:00Z\n\n');
    const log = await readEvents([f], { rules: dayRules });
    expect(usersOf(log)).toEqual(['m1', 'm2']);
    expect(log.rows.read).toBe(2);
    expect(log.rows.lines.blank).toBe(2);
  });

  it('several files are read as one log', async () => {
    const a = t.file('a.csv', 'user_id,timestamp,event\nm1,2026-03-01T10:00:00Z,booking\n');
    const b = t.file('b.csv', 'user_id,timestamp,event\nm2,2026-03-03T10:00:00Z,booking\n');
    const log = await readEvents([a, b], { rules: dayRules });
    expect(usersOf(log)).toEqual(['m1', 'm2']);
    expect(log.rows.read).toBe(2);
  });
});

describe('NDJSON', () => {
  it('one object a line; extra keys are attributes; numbers are epochs', async () => {
    const f = t.file(
      'bookings.ndjson',
      [
        '{"user_id":"m1","timestamp":"2026-03-01T10:00:00Z","event":"booking","tool":"lathe"}',
        '',
        '{"user_id":"m2","timestamp":1772409600,"event":"booking","tool":"laser \\"big\\", red"}',
        '{"tool":"kiln","event":"tool_reservation","timestamp":"2026-03-02T08:00:00+01:00","user_id":"m1"}',
      ].join('\n') + '\n',
    );
    const log = await readEvents([f], { rules: dayRules });
    expect(usersOf(log)).toEqual(['m1', 'm2', 'm1']);
    expect(attr(log, 'tool')).toEqual(['lathe', 'laser "big", red', 'kiln']);
    expect(log.rows).toMatchObject({ read: 3, used: 3, lines: { blank: 1 } });
    expectBalanced(log);
  });

  it('a line that is not JSON names the file and line', async () => {
    const f = t.file('bookings.ndjson', '{"user_id":"m1","timestamp":"2026-03-01T10:00:00Z","event":"booking"}\n{"user_id": "m2", \n');
    const err = await expectTidemarkError(() => readEvents([f], { rules: dayRules }), 'EVENTS_BAD_ROW');
    expect(err.where.file).toContain('bookings.ndjson');
    expect(err.where.line).toBe(2);
    expect(err.oneLine()).toContain('bookings.ndjson:2');
  });
});

describe('column mapping', () => {
  const mapped = parseRules(
    ['grain: day', 'lapseLimit: 1', 'activity:', '  keyEvents: [book]', 'columns:', '  user: member', '  timestamp: at', '  event: action', ''].join('\n'),
    'mapped.yaml',
  );

  it('rules columns {user: member, timestamp: at, event: action}; other columns stay attributes', async () => {
    const f = t.file('bookings.csv', 'at,member,action,room\n2026-03-01T10:00:00Z,m1,book,wood shop\n2026-03-02T10:00:00Z,m2,login,lobby\n2026-03-03T10:00:00Z,m1,book,metal shop\n');
    const log = await readEvents([f], { rules: mapped });
    expect(usersOf(log)).toEqual(['m1', 'm1']);
    expect(log.rows).toMatchObject({ read: 3, used: 2, notKeyEvent: 1 });
    expect(attr(log, 'room')).toEqual(['wood shop', 'metal shop']);
    expect(log.attributes.map((a) => a.name)).not.toContain('member');
  });

  it('the same mapping reads NDJSON keys', async () => {
    const f = t.file('bookings.ndjson', '{"member":"m1","at":"2026-03-01T10:00:00Z","action":"book"}\n');
    const log = await readEvents([f], { rules: mapped });
    expect(usersOf(log)).toEqual(['m1']);
  });

  it('a header without the mapped column is refused, naming the column', async () => {
    const f = t.file('bookings.csv', 'user_id,timestamp,event\nm1,2026-03-01T10:00:00Z,book\n');
    const err = await expectTidemarkError(() => readEvents([f], { rules: mapped }), 'EVENTS_FORMAT');
    expect(err.oneLine()).toMatch(/member/);
  });
});

describe('bad rows', () => {
  it('a bad timestamp: the error names file, line, column and value', async () => {
    const f = t.file('bookings.csv', 'user_id,timestamp,event\nm1,2026-03-01T10:00:00Z,booking\nm2,next tuesday,booking\n');
    const err = await expectTidemarkError(() => readEvents([f], { rules: dayRules }), 'EVENTS_BAD_ROW');
    expect(err.where).toMatchObject({ line: 3, column: 'timestamp' });
    expect(err.where.file).toContain('bookings.csv');
    const line = err.oneLine();
    expect(line).toContain('bookings.csv:3');
    expect(line).toContain('timestamp');
    expect(line).toContain('next tuesday');
    expect(line).not.toMatch(/\n/);
  });

  it('a missing user id names the user column', async () => {
    const f = t.file('bookings.csv', 'user_id,timestamp,event\n,2026-03-01T10:00:00Z,booking\n');
    const err = await expectTidemarkError(() => readEvents([f], { rules: dayRules }), 'EVENTS_BAD_ROW');
    expect(err.where).toMatchObject({ line: 2, column: 'user_id' });
  });

  it('a missing event name, when key events are listed, names the event column', async () => {
    const f = t.file('bookings.csv', 'user_id,timestamp,event\nm1,2026-03-01T10:00:00Z,\n');
    const err = await expectTidemarkError(() => readEvents([f], { rules: bookingRules }), 'EVENTS_BAD_ROW');
    expect(err.where).toMatchObject({ line: 2, column: 'event' });
  });

  it('the line of a bad row counts physical lines, after a record with an embedded newline', async () => {
    // common practice (editors and RFC 4180 files): line numbers count physical lines, so a record
    // holding a quoted line break takes two; the bad row starts on line 4
    const f = t.file('bookings.csv', 'user_id,timestamp,event,note\nm1,2026-03-01T10:00:00Z,booking,"two\nlines"\nm2,not-a-time,booking,x\n');
    const err = await expectTidemarkError(() => readEvents([f], { rules: dayRules }), 'EVENTS_BAD_ROW');
    expect(err.where.line).toBe(4);
    expect(err.oneLine()).toContain('not-a-time');
  });

  it('a bad row in the second file names the second file', async () => {
    const a = t.file('a.csv', 'user_id,timestamp,event\nm1,2026-03-01T10:00:00Z,booking\n');
    const b = t.file('b.csv', 'user_id,timestamp,event\nm2,2026-03-01T10:00:00Z,booking\nm3,2026-13-01T10:00:00Z,booking\n');
    const err = await expectTidemarkError(() => readEvents([a, b], { rules: dayRules }), 'EVENTS_BAD_ROW');
    expect(err.where.file).toContain('b.csv');
    expect(err.where.line).toBe(3);
    expect(err.oneLine()).toContain('2026-13-01T10:00:00Z');
  });

  it('skipBadRows counts each rejected row by reason and keeps the rest', async () => {
    const f = t.file(
      'bookings.csv',
      [
        'user_id,timestamp,event',
        'm1,2026-03-01T10:00:00Z,booking', // used
        ',2026-03-01T10:00:00Z,booking', // missing user id
        'm2,yesterday,booking', // bad timestamp
        'm3,2026-02-30T10:00:00Z,booking', // bad timestamp: there is no Feb 30
        'm4,2026-03-01T10:00:00Z', // wrong number of fields
        'm5,2026-03-01T10:00:00Z,booking,extra', // wrong number of fields
        'm6,2026-03-01T10:00:00Z,login', // not a key event
        'm7,2026-03-02T10:00:00Z,booking', // used
        'm8,2026-03-02T10:00:00Z,"booking', // unclosed quote (runs to the end of the file)
        '',
      ].join('\n'),
    );
    const rules = rulesOf({ grain: 'day', lapseLimit: 2, keyEvents: ['booking'] });
    const log = await readEvents([f], { rules, skipBadRows: true });
    expect(usersOf(log)).toEqual(['m1', 'm7']);
    expect(log.rows.used).toBe(2);
    expect(log.rows.notKeyEvent).toBe(1);
    expect(log.rows.rejected).toMatchObject({ 'missing user id': 1, 'bad timestamp': 2, 'wrong number of fields': 2, 'unclosed quote': 1 });
    expect(rejectedTotal(log)).toBe(6);
    expect(log.rows.read).toBe(9);
    expectBalanced(log);
  });

  it('skipBadRows in NDJSON: not valid JSON, missing fields', async () => {
    const f = t.file(
      'bookings.ndjson',
      [
        '{"user_id":"m1","timestamp":"2026-03-01T10:00:00Z","event":"booking"}',
        'not json at all',
        '{"timestamp":"2026-03-01T10:00:00Z","event":"booking"}',
        '{"user_id":"m3","timestamp":"soon","event":"booking"}',
        '{"user_id":"m4","timestamp":"2026-03-01T10:00:00Z","event":"booking"}',
      ].join('\n') + '\n',
    );
    const log = await readEvents([f], { rules: dayRules, skipBadRows: true });
    expect(log.rows.rejected).toMatchObject({ 'not valid JSON': 1, 'missing user id': 1, 'bad timestamp': 1 });
    expect(log.rows).toMatchObject({ read: 5, used: 2 });
    expectBalanced(log);
  });
});

describe('row accounting through the engine', () => {
  it.each(ENGINES)('%s engine: read = used + notKeyEvent + afterRange + Σ rejected, with --to dropping later events', async (engine) => {
    const f = t.file(
      'bookings.csv',
      [
        'user_id,timestamp,event',
        'm1,2026-03-01T10:00:00Z,booking',
        'm1,2026-03-02T10:00:00Z,login',
        'm2,2026-03-02T10:00:00Z,booking',
        'm2,2026-03-04T10:00:00Z,booking', // after --to 2026-03-02
        'm3,2026-03-05T10:00:00Z,booking', // after --to
        'm3,whenever,booking', // rejected
        '',
      ].join('\n'),
    );
    const rules = rulesOf({ grain: 'day', lapseLimit: 2, keyEvents: ['booking'] });
    const res = await runWith(engine, filesSource([f], { skipBadRows: true }), rules, { to: '2026-03-02' });
    expect(res.rows).toMatchObject({ read: 6, used: 2, notKeyEvent: 1, afterRange: 2 });
    expect(res.rows.rejected).toMatchObject({ 'bad timestamp': 1 });
    expectBalanced(res);
    expect(res.waist.periods).toEqual(['2026-03-01', '2026-03-02']);
  });
});
