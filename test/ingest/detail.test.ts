/**
 * The opt-in detail of the event log: the default path is unchanged (same rows, same accounting),
 * rows that are not key events are kept and flagged, and the timestamp forms are told apart as the
 * parser reads them (ISO 8601 offsets: `Z` and `+00:00` are UTC; epoch time is UTC by definition).
 */
import { describe, expect, it } from 'vitest';
import { keyEventsOnly } from '../../src/ingest/eventLog.js';
import { TS_LOCAL, TS_OTHER_OFFSET, TS_ZERO_OFFSET, rowPlace, timestampForm } from '../../src/ingest/detail.js';
import { randomEvents, readRaw, weeklyRules } from '../lifecycle/randomEvents.js';

describe('timestampForm', () => {
  it.each([
    ['2026-05-04T18:30:00Z', TS_ZERO_OFFSET],
    ['2026-05-04T18:30:00.123z', TS_ZERO_OFFSET],
    ['2026-05-04T18:30:00+00:00', TS_ZERO_OFFSET],
    ['2026-05-04T18:30:00-0000', TS_ZERO_OFFSET],
    ['1777919400', TS_ZERO_OFFSET],
    ['1777919400123', TS_ZERO_OFFSET],
    ['2026-05-04T18:30:00+02:00', TS_OTHER_OFFSET],
    ['20260504T1830-05', TS_OTHER_OFFSET],
    ['2026-05-04 18:30', TS_LOCAL],
    ['2026-05-04', TS_LOCAL],
    ['2026-05-04T18:30:00', TS_LOCAL],
  ])('%s', (text, form) => expect(timestampForm(text)).toBe(form));
});

describe('EventLog detail (seeded random logs)', () => {
  it('keeps non-key rows flagged, with the same accounting and the same key rows as the default path', async () => {
    const raw = randomEvents(7);
    const rules = weeklyRules({ activity: { keyEvents: ['booking_made', 'checked_in'] } });
    const plain = await readRaw(raw, rules, false);
    const rich = await readRaw(raw, rules, true);
    expect(rich.rows).toEqual(plain.rows);
    expect(rich.size).toBe(raw.length);
    const d = rich.detail!;
    const keyCount = raw.filter((e) => e.event === 'booking_made' || e.event === 'checked_in').length;
    expect(d.keyRows).toBe(keyCount);
    expect(plain.size).toBe(keyCount);
    // row i of the detail log is line i + 2 of the file (one header line), in reading order
    raw.forEach((e, i) => {
      expect(d.names[d.event[i]]).toBe(e.event);
      expect(d.key[i]).toBe(e.event === 'booking_made' || e.event === 'checked_in' ? 1 : 0);
      expect(d.tsForm[i]).toBe(TS_ZERO_OFFSET);
      expect(rowPlace(rich.files, d, i).line).toBe(i + 2);
    });
    const keyOnly = keyEventsOnly(rich);
    expect(keyOnly.size).toBe(plain.size);
    expect(Array.from(keyOnly.wallMs)).toEqual(Array.from(plain.wallMs));
    expect(Array.from(keyOnly.period)).toEqual(Array.from(plain.period));
    expect(keyOnly.user.map((u) => u).every((u, i) => keyOnly.users[u] === plain.users[plain.user[i]])).toBe(true);
    expect(keyOnly.attributes.map((a) => Array.from(a.codes, (c) => a.values[c]))).toEqual(plain.attributes.map((a) => Array.from(a.codes, (c) => a.values[c])));
    expect(keyOnly.detail).toBeUndefined();
  });

  it('returns the log itself when every row is a key event', async () => {
    const rich = await readRaw(randomEvents(8, 20, 6), weeklyRules());
    expect(keyEventsOnly(rich)).toBe(rich);
  });

  it('a log whose rows are all non-key events is refused as empty, as on the default path', async () => {
    const raw = randomEvents(9, 10, 4).map((e) => ({ ...e, event: 'profile_viewed' }));
    await expect(readRaw(raw, weeklyRules({ activity: { keyEvents: ['booking_made'] } }))).rejects.toMatchObject({ code: 'EVENTS_EMPTY' });
  });
});
