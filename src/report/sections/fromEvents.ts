/**
 * The report's run on events with the in-memory engine, reading them once with detail (every row's
 * event name, the rows that are not key events): the waist of the key rows, and the behaviour
 * sections (the data check first) for both choices about an incomplete last period, stored in the waist
 * so that a report from a waist folder shows them too.
 */
import { runOnLog } from '../../engines/memory/index.js';
import type { EventSource, RangeOptions } from '../../engines/types.js';
import { TidemarkError } from '../../errors.js';
import { keyEventsOnly } from '../../ingest/eventLog.js';
import { readEvents } from '../../ingest/read.js';
import { observedRange, userTimelines } from '../../lifecycle/timelines.js';
import { optionKey } from '../../periods/range.js';
import type { Rules } from '../../rules/schema.js';
import type { Waist } from '../../waist/types.js';
import { behaviourSections } from './behaviour.js';

/** The waist of `source` with its behaviour sections. Files only (the sections need each event). */
export async function waistWithSections(source: EventSource, rules: Rules, range: RangeOptions = {}): Promise<Waist> {
  if (source.kind !== 'files') throw new TidemarkError('INPUT_INVALID', 'the behaviour sections need event files', { key: 'engine' });
  const toKey = optionKey(range.to, { grain: rules.grain, weekStart: rules.weekStart }, 'to');
  const log = await readEvents(source.files, { rules, format: source.format, skipBadRows: source.skipBadRows, toKey, delimiter: source.delimiter, detail: true });
  const { waist } = await runOnLog(keyEventsOnly(log), rules, range);
  const t = userTimelines(log, rules.activity.minEvents);
  const leaveOut = behaviourSections(log, t, observedRange(log, range.from, false), rules);
  const keep = waist.manifest.lastPeriod.complete ? leaveOut : behaviourSections(log, t, observedRange(log, range.from, true), rules);
  return { ...waist, sections: { leaveOut, keep } };
}
