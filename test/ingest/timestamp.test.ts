/**
 * The byte-level timestamp reader against the string reader (parseTimestamp is the reference: the
 * byte reader must give its value or step aside with NaN, never a different value), and hand-worked
 * values computed independently with Date.UTC (ECMA-262 §21.4.1.28, a general-purpose reference).
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { parseTimestamp, parseTimestampBytes } from '../../src/ingest/timestamp.js';
import { FIXED_UTC_ZONES, ZoneClock } from '../../src/periods/zone.js';
import { parseRules } from '../../src/rules/load.js';
import { IANAZone } from 'luxon';

const zones = ['UTC', 'America/Chicago', 'Asia/Kolkata', 'Pacific/Auckland'].map((z) => new ZoneClock(z));

function bytesOf(text: string): number {
  const b = Buffer.from(`,${text},`); // inside a larger buffer, as in a read
  return parseTimestampBytes(b, 1, b.length - 1, zones[0]);
}

describe('parseTimestampBytes', () => {
  it('reads the common forms to the values Date.UTC gives (UTC rules)', () => {
    expect(bytesOf('2026-05-04T18:30:00Z')).toBe(Date.UTC(2026, 4, 4, 18, 30));
    expect(bytesOf('2026-05-04T18:30:00.123Z')).toBe(Date.UTC(2026, 4, 4, 18, 30, 0, 123));
    expect(bytesOf('2026-05-04 18:30:00.123456')).toBe(Date.UTC(2026, 4, 4, 18, 30, 0, 123));
    expect(bytesOf('2026-05-04T18:30+02:00')).toBe(Date.UTC(2026, 4, 4, 16, 30));
    expect(bytesOf('2026-05-04T18:30:59-0130')).toBe(Date.UTC(2026, 4, 4, 20, 0, 59));
    expect(bytesOf('2026-05-04')).toBe(Date.UTC(2026, 4, 4));
    expect(bytesOf('1777919400')).toBe(1777919400 * 1000);
    expect(bytesOf('1777919400000')).toBe(1777919400000);
    expect(bytesOf('2026-12-31T23:59:60Z')).toBe(Date.UTC(2026, 11, 31, 23, 59, 59)); // a leap second is held at :59, as parseTimestamp does
  });

  it('steps aside (NaN) for other forms, invalid dates and years outside 1900–2199', () => {
    for (const t of ['', ' 2026-05-04', '2026-02-30', '2026-13-01', '20260504T183000Z', '2026-05-04T18:30:00.1234567Z', '1899-06-01', '2200-01-01T00:00:00Z', '2026-05-04T24:00Z', '+1777919400', '1e9', 'x']) {
      expect(bytesOf(t), t).toBeNaN();
    }
  });

  it('years 0–99 are refused by the string reader too (Date.UTC would read them as 1900–1999)', () => {
    expect(parseTimestamp('0050-01-01T00:00:00+01:00', zones[0])).toBeUndefined();
    expect(parseTimestamp('0099-12-31', zones[0])).toBeUndefined();
  });

  it('gives what parseTimestamp gives, or NaN, on random texts near the accepted forms, in four zones (fast-check)', () => {
    const two = (lo: number, hi: number) => fc.integer({ min: lo, max: hi }).map((n) => String(n).padStart(2, '0'));
    const text = fc.oneof(
      fc.tuple(fc.integer({ min: 1890, max: 2210 }), two(0, 13), two(0, 32), fc.constantFrom('T', 't', ' ', ''), two(0, 25), two(0, 61), two(0, 61),
        fc.constantFrom('', '.', ',', '.1', '.12', '.123', '.999999', '.1234567'), fc.constantFrom('', 'Z', 'z', '+02:00', '-0530', '+14', '-24:00', ' Z', '+02:0'))
        .map(([y, mo, d, sep, h, mi, s, f, off]) => (sep === '' ? `${y}-${mo}-${d}${off}` : `${y}-${mo}-${d}${sep}${h}:${mi}${s === '61' ? '' : `:${s}`}${f}${off}`)),
      fc.stringMatching(/^[0-9]{1,16}$/),
      fc.string({ maxLength: 30 }),
    );
    fc.assert(
      fc.property(text, fc.nat(3), (t, z) => {
        const b = Buffer.from(t);
        const got = parseTimestampBytes(b, 0, b.length, zones[z]);
        if (!Number.isNaN(got)) expect(got).toBe(parseTimestamp(t, zones[z]));
      }),
      { seed: 8601, numRuns: 10_000 },
    );
  }, 30_000); // a bound on a hang: 10,000 cases take about a second, several on a busy machine
});

describe('UTC known without luxon (FIXED_UTC_ZONES: the rules check and ZoneClock skip luxon for them)', () => {
  it('luxon, the reference, agrees: valid IANA names with offset 0 at any instant; the rules accept them and refuse an unknown name as before', () => {
    const instants = fc.sample(fc.integer({ min: Date.UTC(1900, 0, 1), max: Date.UTC(2199, 11, 31) }), { seed: 7, numRuns: 200 });
    for (const name of FIXED_UTC_ZONES) {
      expect(IANAZone.isValidZone(name)).toBe(true);
      const clock = new ZoneClock(name);
      for (const ms of instants) expect(clock.offsetMinutes(ms)).toBe(IANAZone.create(name).offset(ms));
      expect(parseRules(`grain: week\nlapseLimit: 2\ntimezone: ${name}\n`).timezone).toBe(name);
    }
    expect(() => parseRules('grain: week\nlapseLimit: 2\ntimezone: Mars/Olympus_Mons\n')).toThrow(/IANA time zone/);
  });
});
