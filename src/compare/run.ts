/**
 * The rules comparison: the same events classified under rule set A and under rule set B, the
 * user-periods counted by (state under A → state under B), and the headlines under each.
 *
 * The two rule sets must cut time into the same periods: the same grain and, for weeks, the same week
 * start; otherwise a user-period under one is no period under the other, and the comparison is refused.
 * Everything else may differ (lapse limit, key events, minimum events, splits, time zone, warm-up…).
 * A user-period is matched by user id and period label. Under different key events or minimum events a
 * user may become active later under one rule set, and with other key events the range of the data
 * may differ too: such user-periods are present under one rule set only and are counted apart, by
 * their state. The counts cover every classified user-period of the output range (as `classify` lists
 * them, an incomplete last period included); the headlines leave an incomplete last period out, as the
 * analyses do, unless `includePartial`.
 *
 * The events are read once per rule set, through the engine's classification stream, so any engine and
 * any event source that can be read twice serve.
 */
import type { Engine, EventSource, RangeOptions } from '../engines/types.js';
import { TidemarkError } from '../errors.js';
import type { Rules } from '../rules/schema.js';
import { analysisWaist, type DroppedPeriod } from '../waist/derive.js';
import type { Waist } from '../waist/types.js';
import { ChangeCounter, StoredClassification, type ClassificationChanges } from './changes.js';
import { headlinesOf, type Headlines } from './headlines.js';

/** One rule set of the comparison: where it came from, and the rules. */
export interface RulesInput {
  file: string;
  rules: Rules;
}

/** A rules key whose value differs between A and B. */
export interface RulesChange {
  key: string;
  a: unknown;
  b: unknown;
}

export interface RulesDiff extends ClassificationChanges {
  a: { file: string; name: string | null; version: string | null };
  b: { file: string; name: string | null; version: string | null };
  /** The rules keys that differ (columns and free text left out). */
  rulesChanged: RulesChange[];
  headlines: { a: Headlines; b: Headlines };
}

/** One side's run: its waist in analysis form and the incomplete last period it left out. */
export interface SideRun {
  waist: Waist;
  dropped?: DroppedPeriod;
}

/** The keys compared, in the order of a rules file. */
const KEYS: [string, (r: Rules) => unknown][] = [
  ['grain', (r) => r.grain],
  ['weekStart', (r) => (r.grain === 'week' ? r.weekStart : null)],
  ['timezone', (r) => r.timezone],
  ['activity.keyEvents', (r) => r.activity.keyEvents ?? null],
  ['activity.minEvents', (r) => r.activity.minEvents],
  ['lapseLimit', (r) => r.lapseLimit],
  ['warmup', (r) => r.warmup],
  ['tenureBands', (r) => r.tenureBands],
  ['minCell', (r) => r.minCell],
  ['splits', (r) => r.splits.map((s) => ({ state: s.state, atLeast: s.atLeast, names: s.names }))],
];

/** The rules keys whose values differ. */
export function rulesChanges(a: Rules, b: Rules): RulesChange[] {
  return KEYS.map(([key, get]) => ({ key, a: get(a), b: get(b) })).filter((c) => JSON.stringify(c.a) !== JSON.stringify(c.b));
}

/**
 * Refuse two rule sets whose periods differ (grain, or week start on a week grain).
 * @throws TidemarkError INPUT_INVALID located at B's file and the key (`grain` or `weekStart`).
 */
export function checkComparable(a: RulesInput, b: RulesInput): void {
  const diff = rulesChanges(a.rules, b.rules).find((c) => c.key === 'grain' || c.key === 'weekStart');
  if (!diff) return;
  throw new TidemarkError('INPUT_INVALID', `the two rule sets cut time into different periods (${diff.key} ${String(diff.a)} against ${String(diff.b)}), so a user-period under one is no period under the other`,
    { file: b.file, key: diff.key }, 'Compare rule sets of the same grain and week start; to weigh a grain, run each and compare their outputs');
}

/**
 * Classify `source` under A and under B with `engine`, count the changes and give each side's
 * headlines.
 * @throws TidemarkError as {@link checkComparable} (before anything is read) and as the engine.
 */
export async function diffRules(engine: Engine, source: EventSource, a: RulesInput, b: RulesInput, range: RangeOptions = {}, o: { includePartial?: boolean } = {}): Promise<{ diff: RulesDiff; runs: { a: SideRun; b: SideRun } }> {
  checkComparable(a, b);
  const stored = new StoredClassification();
  const runA = analysisWaist((await engine.classify(source, a.rules, range, stored)).waist, o);
  const counter = new ChangeCounter(stored);
  const runB = analysisWaist((await engine.classify(source, b.rules, range, counter)).waist, o);
  const changes = counter.result(runA.waist.tables.states, runB.waist.tables.states);
  const side = (r: RulesInput) => ({ file: r.file, name: r.rules.name ?? null, version: r.rules.version === undefined ? null : String(r.rules.version) });
  return {
    diff: {
      a: side(a),
      b: side(b),
      rulesChanged: rulesChanges(a.rules, b.rules),
      ...changes,
      headlines: { a: headlinesOf(runA.waist), b: headlinesOf(runB.waist) },
    },
    runs: { a: runA, b: runB },
  };
}
