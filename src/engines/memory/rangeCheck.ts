/**
 * Checks on the analysis range before the in-memory engine classifies it: a warning when a handful
 * of rows stretch the range far beyond the bulk of the data, and a refusal when classifying the range
 * would not fit in the memory budget. Both name the outlying rows (file, line, timestamp as written)
 * and suggest the --from/--to that analyse the bulk.
 */
import { TidemarkError, showValue } from '../../errors.js';
import type { EventLog } from '../../ingest/eventLog.js';
import { describeRow, rangeOutliers, type ExtremeRow, type RangeOutliers } from '../../ingest/extremes.js';
import { GRAIN_NOUN, periodKeyOfDay, periodLabel, type PeriodScheme } from '../../periods/calendar.js';
import type { ResolvedRange } from '../../periods/range.js';
import { formatBytes, type Footprint } from './budget.js';

const DAY = 86_400_000;

/** The outlying rows that still shape the output: early rows before the first output period are history only. */
export function outputOutliers(log: EventLog, r: ResolvedRange): RangeOutliers | undefined {
  const keyOf = (ms: number) => periodKeyOfDay(Math.floor(ms / DAY), log.scheme);
  const o = rangeOutliers(log.extremes, log.size, keyOf);
  if (!o) return undefined;
  const outKey = r.startKey + r.outStart;
  const early = o.early.filter((row) => keyOf(row.wallMs) >= outKey);
  return early.length + o.late.length > 0 ? { ...o, early } : undefined;
}

const rowList = (rows: ExtremeRow[]) => rows.map((row) => describeRow(row, (v) => showValue(v, 40))).join(', ');

/** "--from 2026-03-02 --to 2026-04-27", for the sides that have outlying rows. */
function suggestion(o: RangeOutliers, scheme: PeriodScheme): string {
  return [o.early.length ? `--from ${periodLabel(o.bulk.fromKey, scheme)}` : '', o.late.length ? `--to ${periodLabel(o.bulk.toKey, scheme)}` : ''].filter(Boolean).join(' ');
}

/** What the outlying rows are, in one clause: "1 row lies far outside the bulk of the data (A to B): f:1 '…'". */
function outlierClause(o: RangeOutliers, scheme: PeriodScheme): string {
  const n = o.early.length + o.late.length;
  const bulk = `${periodLabel(o.bulk.fromKey, scheme)} to ${periodLabel(o.bulk.toKey, scheme)}`;
  return `${n} row${n > 1 ? 's lie' : ' lies'} far outside the bulk of the data (${bulk}): ${rowList([...o.early, ...o.late])}`;
}

/** The warning for outlying rows: one line for standard error and the report. */
export function outlierWarning(o: RangeOutliers, r: ResolvedRange, scheme: PeriodScheme): string {
  const range = `${periodLabel(r.startKey + r.outStart, scheme)} to ${periodLabel(r.startKey + r.span - 1, scheme)}`;
  return `${outlierClause(o, scheme)}; the range runs from ${range}. Check ${o.early.length + o.late.length > 1 ? 'them' : 'it'}, or pass ${suggestion(o, scheme)} to analyse the bulk only.`;
}

/**
 * Refuse a range whose classification would not fit in the budget, naming the outlying rows (or the
 * earliest and latest rows when none is outlying) and what to do.
 * @throws TidemarkError RANGE_INVALID when `need.total > budget`.
 */
export function checkFootprint(need: Footprint, budget: number, log: EventLog, r: ResolvedRange, users: number, outliers: RangeOutliers | undefined): void {
  if (need.total <= budget) return;
  const s = log.scheme;
  const n = r.span - r.outStart;
  const what = `classifying ${periodLabel(r.startKey + r.outStart, s)} to ${periodLabel(r.startKey + r.span - 1, s)} (${n.toLocaleString('en-US')} ${GRAIN_NOUN[s.grain]}s, ${users.toLocaleString('en-US')} users) needs about ${formatBytes(need.total)}, more than the ${formatBytes(budget)} memory budget`;
  if (outliers) {
    throw new TidemarkError('RANGE_INVALID', `${what}: ${outlierClause(outliers, s)}`, {}, `Pass ${suggestion(outliers, s)}, or fix those rows`);
  }
  const ends = `the earliest row is ${rowList(log.extremes.earliest.slice(0, 1))} and the latest ${rowList(log.extremes.latest.slice(0, 1))}`;
  throw new TidemarkError('RANGE_INVALID', `${what}; ${ends}`, {}, 'Narrow the range with --from/--to, use a coarser grain, or raise the budget with NODE_OPTIONS=--max-old-space-size=MB');
}
