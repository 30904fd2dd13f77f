/**
 * What the behaviour commands (inspect, early, habits, rfm, grain) share: they read every event with
 * its detail (event names, rows that are not key events, lines), not the waist. Options are checked
 * before reading, as for every command.
 */
import { TidemarkError } from '../errors.js';
import type { EventLog } from '../ingest/eventLog.js';
import { readEvents } from '../ingest/read.js';
import { observedRange, userTimelines, type ObservedRange, type Timelines } from '../lifecycle/timelines.js';
import { optionKey } from '../periods/range.js';
import type { Rules } from '../rules/schema.js';
import { note, rangeOf, rowLine, sourceOf, type CommonOptions } from './common.js';
import type { Io } from './io.js';
import { flagError } from './options.js';

export interface BehaviourRead {
  log: EventLog;
  timelines: Timelines;
  range: ObservedRange;
}

/** Check the shared options, then read the events with detail; range errors name their flag. */
export async function readBehaviour(o: CommonOptions, rules: Rules): Promise<BehaviourRead> {
  const range = rangeOf(o, rules);
  const source = sourceOf(o);
  if (range.warmup !== undefined) throw new TidemarkError('USAGE', 'applies to the lifecycle states only; this command reads events, not states', { key: '--warmup' });
  const flags = { from: '--from', to: '--to' };
  if (source.kind !== 'files') throw new TidemarkError('USAGE', 'this command reads event files', { key: '--engine' });
  try {
    const toKey = optionKey(range.to, { grain: rules.grain, weekStart: rules.weekStart }, 'to');
    const log = await readEvents(source.files, { rules, format: source.format, skipBadRows: source.skipBadRows, toKey, delimiter: source.delimiter, detail: true });
    return { log, timelines: userTimelines(log, rules.activity.minEvents), range: observedRange(log, range.from, Boolean(o.includePartial)) };
  } catch (e) {
    throw flagError(e, flags);
  }
}

/** The row accounting and the note on an incomplete last period, on standard error. */
export function noteBehaviour(io: Io, o: { quiet?: boolean }, r: BehaviourRead): void {
  note(io, o, rowLine(r.log.rows));
  if (r.range.leftOut) note(io, o, `note: the last period, ${r.range.leftOut.label}, looks incomplete (the data stop ${(r.range.leftOut.coverage * 100).toFixed(0)}% of the way through it), so it is left out; pass --include-partial to keep it`);
}

/** The JSON note on an incomplete last period (absent when none was left out). */
export function leftOutJson(r: BehaviourRead): object {
  return r.range.leftOut ? { lastPeriod: { ...r.range.leftOut, complete: false, leftOut: true } } : {};
}
