/**
 * The in-memory engine: columnar event log → active periods (activity grid or sort) → a walk of each
 * user's periods through the tabulated xstate machine that counts the waist tables as it goes
 * (walkAggregate.ts); the classified rows themselves are made only when a reader asks for them.
 */
import { TidemarkError } from '../../errors.js';
import { userCount, type EventLog } from '../../ingest/eventLog.js';
import { readEvents, type ReadProgress } from '../../ingest/read.js';
import { activePeriods, type ActivePeriods } from '../../lifecycle/activity.js';
import { classifiedSize, classify, firstActivePeriods, type Classified } from '../../lifecycle/classify.js';
import { compilePlan } from '../../lifecycle/plan.js';
import { lifecycleStates } from '../../lifecycle/states.js';
import { durationRows } from './aggregate.js';
import { walkAggregate } from './walkAggregate.js';
import { loadArquero, segmentCells, segmentFlows } from './segments.js';
import { activeAttribute, activeIndex } from './attributes.js';
import { checkSplitColumn } from '../../lifecycle/perPerson.js';
import { lastPeriodOf } from '../../ingest/lastPeriod.js';
import { periodLabel, type PeriodScheme } from '../../periods/calendar.js';
import { optionKey, resolveRange, type ResolvedRange } from '../../periods/range.js';
import { WINDOW_MAX_AGE } from '../../flows/types.js';
import { engineFootprint, memoryBudget, type Footprint, type FootprintInput } from './budget.js';
import { checkFootprint, outlierWarning, outputOutliers } from './rangeCheck.js';
import type { Rules } from '../../rules/schema.js';
import type { ClassifiedSink, Engine, EngineRun, EventSource, LastPeriod, RangeOptions } from '../types.js';
import { makeManifest } from '../../waist/build.js';
import type { Waist } from '../../waist/types.js';



/** Limits of one run: the memory budget (default {@link memoryBudget}) and whether per-row output objects are built. */
export interface RunLimits {
  budget?: number;
  rowObjects?: boolean;
  /**
   * The caller reads the log's user and period columns no more after the run (the engine's own runs):
   * the active periods are written into their pages instead of fresh memory (activePeriods' spendLog).
   * Not with --by, which reads the log's rows after.
   */
  spendLog?: boolean;
}

/** One run of the heavy stage on a log in memory: the waist, and what `classify` streams from. */
export interface LogRun extends EngineRun {
  range: ResolvedRange;
  labels: string[];
  /** The classified rows: made on first reading (the waist itself is counted without them). */
  readonly classified: Classified;
  /** The active (user, period) pairs the classification walked (audience lists read them). */
  active: ActivePeriods;
  /** The bytes the run was estimated to need (budget.ts). */
  footprint: Footprint;
}

/** Run the heavy stage on an event log already in memory (async only to load arquero for `--by`). */
export async function runOnLog(log: EventLog, rules: Rules, range: RangeOptions = {}, limits: RunLimits = {}): Promise<LogRun> {
  const scheme: PeriodScheme = log.scheme;
  if (range.by !== undefined && log.wallMs.length < log.size) {
    throw new TidemarkError('INPUT_INVALID', 'a log read for the waist only (no attribute column per row) cannot be split by an attribute', { key: 'by' }, 'Read the log without waistOnly for --by');
  }
  const split = range.by === undefined ? undefined : checkSplitColumn(log, range.by, range.allowPerPersonColumn);
  let minKey = Infinity, maxKey = -Infinity;
  if (log.keyRange) ({ min: minKey, max: maxKey } = log.keyRange);
  else {
    for (let i = 0; i < log.size; i++) {
      const k = log.period[i];
      if (k < minKey) minKey = k;
      if (k > maxKey) maxKey = k;
    }
  }
  const fromKey = optionKey(range.from, scheme, 'from');
  const toKey = optionKey(range.to, scheme, 'to');
  const r = resolveRange(minKey, maxKey, fromKey, toKey, (k) => periodLabel(k, scheme));
  const warmup = range.warmup ?? rules.warmup;
  const lastKey = r.startKey + r.span - 1;
  // a log without wall clocks that knows its key range takes the last period's rows from the activity
  // count below (no pass over its rows, whose columns that count may spend); any other log has its pass here
  const lastFromActivity = log.wallMs.length < log.size && log.keyRange !== undefined;
  let last = lastFromActivity ? undefined : lastPeriodOf(log, lastKey, scheme);
  if (warmup >= r.span - r.outStart) {
    throw new TidemarkError('RANGE_INVALID', `a warm-up of ${warmup} periods leaves no period to analyse (the range has ${r.span - r.outStart})`, { key: 'warmup' }, 'Lower the warm-up or widen the range');
  }
  const plan = compilePlan(rules);
  const active = activePeriods(log, rules.activity.minEvents, r.startKey, r.span, true, undefined, limits.spendLog === true && range.by === undefined);
  last ??= lastPeriodOf(log, lastKey, scheme, active.lastRows);
  const lastPeriod: LastPeriod = { label: last.label, coverage: last.coverage, complete: last.complete };
  const firstActive = firstActivePeriods(active, userCount(log));
  const outliers = outputOutliers(log, r);
  const need = engineFootprint({ ...sizesOf(log, active, firstActive, r, warmup, rules.tenureBands.length), split: range.by !== undefined, rowObjects: limits.rowObjects ?? false });
  checkFootprint(need, limits.budget ?? memoryBudget(), log, r, countUsers(firstActive), outliers);
  // labels of the output periods only: history before --from is classified, never shown
  const labels: string[] = new Array<string>(r.span);
  for (let i = r.outStart; i < r.span; i++) labels[i] = periodLabel(r.startKey + i, scheme);
  const table = lifecycleStates(rules);
  const activeCount = table.filter((s) => s.active).length;
  const roleName = (role: string) => (table.find((s) => s.role === role) as { name: string }).name;
  // the tables in one walk of the users, with no classified rows (walkAggregate.ts); the rows are
  // made only for a reader that asks for them (--by, audience lists, the classify command)
  const walked = walkAggregate(active, plan, userCount(log), {
    states: plan.states,
    activeCount,
    arrivalState: roleName('arrival'),
    exitState: roleName('exit'),
    labels,
    outStart: r.outStart,
    warmup,
    tenureBands: rules.tenureBands,
  }, firstActive);
  const waist = walked.tables;
  let rows: Classified | undefined;
  const classifiedRows = (): Classified => (rows ??= classify(active, plan, userCount(log), r.outStart));
  if (range.by) {
    const classified = classifiedRows();
    const aq = await loadArquero();
    const attr = activeAttribute(log, range.by, active);
    const cells = segmentCells(aq, classified, active, attr, { states: plan.states, activeCount, labels, firstFlow: r.outStart + warmup });
    waist.segmentCells = { by: range.by, cells, perPerson: split?.perPerson };
    const groupOf = (u: number, first: number) => attr.values[attr.codes[activeIndex(active, u, first)]] || '(none)';
    waist.segmentDurations = { by: range.by, rows: durationRows(classified, r.outStart + warmup, r.span, groupOf, labels), perPerson: split?.perPerson };
    // each user's segment is the value in their first active period, so the segments partition the users
    const segmentOf = new Int32Array(userCount(log));
    for (let u = 0; u < segmentOf.length; u++) if (classified.firstActive[u] >= 0) segmentOf[u] = attr.codes[activeIndex(active, u, classified.firstActive[u])];
    const segments = segmentFlows(aq, classified, segmentOf, attr.values, { states: plan.states, labels, outStart: r.outStart, firstFlow: r.outStart + warmup, freshCode: plan.states.indexOf(roleName('arrival')) });
    waist.segmentTransitions = { by: range.by, perPerson: split?.perPerson, segments };
  }
  const keySet = rules.activity.keyEvents ? new Set(rules.activity.keyEvents) : undefined;
  const events = [...log.eventNames].sort((a, b) => b[1] - a[1] || (a[0] < b[0] ? -1 : 1)).slice(0, 50).map(([name, rows]) => ({ name, rows, key: !keySet || keySet.has(name) }));
  const manifest = makeManifest({
    rules,
    warmup,
    periods: labels.slice(r.outStart),
    engine: 'memory',
    rows: log.rows,
    rowsInLastPeriod: last.rows,
    lastPeriod,
    users: countUsers(walked.firstActive),
    events,
    attributes: log.attributes.map((a) => ({ name: a.name, values: a.values.length - 1 })),
    by: range.by ?? null,
    byPerPerson: split?.perPerson ?? false,
    warnings: outliers ? [outlierWarning(outliers, r, scheme)] : [],
  });
  const full: Waist = { manifest, tables: waist };
  return { waist: full, range: r, labels, get classified() { return classifiedRows(); }, active, footprint: need };
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
    users: userCount(log),
    rows: classifiedSize(firstActive, r.span, r.outStart),
    cohortActive,
    outPeriods: r.span - r.outStart,
    bands,
    cohortCells,
    windowCells,
  };
}

/** A stage of a run, for progress: reading (with the bytes read), then classifying. */
export type EngineProgress = ({ stage: 'reading' } & ReadProgress) | { stage: 'classifying' };

export class MemoryEngine implements Engine {
  readonly name = 'memory';

  /** `onProgress` is told how the run goes (for a progress display; the library prints nothing). */
  constructor(private readonly opts: { onProgress?: (p: EngineProgress) => void } = {}) {}

  private async prepare(source: EventSource, rules: Rules, range: RangeOptions): Promise<{ log: EventLog; run: LogRun }> {
    if (source.kind !== 'files') {
      throw new TidemarkError('INPUT_INVALID', `the memory engine reads event files, not a database ${source.kind}`, { key: 'engine' }, 'Use an engine that reads databases');
    }
    const scheme: PeriodScheme = { grain: rules.grain, weekStart: rules.weekStart };
    const toKey = optionKey(range.to, scheme, 'to');
    const tell = this.opts.onProgress;
    // without --by the waist needs no wall-clock or attribute column per row (fewer fresh pages to fill)
    const waistOnly = range.by === undefined;
    const log = await readEvents(source.files, { rules, format: source.format, skipBadRows: source.skipBadRows, toKey, delimiter: source.delimiter, waistOnly, onProgress: tell && ((p) => tell({ stage: 'reading', ...p })) });
    tell?.({ stage: 'classifying' });
    // the log's user and period columns are spent by the run (only its ids are read after: classify)
    return { log, run: await runOnLog(log, rules, range, { spendLog: true }) };
  }

  async run(source: EventSource, rules: Rules, range: RangeOptions = {}): Promise<EngineRun> {
    return { waist: (await this.prepare(source, rules, range)).run.waist };
  }

  async classify(source: EventSource, rules: Rules, range: RangeOptions, sink: ClassifiedSink): Promise<EngineRun> {
    const { log, run } = await this.prepare(source, rules, range);
    streamClassified(run.classified, log.users, run.labels, run.waist.tables.states, sink);
    return { waist: run.waist };
  }
}

/**
 * Stream classified rows sorted by user id (code-unit order), then period. Each user's rows are one
 * block in period order (classify.ts), so only the users are sorted.
 */
export function streamClassified(c: Classified, users: readonly string[], labels: readonly string[], states: readonly string[], sink: ClassifiedSink): void {
  const start = new Int32Array(users.length).fill(-1);
  for (let r = c.size - 1; r >= 0; r--) start[c.user[r]] = r;
  const order: number[] = [];
  for (let u = 0; u < users.length; u++) if (start[u] >= 0) order.push(u);
  order.sort((a, b) => (users[a] < users[b] ? -1 : users[a] > users[b] ? 1 : 0));
  for (const u of order) {
    for (let r = start[u]; r < c.size && c.user[r] === u; r++) sink.row(users[u], labels[c.period[r]], states[c.state[r]]);
  }
}
