/**
 * The in-memory engine: columnar event log → active periods (typed-array sort) → classification
 * (tabulated xstate machine) → waist tables (arquero pipeline).
 */
import { TidemarkError } from '../errors.js';
import type { EventLog } from '../ingest/eventLog.js';
import { readEvents, type ReadProgress } from '../ingest/read.js';
import { activePeriods, type ActivePeriods } from '../lifecycle/activity.js';
import { classifiedSize, classify, firstActivePeriods, type Classified } from '../lifecycle/classify.js';
import { compilePlan } from '../lifecycle/plan.js';
import { ACTIVE_STATES } from '../lifecycle/states.js';
import { aggregate, durationRows } from '../flows/aggregate.js';
import { segmentCells } from '../flows/segments.js';
import { activeAttribute, activeIndex } from '../lifecycle/attributes.js';
import { checkSplitColumn } from '../lifecycle/perPerson.js';
import { periodEndDay, periodLabel, periodStartDay, type PeriodScheme } from '../periods/calendar.js';
import { optionKey, resolveRange, type ResolvedRange } from '../periods/range.js';
import { WINDOW_MAX_AGE } from '../flows/types.js';
import { engineFootprint, memoryBudget, type Footprint, type FootprintInput } from './budget.js';
import { checkFootprint, outlierWarning, outputOutliers } from './rangeCheck.js';
import type { Rules } from '../rules/schema.js';
import type { ClassifiedRow, Engine, EngineResult, EventSource, LastPeriod, RangeOptions } from './types.js';

const DAY = 86_400_000;

/** Limits of one run: the memory budget (default {@link memoryBudget}) and whether per-row output objects are built. */
export interface RunLimits {
  budget?: number;
  rowObjects?: boolean;
}

interface Prepared {
  log: EventLog;
  range: ResolvedRange;
  labels: string[];
  classified: Classified;
  result: EngineResult;
  /** The bytes the run was estimated to need (budget.ts). */
  footprint: Footprint;
}

/** Run the heavy stage on an event log already in memory. */
export function runOnLog(log: EventLog, rules: Rules, range: RangeOptions = {}, limits: RunLimits = {}): Omit<Prepared, 'log'> {
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
  const plan = compilePlan(rules);
  const active = activePeriods(log, rules.activity.minEvents, r.startKey, r.span);
  const firstActive = firstActivePeriods(active, log.users.length);
  const outliers = outputOutliers(log, r);
  const need = engineFootprint({ ...sizesOf(log, active, firstActive, r, warmup, rules.tenureBands.length), split: range.by !== undefined, rowObjects: limits.rowObjects ?? false });
  checkFootprint(need, limits.budget ?? memoryBudget(), log, r, countUsers(firstActive), outliers);
  // labels of the output periods only: history before --from is classified, never shown
  const labels: string[] = new Array<string>(r.span);
  for (let i = r.outStart; i < r.span; i++) labels[i] = periodLabel(r.startKey + i, scheme);
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
  const users = countUsers(classified.firstActive);
  const keySet = rules.activity.keyEvents ? new Set(rules.activity.keyEvents) : undefined;
  const events = [...log.eventNames].sort((a, b) => b[1] - a[1] || (a[0] < b[0] ? -1 : 1)).slice(0, 50).map(([name, rows]) => ({ name, rows, key: !keySet || keySet.has(name) }));
  const attributes = log.attributes.map((a) => ({ name: a.name, values: a.values.length - 1 }));
  const warnings = outliers ? [outlierWarning(outliers, r, scheme)] : [];
  return { range: r, labels, classified, footprint: need, result: { waist, rows: rowAccount, lastPeriod, users, events, attributes, warnings } };
}

function countUsers(firstActive: Int32Array): number {
  let users = 0;
  for (let u = 0; u < firstActive.length; u++) if (firstActive[u] >= 0) users++;
  return users;
}

/** The sizes the footprint depends on, from the active periods alone (nothing per period before --from). */
function sizesOf(log: EventLog, active: ActivePeriods, firstActive: Int32Array, r: ResolvedRange, warmup: number, bands: number): Omit<FootprintInput, 'split' | 'rowObjects'> {
  const firstFlow = r.outStart + warmup;
  const cohort = new Uint8Array(r.span - firstFlow);
  for (let u = 0; u < firstActive.length; u++) if (firstActive[u] >= firstFlow) cohort[firstActive[u] - firstFlow] = 1;
  let cohortCells = 0, windowCells = 0;
  for (let k = firstFlow; k < r.span; k++) {
    if (!cohort[k - firstFlow]) continue;
    cohortCells += r.span - k;
    if (r.span - 1 - k <= WINDOW_MAX_AGE) windowCells += (r.span - k) ** 2;
  }
  let cohortActive = 0;
  for (let i = 0; i < active.user.length; i++) if (firstActive[active.user[i]] >= firstFlow) cohortActive++;
  return {
    events: log.size,
    attributes: log.attributes.length,
    activePeriods: active.user.length,
    users: log.users.length,
    rows: classifiedSize(firstActive, r.span, r.outStart),
    cohortActive,
    outPeriods: r.span - r.outStart,
    bands,
    cohortCells,
    windowCells,
  };
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

/** A stage of a run, for progress: reading (with the bytes read), then classifying. */
export type EngineProgress = ({ stage: 'reading' } & ReadProgress) | { stage: 'classifying' };

export class MemoryEngine implements Engine {
  readonly name = 'memory';

  /** `onProgress` is told how the run goes (for a progress display; the library prints nothing). */
  constructor(private readonly opts: { onProgress?: (p: EngineProgress) => void } = {}) {}

  private async prepare(source: EventSource, rules: Rules, range: RangeOptions, rowObjects = false): Promise<Prepared> {
    const scheme: PeriodScheme = { grain: rules.grain, weekStart: rules.weekStart };
    const toKey = optionKey(range.to, scheme, 'to');
    const tell = this.opts.onProgress;
    const log = await readEvents(source.files, { rules, format: source.format, skipBadRows: source.skipBadRows, toKey, delimiter: source.delimiter, onProgress: tell && ((p) => tell({ stage: 'reading', ...p })) });
    tell?.({ stage: 'classifying' });
    return { log, ...runOnLog(log, rules, range, { rowObjects }) };
  }

  async run(source: EventSource, rules: Rules, range: RangeOptions = {}): Promise<EngineResult> {
    return (await this.prepare(source, rules, range)).result;
  }

  async classify(source: EventSource, rules: Rules, range: RangeOptions = {}): Promise<{ rows: ClassifiedRow[]; result: EngineResult }> {
    const p = await this.prepare(source, rules, range, true);
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
