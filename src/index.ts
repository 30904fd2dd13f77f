/**
 * tidemark's library API. Everything exported here is stable within a minor version; modules not
 * re-exported are internal.
 *
 * @example
 * import { resolveRules, createEngine, filesSource, analysisWaist, summariseFlows } from 'tidemark';
 * const rules = resolveRules({ file: 'rules/weekly.yaml' });
 * const { waist } = await createEngine('memory').run(filesSource(['events.csv']), rules);
 * summariseFlows(analysisWaist(waist).waist.tables).transitions.at(-1)?.retention;
 */

// Errors
export { TidemarkError, type ErrorCode, type ErrorLocation } from './errors.js';

// Rules
export { loadRulesFile, parseRules } from './rules/load.js';
export { rulesSchema, rulesJsonSchema, type Rules, type RulesInput, type Grain, type Weekday } from './rules/schema.js';

// Input and periods
export { readEvents, type EventFormat, type ReadEventsOptions } from './ingest/read.js';
export type { EventLog, LineAccount, RejectReason, RowAccount } from './ingest/eventLog.js';
export { periodKeyOfDay, periodLabel, periodStartDay, type PeriodScheme } from './periods/calendar.js';

// Lifecycle
export { STATES, ACTIVE_STATES, type StateName } from './lifecycle/states.js';
export { lifecycleMachine } from './lifecycle/machine.js';
export { compilePlan, type LifecyclePlan } from './lifecycle/plan.js';
export { columnUniqueness, perPersonColumns, checkSplitColumn, PER_PERSON_SHARE, PER_PERSON_MIN_USERS, type ColumnUniqueness } from './lifecycle/perPerson.js';
export { lifecycleMoves, type LifecycleMoves, type Move } from './lifecycle/moves.js';

// Engines and the waist tables
export { MemoryEngine, runOnLog, streamClassified } from './engines/memory/index.js';
export { createEngine, ENGINE_NAMES, type EngineName } from './engines/index.js';
export { filesSource, type Engine, type EngineRun, type EventSource, type RangeOptions, type ClassifiedSink, type LastPeriod } from './engines/types.js';

// The waist: the published contract between engines and analyses
export { WAIST_FORMAT, WAIST_VERSION, waistManifestSchema, waistManifestJsonSchema, type WaistManifest, type StateInfo } from './waist/manifest.js';
export type { Waist } from './waist/types.js';
export { readWaist, parseManifest } from './waist/read.js';
export { writeWaist, waistFiles } from './waist/write.js';
export { analysisWaist, partialPeriodSentence, type DroppedPeriod } from './waist/derive.js';
export { WAIST_TABLES, type TableSpec } from './waist/tables.js';
export { makeManifest, type ManifestInput } from './waist/build.js';
export { resolveRules, DEFAULT_RULES, type RulesChoice } from './rules/resolve.js';
export type { WaistTables, TransitionCounts, RetentionCell, CohortRow, DurationRow, SegmentFlows } from './flows/types.js';

// Flows
export { summariseFlows, type FlowsSummary, type TransitionSummary, type PooledSummary } from './flows/summary.js';
export { parseSelection, selectTransitions, type TransitionSelection } from './flows/select.js';
export { rowRates } from './flows/rates.js';
export { growthAccount, type GrowthAccount } from './flows/growth.js';
export { statusRetention, type StateRetention } from './flows/retention.js';

// Explaining retention
export { explainRetention, collapseCells, type ExplainOptions, type ExplainOutput } from './explain/run.js';
export { kitagawa, kitagawaFromCounts, type KitagawaResult } from './explain/kitagawa.js';
export { decompositionSentence } from './explain/sentence.js';
export { retentionRates, retentionChanges, decomposeRetention } from './explain/retention.js';
export { cohortReport, type CohortsOutput } from './explain/cohortReport.js';
export { cohortTriangle, classicRetention, onOrAfterRetention, windowRetention } from './explain/cohorts.js';

// Statistics
export { wilsonInterval } from './stats/wilson.js';
export { newcombeDifference } from './stats/newcombe.js';
export { twoProportionZTest } from './stats/ztest.js';
export { bhAdjust, bhRejected } from './stats/bh.js';

// Projection
export * as markov from './markov/index.js';
export { computeProjection, type ProjectOutput, type ProjectionOptions } from './markov/run.js';

// Survival and cohort curves
export { kaplanMeier, kaplanMeierByGroup } from './survival/kaplanMeier.js';
export { logRank } from './survival/logRank.js';
export { survivalCurves, type SurvivalOutput } from './survival/run.js';
export { fitSbg, sbgSurvival, type SbgFit } from './curve/sbg.js';
export { cohortSurvivors } from './curve/survivors.js';

// Audience lists (who entered a state) and the rules comparison
export { entrySpec, entryNames, type EntrySpec, type EntryRules } from './audience/entry.js';
export { audienceOf, type AudienceList, type AudienceRow, type AudienceQuery } from './audience/list.js';
export { audienceFromEvents, type AudienceRun } from './audience/run.js';
export { pseudonym, readKeyFile, MIN_KEY_BYTES } from './audience/pseudonym.js';
export { parseWhere, type WhereClause } from './audience/where.js';
export { diffRules, rulesChanges, checkComparable, type RulesDiff, type RulesChange } from './compare/run.js';
export { headlinesOf, type Headlines } from './compare/headlines.js';

// Report
export { buildReport, type ReportModel, type ReportOptions } from './report/build.js';
export { reportOf, type ReportJobOptions } from './report/run.js';
export { fitCurves, cohortCurves, CURVE_MODEL, type CurveOutput } from './curve/run.js';
export { writeReport } from './report/write.js';
export { STATE_COLOURS } from './report/palette.js';

// The store: the weekly routine
export { updateStore, type UpdateOptions, type UpdateResult, type AppliedFile, type SkippedFile, type Restatement, type UpdateStep } from './store/update.js';
export { readStore, storeEvents, type StoreRead, type StoreEvents } from './store/read.js';
export { digestOf, digestLines, digestSection, type Digest, type DigestMove, type DigestRetentionChange } from './store/digest.js';

// Output
export { toCsv, spreadsheetSafe } from './output/csv.js';
export { writeFileAtomic, replaceFolder, recoverFolder } from './output/atomic.js';
