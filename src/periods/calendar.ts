/**
 * Calendar periods as integers.
 *
 * A local calendar date is a day number: days since 1970-01-01 (civil, proleptic Gregorian). A period
 * is an integer key: the day number for day grain, a week count for week grain, year·12 + month − 1 for
 * month grain. Keys of one scheme are consecutive integers, so period arithmetic is integer arithmetic.
 * Labels are the period's start date, `YYYY-MM-DD`, in the rules' time zone (luxon formats them).
 */
import { DateTime } from 'luxon';
import type { Grain, Weekday } from '../rules/schema.js';
import { WEEKDAYS } from './weekdays.js';

/** The word for one period of a grain ('week'); 'one-week' style adjectives are built from it. */
export const GRAIN_NOUN = { day: 'day', week: 'week', month: 'month' } as const;

export interface PeriodScheme {
  grain: Grain;
  weekStart: Weekday;
}

const MS_PER_DAY = 86_400_000;

/** Day number of a civil date (month 1–12). Example: civilToDays(1970, 1, 1) === 0; (2026, 12, 28) === 20815. */
export function civilToDays(year: number, month: number, day: number): number {
  return Math.floor(Date.UTC(year, month - 1, day) / MS_PER_DAY);
}

/** Day number → { year, month (1–12), day }. */
export function daysToCivil(days: number): { year: number; month: number; day: number } {
  const d = new Date(days * MS_PER_DAY);
  return { year: d.getUTCFullYear(), month: d.getUTCMonth() + 1, day: d.getUTCDate() };
}

/** Index of a weekday with monday = 0 … sunday = 6. */
export function weekdayIndex(w: Weekday): number {
  return WEEKDAYS.indexOf(w);
}

/**
 * The period key holding a local day. Weeks: 1970-01-01 was a Thursday (index 3), so the week
 * starting on weekday `ws` that holds day d is floor((d + 3 − ws) / 7).
 */
export function periodKeyOfDay(day: number, scheme: PeriodScheme): number {
  switch (scheme.grain) {
    case 'day':
      return day;
    case 'week':
      return Math.floor((day + 3 - weekdayIndex(scheme.weekStart)) / 7);
    case 'month': {
      const c = daysToCivil(day);
      return c.year * 12 + c.month - 1;
    }
  }
}

/** First local day of a period key. */
export function periodStartDay(key: number, scheme: PeriodScheme): number {
  switch (scheme.grain) {
    case 'day':
      return key;
    case 'week':
      return key * 7 - 3 + weekdayIndex(scheme.weekStart);
    case 'month':
      return civilToDays(Math.floor(key / 12), (key % 12) + 1, 1);
  }
}

/** First local day after a period (its exclusive end). */
export function periodEndDay(key: number, scheme: PeriodScheme): number {
  return periodStartDay(key + 1, scheme);
}

/** Label of a period key: its start date, `YYYY-MM-DD`. Example (week, monday): the key of 2027-01-01 → '2026-12-28'. */
export function periodLabel(key: number, scheme: PeriodScheme): string {
  const ms = periodStartDay(key, scheme) * MS_PER_DAY;
  // years 0–9999 from the built-in ISO form (luxon's first date formatting asks Intl for the system
  // locale, tens of ms of start-up); any other year as luxon writes it (±YYYYYY)
  if (ms >= YEAR_0_MS && ms < YEAR_10000_MS) return new Date(ms).toISOString().slice(0, 10);
  return DateTime.fromMillis(ms, { zone: 'utc' }).toISODate() as string;
}

/** 0000-01-01 and 10000-01-01 UTC, in ms since the epoch (Date.UTC reads years 0–99 as 1900–1999, so they are written out). */
const YEAR_0_MS = -62_167_219_200_000;
const YEAR_10000_MS = 253_402_300_800_000;

/** Parse a `YYYY-MM-DD` date into the key of the period holding it, or undefined when not a valid date. */
export function periodKeyOfDate(text: string, scheme: PeriodScheme): number | undefined {
  const dt = DateTime.fromISO(text, { zone: 'utc' });
  if (!/^\d{4}-\d{2}-\d{2}$/.test(text) || !dt.isValid) return undefined;
  return periodKeyOfDay(civilToDays(dt.year, dt.month, dt.day), scheme);
}

/**
 * {@link periodKeyOfDay} for one scheme, for the readers' hot path: day and week keys by integer
 * arithmetic (the weekday offset fixed once), month keys from a table filled as days are met (the civil
 * calendar is asked once per distinct day). Same keys as periodKeyOfDay for every day.
 * @example periodKeyer({ grain: 'week', weekStart: 'monday' })(20_815) // 2974 (the week of 2026-12-28)
 */
export function periodKeyer(scheme: PeriodScheme): (day: number) => number {
  if (scheme.grain === 'day') return (day) => day;
  if (scheme.grain === 'week') {
    const shift = 3 - weekdayIndex(scheme.weekStart);
    return (day) => Math.floor((day + shift) / 7);
  }
  // days 1899-12-31 to 2200-01-01 (the timestamps' range, with a day either side for offsets)
  const first = civilToDays(1899, 12, 31);
  const table = new Int32Array(civilToDays(2200, 1, 2) - first + 1);
  return (day) => {
    const i = day - first;
    if (i < 0 || i >= table.length) return periodKeyOfDay(day, scheme);
    const k = table[i];
    if (k !== 0) return k - 1;
    const key = periodKeyOfDay(day, scheme);
    table[i] = key + 1;
    return key;
  };
}
