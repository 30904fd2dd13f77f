/** Period labels ahead of a given one, and the default season length of a grain. */
import { periodKeyOfDate, periodLabel, type PeriodScheme } from '../periods/calendar.js';

/**
 * Labels of the periods 0 … horizon steps after `label` (undefined entries when `label` is not a
 * period start of the scheme).
 * @example labelsAhead('2026-11-23', 2, { grain: 'week', weekStart: 1 }) // ['2026-11-23', '2026-11-30', '2026-12-07']
 */
export function labelsAhead(label: string, horizon: number, scheme: PeriodScheme): (string | undefined)[] {
  const key = periodKeyOfDate(label, scheme);
  return Array.from({ length: horizon + 1 }, (_, t) => (key === undefined ? undefined : periodLabel(key + t, scheme)));
}

/** Periods in a year's season for the seasonal-naive baseline: 7 days, 52 weeks, 12 months. */
export const SEASON_OF = { day: 7, week: 52, month: 12 } as const;
