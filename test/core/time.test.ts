/**
 * Periods in time: ISO weeks, time zones, daylight-saving changes, month ends, week starts, local
 * (no-offset) timestamps and epoch numbers. Every expected label was worked out by hand from the
 * source named beside it; the luxon reference (reference.ts) is checked against the same values.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { refLabel, type RefEvent, type RefRules } from './reference.js';
import { readFileSync } from 'node:fs';
import { eventsNdjson, rulesOf, runEngine, tempDir, useEngine } from './helpers.js';
import { ENGINES, classifyWith } from './engines.js';
import { filesSource } from '../../src/engines/types.js';

describe.each(ENGINES)('%s engine', (engine) => {
  beforeAll(() => useEngine(engine));

  /** The period label the engine gives one booking, alone in the log. */
  async function labelOf(timestamp: string, rules: RefRules): Promise<string> {
    const { rows } = await runEngine([{ user: 'ada', timestamp, event: 'booking' }], rules);
    expect(rows).toHaveLength(1);
    return rows[0].period;
  }

  /** Labels of many single bookings, one member each, in one log; checks the reference agrees too. */
  async function labelsOf(stamps: string[], rules: RefRules): Promise<string[]> {
    const events: RefEvent[] = stamps.map((timestamp, i) => ({ user: `m${String(i).padStart(2, '0')}`, timestamp, event: 'booking' }));
    const { rows } = await runEngine(events, rules);
    const fresh = new Map(rows.filter((r) => r.state === 'fresh').map((r) => [r.user, r.period]));
    return events.map((e) => fresh.get(e.user) ?? '(none)');
  }

  /** Asserts engine and reference both give `expected` for each timestamp. */
  async function expectLabels(rules: RefRules, cases: [string, string][]) {
    const got = await labelsOf(cases.map((c) => c[0]), rules);
    const want = cases.map((c) => c[1]);
    expect(cases.map((c) => refLabel(c[0], rules)), 'reference').toEqual(want);
    expect(got.map((g, i) => `${cases[i][0]} → ${g}`)).toEqual(want.map((w, i) => `${cases[i][0]} → ${w}`));
  }

  describe('ISO 8601 week dates (Monday weeks, UTC)', () => {
    const week: RefRules = { grain: 'week', lapseLimit: 2 };

    it('2026-12-28 … 2027-01-03 is one Monday week (ISO 8601: 2026-W53)', async () => {
      await expectLabels(week, [
        ['2026-12-28T00:00:00Z', '2026-12-28'], // Monday of 2026-W53
        ['2026-12-31T12:00:00Z', '2026-12-28'],
        ['2027-01-01T08:00:00Z', '2026-12-28'],
        ['2027-01-03T23:59:59Z', '2026-12-28'], // Sunday, last instant of 2026-W53
        ['2027-01-04T00:00:00Z', '2027-01-04'], // ISO 8601: 2027-W01 starts 2027-01-04
      ]);
    });

    it('2026 has 53 ISO weeks: 2026-W01 (from 2025-12-29) to 2026-W53 make 53 periods', async () => {
      // ISO 8601: week 1 holds the year's first Thursday, 2026-01-01, so 2026-W01 starts Monday 2025-12-29
      const events: RefEvent[] = [
        { user: 'ada', timestamp: '2026-01-01T10:00:00Z', event: 'booking' },
        { user: 'ada', timestamp: '2027-01-03T10:00:00Z', event: 'booking' },
      ];
      const { result } = await runEngine(events, week);
      const p = result.waist.periods;
      expect(p).toHaveLength(53);
      expect(p[0]).toBe('2025-12-29');
      expect(p[52]).toBe('2026-12-28');
      expect(result.waist.transitions).toHaveLength(52);
    });
  });

  describe('time zones ahead of UTC (Asia/Tokyo, UTC+09:00, no daylight time — IANA tz database)', () => {
    const tokyoWeek: RefRules = { grain: 'week', lapseLimit: 2, timezone: 'Asia/Tokyo' };

    it('Sunday 23:30 local (14:30Z) stays in that local week; Monday 00:30 local (15:30Z Sunday) starts the next', async () => {
      await expectLabels(tokyoWeek, [
        ['2026-03-08T14:30:00Z', '2026-03-02'], // Sun 2026-03-08 23:30 JST
        ['2026-03-08T15:30:00Z', '2026-03-09'], // Mon 2026-03-09 00:30 JST, still Sunday in UTC
        ['2026-03-08T23:30:00+09:00', '2026-03-02'], // the same as the first, written with its offset
      ]);
    });

    it('day grain: 15:30Z is the next local day', async () => {
      await expectLabels({ grain: 'day', lapseLimit: 2, timezone: 'Asia/Tokyo' }, [
        ['2026-03-08T14:59:59Z', '2026-03-08'],
        ['2026-03-08T15:00:00Z', '2026-03-09'],
      ]);
    });
  });

  describe('America/Chicago daylight-saving changes (IANA tz database: DST 2026-03-08 / 2026-11-01)', () => {
    const chiDay: RefRules = { grain: 'day', lapseLimit: 2, timezone: 'America/Chicago' };
    const chiWeek: RefRules = { grain: 'week', lapseLimit: 2, timezone: 'America/Chicago' };

    it('day grain around 2026-03-08 (CST −06:00 before, CDT −05:00 after)', async () => {
      await expectLabels(chiDay, [
        ['2026-03-08T05:59:59Z', '2026-03-07'], // 23:59:59 CST on the 7th
        ['2026-03-08T06:00:00Z', '2026-03-08'], // 00:00 CST on the 8th
        ['2026-03-08T07:59:00Z', '2026-03-08'], // 01:59 CST, just before the change
        ['2026-03-08T08:01:00Z', '2026-03-08'], // 03:01 CDT, just after
        ['2026-03-09T04:59:59Z', '2026-03-08'], // 23:59:59 CDT on the 8th
        ['2026-03-09T05:00:00Z', '2026-03-09'], // 00:00 CDT on the 9th
      ]);
    });

    it('day grain around 2026-11-01 (CDT −05:00 before, CST −06:00 after)', async () => {
      await expectLabels(chiDay, [
        ['2026-11-01T04:59:59Z', '2026-10-31'], // 23:59:59 CDT on the 31st
        ['2026-11-01T05:00:00Z', '2026-11-01'], // 00:00 CDT
        ['2026-11-01T06:30:00Z', '2026-11-01'], // 01:30 CDT, first pass
        ['2026-11-01T07:30:00Z', '2026-11-01'], // 01:30 CST, second pass
        ['2026-11-02T05:59:59Z', '2026-11-01'], // 23:59:59 CST on the 1st
        ['2026-11-02T06:00:00Z', '2026-11-02'], // 00:00 CST on the 2nd
      ]);
    });

    it('local wall-clock times inside the changes stay on their day', async () => {
      // 02:30 on 2026-03-08 does not exist in America/Chicago and 01:30 on 2026-11-01 happens twice
      // (IANA tz database); whichever instant is chosen, the local day is the same
      await expectLabels(chiDay, [
        ['2026-03-08T01:59:59', '2026-03-08'],
        ['2026-03-08T02:30:00', '2026-03-08'],
        ['2026-03-08T03:00:00', '2026-03-08'],
        ['2026-03-07T23:59:59', '2026-03-07'],
        ['2026-11-01T01:30:00', '2026-11-01'],
        ['2026-11-01T00:00:00', '2026-11-01'],
        ['2026-10-31T23:59:59', '2026-10-31'],
        ['2026-11-01T23:59:59', '2026-11-01'],
      ]);
    });

    it('week grain: the Monday weeks holding each change keep their edges', async () => {
      await expectLabels(chiWeek, [
        ['2026-03-02T05:59:59Z', '2026-02-23'], // Sun 2026-03-01 23:59:59 CST
        ['2026-03-02T06:00:00Z', '2026-03-02'], // Mon 00:00 CST
        ['2026-03-09T04:59:59Z', '2026-03-02'], // Sun 2026-03-08 23:59:59 CDT
        ['2026-03-09T05:00:00Z', '2026-03-09'], // Mon 00:00 CDT
        ['2026-11-02T05:59:59Z', '2026-10-26'], // Sun 2026-11-01 23:59:59 CST
        ['2026-11-02T06:00:00Z', '2026-11-02'], // Mon 00:00 CST
      ]);
    });

    it('day grain: the run of periods through a 23-hour and a 25-hour day has no gap and no repeat', async () => {
      const events: RefEvent[] = [
        { user: 'ada', timestamp: '2026-03-07T12:00:00-06:00', event: 'booking' },
        { user: 'ada', timestamp: '2026-03-09T12:00:00-05:00', event: 'booking' },
        { user: 'bo', timestamp: '2026-10-31T12:00:00-05:00', event: 'booking' },
        { user: 'bo', timestamp: '2026-11-02T12:00:00-06:00', event: 'booking' },
      ];
      const { result } = await runEngine(events, chiDay);
      const p = result.waist.periods;
      expect(p.slice(0, 3)).toEqual(['2026-03-07', '2026-03-08', '2026-03-09']);
      expect(p.slice(-3)).toEqual(['2026-10-31', '2026-11-01', '2026-11-02']);
      // 2026-03-07 … 2026-11-02 inclusive: 25 (Mar 7–31) + 30 + 31 + 30 + 31 + 31 + 30 + 31 + 2 = 241 days
      expect(p).toHaveLength(241);
      expect(new Set(p).size).toBe(p.length);
    });

    it('week grain: the weeks through both changes are consecutive Mondays', async () => {
      const events: RefEvent[] = [
        { user: 'ada', timestamp: '2026-03-01T12:00:00-06:00', event: 'booking' },
        { user: 'ada', timestamp: '2026-03-16T12:00:00-05:00', event: 'booking' },
        { user: 'bo', timestamp: '2026-10-26T12:00:00-05:00', event: 'booking' },
        { user: 'bo', timestamp: '2026-11-09T12:00:00-06:00', event: 'booking' },
      ];
      const { result } = await runEngine(events, chiWeek);
      const p = result.waist.periods;
      expect(p.slice(0, 4)).toEqual(['2026-02-23', '2026-03-02', '2026-03-09', '2026-03-16']);
      expect(p.slice(-3)).toEqual(['2026-10-26', '2026-11-02', '2026-11-09']);
    });
  });

  describe('month grain in Asia/Kolkata (IANA tz database: UTC+05:30, no daylight time)', () => {
    const kolMonth: RefRules = { grain: 'month', lapseLimit: 2, timezone: 'Asia/Kolkata' };

    it('2026-01-31T19:00:00Z is 2026-02-01 00:30 local: February', async () => {
      await expectLabels(kolMonth, [
        ['2026-01-31T18:29:59Z', '2026-01-01'], // 23:59:59 IST on Jan 31
        ['2026-01-31T18:30:00Z', '2026-02-01'], // 00:00 IST on Feb 1
        ['2026-01-31T19:00:00Z', '2026-02-01'],
        ['2026-02-28T18:29:59Z', '2026-02-01'], // 2026 is not a leap year: Feb ends on the 28th
        ['2026-02-28T18:30:00Z', '2026-03-01'],
      ]);
    });

    it('the run of months across a year end', async () => {
      const events: RefEvent[] = [
        { user: 'ada', timestamp: '2025-11-30T20:00:00Z', event: 'booking' }, // Dec 1 01:30 IST
        { user: 'ada', timestamp: '2026-02-10T12:00:00Z', event: 'booking' },
      ];
      const { result } = await runEngine(events, kolMonth);
      expect(result.waist.periods).toEqual(['2025-12-01', '2026-01-01', '2026-02-01']);
    });
  });

  describe('week starts other than Monday', () => {
    // 2026-03-11 is a Wednesday (ISO 8601 week date 2026-W11-3); each label is the latest week start on or before it
    const cases: [string, string][] = [
      ['monday', '2026-03-09'],
      ['tuesday', '2026-03-10'],
      ['wednesday', '2026-03-11'],
      ['thursday', '2026-03-05'],
      ['friday', '2026-03-06'],
      ['saturday', '2026-03-07'],
      ['sunday', '2026-03-08'],
    ];
    for (const [weekStart, label] of cases) {
      it(`weekStart ${weekStart}: Wednesday 2026-03-11 is in the week starting ${label}`, async () => {
        const rules: RefRules = { grain: 'week', lapseLimit: 2, weekStart };
        expect(refLabel('2026-03-11T12:00:00Z', rules)).toBe(label);
        expect(await labelOf('2026-03-11T12:00:00Z', rules)).toBe(label);
      });
    }

    it('weekStart sunday: Saturday 23:59 and Sunday 00:00 fall in different weeks, in a zone', async () => {
      await expectLabels({ grain: 'week', lapseLimit: 2, weekStart: 'sunday', timezone: 'America/Chicago' }, [
        ['2026-03-07T23:59:00', '2026-03-01'], // local Saturday
        ['2026-03-08T00:00:00', '2026-03-08'], // local Sunday, the DST day itself
        ['2026-03-14T23:59:59', '2026-03-08'],
      ]);
    });

    it('weekStart sunday: consecutive periods are 7 days apart', async () => {
      const events: RefEvent[] = [
        { user: 'ada', timestamp: '2026-02-28T12:00:00Z', event: 'booking' },
        { user: 'ada', timestamp: '2026-03-20T12:00:00Z', event: 'booking' },
      ];
      const { result } = await runEngine(events, { grain: 'week', lapseLimit: 2, weekStart: 'sunday' });
      expect(result.waist.periods).toEqual(['2026-02-22', '2026-03-01', '2026-03-08', '2026-03-15']);
    });
  });

  describe('timestamps without an offset are wall-clock time in the rules zone', () => {
    it('America/Chicago: 00:30 local on Mar 1 is Mar 1 (not the evening of Feb 28, as UTC would give)', async () => {
      await expectLabels({ grain: 'day', lapseLimit: 2, timezone: 'America/Chicago' }, [
        ['2026-03-01T00:30:00', '2026-03-01'],
        ['2026-03-01T00:30:00Z', '2026-02-28'], // the same digits with Z are 18:30 CST on Feb 28
      ]);
    });

    it('Asia/Tokyo: 23:30 local on Mar 1 is Mar 1 (not Mar 2)', async () => {
      await expectLabels({ grain: 'day', lapseLimit: 2, timezone: 'Asia/Tokyo' }, [
        ['2026-03-01T23:30:00', '2026-03-01'],
        ['2026-03-01T23:30:00.250', '2026-03-01'],
        ['2026-03-01T23:30:00Z', '2026-03-02'],
      ]);
    });

    it('Pacific/Auckland month edge: local midnight Apr 1 (NZDT, UTC+13:00) is April', async () => {
      // IANA tz database: Pacific/Auckland is on daylight time (UTC+13:00) until 2026-04-05
      await expectLabels({ grain: 'month', lapseLimit: 2, timezone: 'Pacific/Auckland' }, [
        ['2026-04-01T00:00:00', '2026-04-01'],
        ['2026-03-31T10:59:59Z', '2026-03-01'], // 23:59:59 NZDT on Mar 31
        ['2026-03-31T11:00:00Z', '2026-04-01'], // 00:00 NZDT on Apr 1
      ]);
    });
  });

  describe('ISO 8601 offsets other than the rules zone', () => {
    it('an explicit offset is an instant, shown in the rules zone', async () => {
      await expectLabels({ grain: 'day', lapseLimit: 2, timezone: 'UTC' }, [
        ['2026-03-01T23:30:00-05:00', '2026-03-02'],
        ['2026-03-02T01:00:00+05:30', '2026-03-01'],
        ['2026-03-02T00:00:00+00:00', '2026-03-02'],
      ]);
    });
  });

  describe('ISO 8601 basic format', () => {
    it('20260301T233000Z and 20260302T013000+0900 are ISO 8601 basic-format date-times (ISO 8601-1:2019 §5.4)', async () => {
      await expectLabels({ grain: 'day', lapseLimit: 2, timezone: 'UTC' }, [
        ['20260301T233000Z', '2026-03-01'],
        ['20260302T013000+0900', '2026-03-01'],
      ]);
    });
  });

  describe('epoch numbers: |v| ≥ 1e11 is milliseconds, else seconds', () => {
    it('seconds and milliseconds of the same instant give the same period', async () => {
      // 1772323200 s = 2026-03-01T00:00:00Z (computed: 20513 days × 86400 s since 1970-01-01)
      await expectLabels({ grain: 'day', lapseLimit: 2 }, [
        ['1772323200', '2026-03-01'],
        ['1772323200000', '2026-03-01'],
        ['1772323199', '2026-02-28'],
        ['1772323199999', '2026-02-28'],
      ]);
    });

    it('epoch numbers are placed in the rules zone', async () => {
      // 2026-03-01T00:00:00Z is 18:00 CST on Feb 28 (IANA tz database: America/Chicago is UTC−06:00 in winter)
      await expectLabels({ grain: 'day', lapseLimit: 2, timezone: 'America/Chicago' }, [
        ['1772323200', '2026-02-28'],
        ['1772323200000', '2026-02-28'],
      ]);
    });

    it('the threshold, millisecond side: 100000000000 is milliseconds (1973-03-03)', async () => {
      // 1e11 ms = 1973-03-03T09:46:40Z (computed by date arithmetic: 1157 days and 35200 s)
      expect(await labelOf('100000000000', { grain: 'day', lapseLimit: 2 })).toBe('1973-03-03');
    });

    // tidemark documents a sanity bound (README, Input): timestamps must fall in the years 1900–2199, so
    // a garbage value cannot stretch the range over centuries. Seconds near the threshold are outside it.
    it('the threshold, second side: 99999999999 is read as seconds (5138-11-16), outside the documented years 1900–2199, so refused', async () => {
      // 99999999999 s = 5138-11-16T09:46:39Z (computed by date arithmetic)
      await expect(labelOf('99999999999', { grain: 'day', lapseLimit: 2 })).rejects.toMatchObject({ code: 'EVENTS_BAD_ROW' });
    });

    it('ten-digit seconds: 7258118399 s is 2199-12-31 (the last accepted second); 9999999999 s (2286-11-20) is refused', async () => {
      // 7258118399 s = 2199-12-31T23:59:59Z; 9999999999 s = 2286-11-20T17:46:39Z (computed by date arithmetic)
      expect(await labelOf('7258118399', { grain: 'day', lapseLimit: 2 })).toBe('2199-12-31');
      await expect(labelOf('9999999999', { grain: 'day', lapseLimit: 2 })).rejects.toMatchObject({ code: 'EVENTS_BAD_ROW' });
    });

    it('negative epochs: −1 is 1969-12-31 (seconds); −1e11 is 1966-10-31 (milliseconds)', async () => {
      expect(await labelOf('-1', { grain: 'day', lapseLimit: 2 })).toBe('1969-12-31');
      expect(await labelOf('-100000000000', { grain: 'day', lapseLimit: 2 })).toBe('1966-10-31');
    });

    it('NDJSON numbers are epochs too', async () => {
      const t = tempDir();
      try {
        const f = t.file(
          'bookings.ndjson',
          eventsNdjson(
            [
              { user: 'ada', timestamp: '1772323200', event: 'booking' },
              { user: 'bo', timestamp: '1772409600000', event: 'booking' }, // 2026-03-02T00:00:00Z
            ],
            true,
          ),
        );
        expect(readFileSync(f, 'utf8')).toContain('"timestamp":1772323200,');
        const { rows } = await classifyWith(engine, filesSource([f]), rulesOf({ grain: 'day', lapseLimit: 2 }));
        expect(rows.map((r) => `${r.user} ${r.period} ${r.state}`)).toEqual(['ada 2026-03-01 fresh', 'ada 2026-03-02 lapsing', 'bo 2026-03-02 fresh']);
      } finally {
        t.done();
      }
    });
  });
});
