/** How complete the last period of a log is. */
import type { EventLog } from './eventLog.js';
import { periodEndDay, periodLabel, periodStartDay, type PeriodScheme } from '../periods/calendar.js';

const DAY = 86_400_000;

/**
 * How complete the period `lastKey` is: the latest event in it, as a share of the period's wall-clock
 * length. Complete when that event lies in the period's last seventh, or when later events exist (in the
 * log, or dropped at reading as after --to): then the data did not stop there. `rows` counts its events.
 * `knownRows`: the rows of period `lastKey`, counted elsewhere (activePeriods' lastRows); a log without
 * wall clocks that knows its key range then needs no pass over its rows (nor its columns, which the
 * engine may have spent by then).
 */
export function lastPeriodOf(log: EventLog, lastKey: number, scheme: PeriodScheme, knownRows?: number): { label: string; coverage: number; complete: boolean; rows: number } {
  let maxWall = -Infinity, rows = 0, later = log.rows.afterRange > 0;
  // a log without its wall-clock column (read waistOnly): the latest row of all is the latest of the
  // last period when no row is later (period keys grow with the wall clock), and unused when one is
  const wall = log.wallMs.length === log.size ? log.wallMs : undefined;
  const known = knownRows !== undefined && !wall && log.keyRange !== undefined;
  if (known) {
    rows = knownRows;
    if (log.keyRange!.max > lastKey) later = true;
  }
  for (let i = 0; !known && i < log.size; i++) {
    const k = log.period[i];
    if (k === lastKey) {
      rows++;
      if (wall && wall[i] > maxWall) maxWall = wall[i];
    } else if (k > lastKey) later = true;
  }
  if (!wall && rows > 0) maxWall = log.extremes.latest[0].wallMs;
  const startMs = periodStartDay(lastKey, scheme) * DAY;
  const endMs = periodEndDay(lastKey, scheme) * DAY;
  const coverage = later ? 1 : Math.max(0, Math.min(1, (maxWall - startMs) / (endMs - startMs)));
  return { label: periodLabel(lastKey, scheme), coverage, complete: later || maxWall >= endMs - (endMs - startMs) / 7, rows };
}

