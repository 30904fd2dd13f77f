/**
 * The in-memory engine: columnar event log → active periods (typed-array sort) → classification
 * (tabulated xstate machine) → waist tables (arquero pipeline).
 */
import { TidemarkError } from '../errors.js';
import type { EventLog } from '../ingest/eventLog.js';
import { readEvents } from '../ingest/read.js';
import { activePeriods } from '../lifecycle/activity.js';
import { classifiedSize, classify, firstActivePeriods, type Classified } from '../lifecycle/classify.js';
import { compilePlan } from '../lifecycle/plan.js';
import { ACTIVE_STATES } from '../lifecycle/states.js';
import { aggregate, durationRows } from '../flows/aggregate.js';
import { segmentCells } from '../flows/segments.js';
import { activeAttribute, activeIndex } from '../lifecycle/attributes.js';
import { checkSplitColumn } from '../lifecycle/perPerson.js';
import { periodEndDay, periodLabel, periodStartDay, type PeriodScheme } from '../periods/calendar.js';
import { optionKey, resolveRange, type ResolvedRange } from '../periods/range.js';
import type { Rules } from '../rules/schema.js';
import type { ClassifiedRow, Engine, EngineResult, EventSource, LastPeriod, RangeOptions } from './types.js';

const DAY = 86_400_000;
/** User-periods the in-memory engine classifies at most (about 17 bytes each). */
export const MAX_USER_PERIODS = 300_000_000;

interface Prepared {
  log: EventLog;
  range: ResolvedRange;
  labels: string[];
  classified: Classified;
  result: EngineResult;
}

/** Run the heavy stage on an event log already in memory. */
export function runOnLog(log: EventLog, rules: Rules, range: RangeOptions = {}, maxUserPeriods = MAX_USER_PERIODS): Omit<Prepared, 'log'> {
  const scheme: PeriodScheme = log.scheme;
  const split = range.by === undefined ? undefined : checkSplitColumn(log, range.by, range.allowPerPersonColumn);
  let minKey = Infinity, maxKey = -Infinity;
  for (let i = 0; i < log.size; i++) {
    const k = log.period[i];
    if (k < minKey) minKey = k;
    if (k > maxKey) maxKey = k;
  }
  const fromKey = optionKey(range.from, scheme, 'from');
  const toKey = optionKey(range.to, scheme, 'to');
  let r = resolveRange(minKey, maxKey, fromKey, toKey, (k) => periodLabel(k, scheme));
  const warmup = range.warmup ?? rules.warmup;
  const last = lastPeriodOf(log, r.startKey + r.span - 1, scheme);
  const outPeriods = r.span - r.outStart;
  // an incomplete last period is left out when asked, if two periods remain and one of them is past the warm-up
  const leaveOut = range.partial === 'drop' && !last.complete && outPeriods >= 3 && outPeriods - 1 > warmup;
  if (leaveOut) r = { ...r, span: r.span - 1 };
  const rowAccount = { ...log.rows, used: log.rows.used - (leaveOut ? last.rows : 0), partial: leaveOut ? last.rows : 0 };
  const lastPeriod: LastPeriod = { label: last.label, coverage: last.coverage, complete: last.complete, leftOut: leaveOut };
  if (warmup >= r.span - r.outStart) {
    throw new TidemarkError('RANGE_INVALID', `a warm-up of ${warmup} periods leaves no period to analyse (the range has ${r.span - r.outStart})`, { key: 'warmup' }, 'Lower the warm-up or widen the range');
  }
  const labels = Array.from({ length: r.span }, (_, i) => periodLabel(r.startKey + i, scheme));
  const plan = compilePlan(rules);
  const active = activePeriods(log, rules.activity.minEvents, r.startKey, r.span);
  const rows = classifiedSize(firstActivePeriods(active, log.users.length), r.span, r.outStart);
  if (rows > maxUserPeriods) {
    throw new TidemarkError('RANGE_INVALID', `${labels[0]} to ${labels[r.span - 1]} is ${r.span} periods: classifying it would take ${rows.toLocaleString('en-US')} user-periods, more than ${maxUserPeriods.toLocaleString('en-US')} fit in memory`, { key: '--from' },
      'Narrow the range with --from/--to or use a coarser grain (an outlying timestamp can stretch the range)');
  }
  const classified = classify(active, plan, log.users.length, r.outStart);
  const waist = aggregate(classified, {
    states: plan.states,
    activeCount: ACTIVE_STATES.length,
    labels,
    outStart: r.outStart,
    warmup,
    tenureBands: rules.tenureBands,
  });
  if (range.by) {
    const attr = activeAttribute(log, range.by, active);
    const cells = segmentCells(classified, active, attr, { states: plan.states, activeCount: ACTIVE_STATES.length, labels, firstFlow: r.outStart + warmup });
    waist.segmentCells = { by: range.by, cells, perPerson: split?.perPerson };
    const groupOf = (u: number, first: number) => attr.values[attr.codes[activeIndex(active, u, first)]] || '(none)';
    waist.segmentDurations = { by: range.by, rows: durationRows(classified, r.outStart + warmup, r.span, groupOf), perPerson: split?.perPerson };
  }
  let users = 0;
  for (let u = 0; u < classified.firstActive.length; u++) if (classified.firstActive[u] >= 0) users++;
  const keySet = rules.activity.keyEvents ? new Set(rules.activity.keyEvents) : undefined;
  const events = [...log.eventNames].sort((a, b) => b[1] - a[1] || (a[0] < b[0] ? -1 : 1)).slice(0, 50).map(([name, rows]) => ({ name, rows, key: !keySet || keySet.has(name) }));
  const attributes = log.attributes.map((a) => ({ name: a.name, values: a.values.length - 1 }));
  return { range: r, labels, classified, result: { waist, rows: rowAccount, lastPeriod, users, events, attributes } };
}

/**
 * How complete the period `lastKey` is: the latest event in it, as a share of the period's wall-clock
 * length. Complete when that event lies in the period's last seventh, or when later events exist (in the
 * log, or dropped at reading as after --to): then the data did not stop there. `rows` counts its events.
 */
function lastPeriodOf(log: EventLog, lastKey: number, scheme: PeriodScheme): { label: string; coverage: number; complete: boolean; rows: number } {
  let maxWall = -Infinity, rows = 0, later = log.rows.afterRange > 0;
  for (let i = 0; i < log.size; i++) {
    const k = log.period[i];
    if (k === lastKey) {
      rows++;
      if (log.wallMs[i] > maxWall) maxWall = log.wallMs[i];
    } else if (k > lastKey) later = true;
  }
  const startMs = periodStartDay(lastKey, scheme) * DAY;
  const endMs = periodEndDay(lastKey, scheme) * DAY;
  const coverage = later ? 1 : Math.max(0, Math.min(1, (maxWall - startMs) / (endMs - startMs)));
  return { label: periodLabel(lastKey, scheme), coverage, complete: later || maxWall >= endMs - (endMs - startMs) / 7, rows };
}

export class MemoryEngine implements Engine {
  readonly name = 'memory';

  private async prepare(source: EventSource, rules: Rules, range: RangeOptions): Promise<Prepared> {
    const scheme: PeriodScheme = { grain: rules.grain, weekStart: rules.weekStart };
    const toKey = optionKey(range.to, scheme, 'to');
    const log = await readEvents(source.files, { rules, format: source.format, skipBadRows: source.skipBadRows, toKey, delimiter: source.delimiter });
    return { log, ...runOnLog(log, rules, range) };
  }

  async run(source: EventSource, rules: Rules, range: RangeOptions = {}): Promise<EngineResult> {
    return (await this.prepare(source, rules, range)).result;
  }

  async classify(source: EventSource, rules: Rules, range: RangeOptions = {}): Promise<{ rows: ClassifiedRow[]; result: EngineResult }> {
    const p = await this.prepare(source, rules, range);
    return { rows: classifiedRows(p.classified, p.log.users, p.labels, p.result.waist.states), result: p.result };
  }
}

/** Classified rows sorted by user id (code-unit order), then period. */
export function classifiedRows(c: Classified, users: string[], labels: string[], states: readonly string[]): ClassifiedRow[] {
  const order = Array.from({ length: c.size }, (_, i) => i);
  order.sort((a, b) => {
    const ua = users[c.user[a]], ub = users[c.user[b]];
    return ua < ub ? -1 : ua > ub ? 1 : c.period[a] - c.period[b];
  });
  return order.map((i) => ({ user: users[c.user[i]], period: labels[c.period[i]], state: states[c.state[i]] }));
}
