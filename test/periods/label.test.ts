/**
 * Period labels (`YYYY-MM-DD`, the period's start date) come from the built-in Date for years 0–9999
 * and from luxon for others. luxon's ISO date of the same instant is the reference (a general-purpose
 * date library), for every grain and week start, over the whole range and at its edges.
 */
import fc from 'fast-check';
import { DateTime } from 'luxon';
import { describe, expect, it } from 'vitest';
import { periodKeyOfDay, periodLabel, periodStartDay, type PeriodScheme } from '../../src/periods/calendar.js';
import { WEEKDAYS } from '../../src/periods/weekdays.js';

const MS_PER_DAY = 86_400_000;
const luxonLabel = (key: number, s: PeriodScheme) => DateTime.fromMillis(periodStartDay(key, s) * MS_PER_DAY, { zone: 'utc' }).toISODate();
const schemes: PeriodScheme[] = [{ grain: 'day', weekStart: 'monday' }, { grain: 'month', weekStart: 'monday' }, ...WEEKDAYS.map((w) => ({ grain: 'week' as const, weekStart: w }))];

describe('periodLabel', () => {
  it('equals luxon\'s ISO date of the period\'s start for any key, years far before 0 to far after 9999 (fast-check; luxon is the reference)', () => {
    for (const s of schemes) {
      // keys of about ±300,000 years in each grain (days: ±1e8, weeks: ±1.5e7, months: ±3.6e6)
      const span = s.grain === 'day' ? 100_000_000 : s.grain === 'week' ? 15_000_000 : 3_600_000;
      fc.assert(fc.property(fc.integer({ min: -span, max: span }), (key) => periodLabel(key, s) === luxonLabel(key, s)), { seed: 11, numRuns: 2_000 });
    }
  });

  it('matches at the edges of years 0 and 9999, and gives the documented example', () => {
    for (const s of schemes) {
      // days of 0000-01-01 and 10000-01-01 (and the epoch, and the example's), as keys of this grain
      for (const day of [-719_528, 2_932_897, 0, 20_815]) {
        const at = periodKeyOfDay(day, s);
        for (let key = at - 40; key <= at + 40; key++) expect(periodLabel(key, s)).toBe(luxonLabel(key, s));
      }
    }
    expect(periodLabel(2974, { grain: 'week', weekStart: 'monday' })).toBe('2026-12-28');
  });
});
