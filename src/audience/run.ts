/**
 * The audience job on an event source: read the events once, run the in-memory engine, and list who
 * entered. Takes an `EventSource` and rules, so any source that gives them (event files today, a
 * state store's events later) feeds it unchanged.
 */
import { runOnLog } from '../engines/memory/index.js';
import type { EventSource, RangeOptions } from '../engines/types.js';
import { TidemarkError } from '../errors.js';
import { readEvents } from '../ingest/read.js';
import { optionKey } from '../periods/range.js';
import type { Rules } from '../rules/schema.js';
import { analysisWaist, type DroppedPeriod } from '../waist/derive.js';
import type { Waist } from '../waist/types.js';
import { audienceOf, type AudienceList, type AudienceQuery } from './list.js';

export interface AudienceRun {
  list: AudienceList;
  /** The run's waist in analysis form (its manifest holds the row accounting and warnings). */
  waist: Waist;
  /** The incomplete last period that was left out, if any. */
  dropped?: DroppedPeriod;
}

/**
 * Read `source` (event files) with `rules` and list who entered. An incomplete last period is left
 * out unless `includePartial`: asking for it is then refused, since its quiet users may yet be active.
 * @throws TidemarkError as readEvents, runOnLog and audienceOf; INPUT_INVALID (key `engine`) for a
 *   source that is not event files.
 */
export async function audienceFromEvents(source: EventSource, rules: Rules, range: RangeOptions, q: Omit<AudienceQuery, 'lastOffset' | 'leftOut'> & { includePartial?: boolean }): Promise<AudienceRun> {
  if (source.kind !== 'files') throw new TidemarkError('INPUT_INVALID', `audience lists are read from event files, not a database ${source.kind}`, { key: 'engine' });
  const toKey = optionKey(range.to, { grain: rules.grain, weekStart: rules.weekStart }, 'to');
  const log = await readEvents(source.files, { rules, format: source.format, skipBadRows: source.skipBadRows, toKey, delimiter: source.delimiter });
  const run = await runOnLog(log, rules, range);
  const { waist, dropped } = analysisWaist(run.waist, { includePartial: q.includePartial });
  const lastOffset = run.range.span - 1 - (dropped ? 1 : 0);
  const list = audienceOf(log, run, { ...q, lastOffset, leftOut: dropped?.label });
  return { list, waist, dropped };
}
