/**
 * The projection job: fit (or take) a chain, then its long run, projection with calibrated bands,
 * first passage, named scenarios side by side, segments, what-if and backtest, in one serialisable
 * result. Pure: no I/O.
 */
import { TidemarkError } from '../errors.js';
import { parseSelection, selectTransitions, type TransitionSelection } from '../flows/select.js';
import type { WaistTables } from '../flows/types.js';
import type { PeriodScheme } from '../periods/calendar.js';
import { backtest, INNER_BAND, innerSideRatio, type Backtest } from './backtest.js';

export type { ProjectionStep, StepBands };
import { freshIndex, startAt } from './fit.js';
import { forecastWindow, type Forecast } from './forecast.js';
import type { InflowMethod } from './inflow.js';
import { labelsAhead, SEASON_OF } from './labels.js';
import { firstPassage, type FirstPassage } from './passage.js';
import { project } from './project.js';
import { namedScenarios, scenarioEdits, type ScenarioOutput } from './scenarios.js';
import { projectSegments, type SegmentsOutput } from './segments.js';
import { simulatePaths } from './simulate.js';
import { forecastWarnings, stepsWithBands, type ProjectionStep, type StepBands } from './steps.js';
import { stationary, type Stationary } from './stationary.js';
import { validateModel } from './validate.js';
import { whatIf, type MoveRules, type WhatIf } from './whatif.js';
import { baseState } from '../lifecycle/states.js';

type Counts = Record<string, number>;
type Pair = [number, number];


export interface ProjectOutput {
  states: string[];
  /** The states that count as active (empty for a planner's matrix). */
  activeStates: string[];
  source: { kind: 'events'; fit: { from: string; to: string; transitions: number }; emptyRows: string[] } | { kind: 'matrix'; file: string; audience?: number };
  matrix: number[][];
  start: Counts;
  /** New users per period, per state, at the first step. */
  inflow: Counts;
  /** How the inflow was estimated (events only). */
  inflowMethod: { method: InflowMethod | 'given'; center: number; slope: number; periods: number; outliers: { period: string; arrivals: number }[]; trimmed: string[] } | null;
  horizon: number;
  /** The stationary mix when the chain has one; null otherwise (see longRun). */
  steadyState: Counts | null;
  /** `unobserved`: states no user was ever seen in (left out of the class analysis, share 0). */
  longRun: { kind: Stationary['kind']; sentence: string; unobserved: string[] };
  projection: ProjectionStep[];
  /** How the bands were made (null without bands: a planner's matrix has no counts to learn variation from). */
  uncertainty: {
    method: string;
    sources: string;
    samples: number;
    seed: number;
    percentiles: Pair;
    inner: Pair;
    rates: { state: string; periods: number; noise: number; drift: number; estimated: boolean }[];
    /** ρ: the share of the rates' variation every row shares (one shock per state each period). */
    shared: number;
    inflow: { noiseSd: number; drift: number };
    /**
     * The bands' recalibration from the backtest's scores (per horizon: the factors [lower, upper] each
     * band's sides were scaled by, null where too few scores, and each state's centre correction in units
     * of its outer band's half-width, null where none; steps past the backtest's horizon use its last);
     * `applied` false when there was no backtest (`--no-backtest`, too little data), with the reason.
     */
    recalibration: { applied: boolean; note: string; minScores: number | null; scoreOrigins: number | null; horizons: { horizon: number; scores: number; inner: [number, number] | null; outer: [number, number] | null; shift: Record<string, number> | null }[] };
  } | null;
  /** Warnings for the reader: outlier periods of the inflow, rows whose variation could not be estimated, pooled segments. */
  warnings: string[];
  firstPassage?: { target: string; expectedSteps: Record<string, number | null>; periodsInState: Record<string, Counts>; unreachable: { state: string; reason: string }[] };
  /** `--what-if`: one unnamed scenario, without bands. */
  scenario?: { edits: { text: string; before: number; after: number }[]; baseline: ProjectionStep[]; projected: ProjectionStep[]; difference: ProjectionStep[] };
  /** `--scenario NAME=…`: each compared with the baseline, with bands. */
  scenarios?: ScenarioOutput[];
  segments?: SegmentsOutput;
  backtest?: Backtest | { skipped: string };
}

export const BAND_METHOD = 'simulated paths: each row of rates starts from its level at the end of the fit window (Kalman filter of the local level model) drawn with that level\'s uncertainty, and moves each period by a random walk (drift) and noise that does not persist, both estimated from the fit window by maximum likelihood; a share of that movement, estimated from how the rows moved together, is one shock shared by every row; arrivals from the chosen center with their own noise and drift; users moved by multinomial draws. Then each band is recalibrated per horizon from the backtest, from the latest 15 origins with a known outcome: each state\'s band is moved by the median of that state\'s errors (actual share minus the paths\' median, in units of the outer band\'s half-width; once 6 origins exist), then its lower and upper sides are scaled separately by the empirical quantile, at (1 + level)/2, of how far beyond the moved median the actual shares fell on that side, in units of that side (the model\'s widths where fewer than 30 scores exist)';
export const BAND_SOURCES = 'local level model and its diffuse likelihood (Harvey 1989, ch. 2 and §3.4), Dirichlet-multinomial overdispersion (Mosimann 1962), one common factor (Anderson 2003, §14.2), percentiles by Hyndman & Fan (1996) definition 7, intercept correction (Clements & Hendry 1996, 1998), split conformal prediction with a normalised score (Vovk, Gammerman & Shafer 2005; Shafer & Vovk 2008) in its asymmetric form (Romano, Patterson & Candès 2019)';

function recalibrationOutput(bt: Backtest | { skipped: string } | undefined, states: readonly string[]): NonNullable<ProjectOutput['uncertainty']>['recalibration'] {
  if (!bt) return { applied: false, note: 'no backtest was run (--no-backtest): the bands are the model\'s, not recalibrated', minScores: null, scoreOrigins: null, horizons: [] };
  if (!('rows' in bt) || !bt.recalibration) return { applied: false, note: `no backtest (${'skipped' in bt ? bt.skipped : 'not recalibrated'}): the bands are the model's, not recalibrated`, minScores: null, scoreOrigins: null, horizons: [] };
  const r = bt.recalibration;
  const applied = r.horizons.some((x) => x.inner !== null || x.outer !== null || x.shift !== null);
  const missing = r.horizons.filter((x) => x.outer === null).map((x) => `+${x.horizon}`);
  return {
    applied,
    note: !applied ? `the backtest had fewer than ${r.minScores} scores at every horizon: the bands are the model's, not recalibrated`
      : `recalibrated from the backtest's errors${missing.length ? ` (at ${missing.join(', ')} fewer than ${r.minScores} scores: the model's widths there)` : ' at every horizon'}: each state's band moved by the median of its recent errors (intercept correction), then each side scaled by its own quantile of past errors; steps past the backtest's horizon use its last corrections and factors; the bands of active users and totals are scaled but not moved; the bands of differences from the baseline and of segments are the model's`,
    minScores: r.minScores,
    scoreOrigins: r.scoreOrigins,
    horizons: r.horizons.map((x) => ({ ...x, shift: x.shift ? Object.fromEntries(states.map((st, i) => [st, x.shift![i]])) : null })),
  };
}

const byState = (states: readonly string[], v: ArrayLike<number>): Counts => Object.fromEntries(states.map((s, i) => [s, v[i]]));

/** Transitions pooled by default: the last 8, or all when there are fewer. */
export const DEFAULT_FIT = 8;

export interface ProjectionOptions {
  /** Transitions to fit on: 'all', 'N' or 'FROM..TO' (default: the last {@link DEFAULT_FIT}, or all when fewer). */
  fit?: string;
  horizon: number;
  /** New users per period into the arrival state, replacing the estimated center. */
  inflow?: number;
  /** How the inflow is estimated from the fit window (default median). */
  inflowMethod?: InflowMethod;
  /** Target state for first passage. */
  until?: string;
  whatIf?: string[];
  /** Named scenarios, `NAME=edits`. */
  scenarios?: string[];
  /** The moves the states allow (lifecycle rules: `lifecycle/moves.ts`); edits of others are refused. */
  moves?: MoveRules;
  samples: number;
  seed: number;
  band: Pair;
  backtest?: boolean;
  backtestHorizon?: number;
  /** Score only the latest N backtest origins (default: all). */
  backtestOrigins?: number;
  /** Samples per backtest origin (default 100). */
  backtestSamples?: number;
  /** The calendar of the periods: labels the steps ahead and sets the default season. */
  scheme?: PeriodScheme;
  /** Periods in a season for the seasonal-naive baseline (default: 7 days, 52 weeks, 12 months). */
  season?: number;
  /** Users leaving each populated state over the fit window below which a segment is pooled (default 30). */
  minSegment?: number;
}

/** The selection a fit text means on these tables ('auto' or undefined: the last 8, or all when fewer). */
export function fitSelection(tables: Pick<WaistTables, 'transitions'>, fit: string | undefined): TransitionSelection {
  if (fit === undefined || fit === 'auto') return { last: Math.max(1, Math.min(DEFAULT_FIT, tables.transitions.length)) };
  return parseSelection(fit);
}

/**
 * Everything `tidemark project` computes, from waist tables (events) or a planner's matrix document.
 * @throws TidemarkError as the Markov functions it calls; INPUT_INVALID when a document has no start.
 */
export function computeProjection(input: { tables: WaistTables } | { doc: unknown; file: string }, o: ProjectionOptions): ProjectOutput {
  if ('tables' in input) return fromTables(input.tables, o);
  return fromDocument(input.doc, input.file, o);
}

function fromTables(tables: WaistTables, o: ProjectionOptions): ProjectOutput {
  const { states } = tables;
  const fi = freshIndex(states, tables.arrivalState);
  const selection = fitSelection(tables, o.fit);
  const picked = selectTransitions(tables, selection);
  const last = picked[picked.length - 1];
  const start = startAt(tables, tables.periods.indexOf(last.to), last, fi);
  const f = forecastWindow(states, picked, start, fi, o.horizon, o.inflowMethod ?? 'median', o.inflow);
  const labels = o.scheme ? labelsAhead(last.to, o.horizon, o.scheme) : undefined;
  const activeIdx = tables.activeStates.map((s) => states.indexOf(s)).filter((i) => i >= 0);
  const named = o.scenarios?.length ? scenarioEdits(o.scenarios, states, f, o.moves, o.horizon) : [];
  const sim = simulatePaths(f.model, start, o.horizon, { samples: o.samples, seed: o.seed, edits: named.map((n) => n.edits) });
  const warnings = forecastWarnings(f, 'the fit window');
  let bt: Backtest | { skipped: string } | undefined;
  if (o.backtest !== false) {
    try {
      const window = 'last' in selection ? selection.last : picked.length;
      bt = backtest(tables, {
        horizon: o.backtestHorizon ?? 8,
        seed: o.seed,
        band: o.band,
        window: o.fit === 'all' ? undefined : window,
        minFit: Math.min(4, window),
        maxOrigins: o.backtestOrigins,
        samples: o.backtestSamples,
        inflowMethod: o.inflowMethod,
        season: o.season ?? (o.scheme ? SEASON_OF[o.scheme.grain] : undefined),
      });
    } catch (e) {
      if (e instanceof TidemarkError && e.code === 'NOT_ENOUGH_DATA') bt = { skipped: e.message };
      else throw e;
    }
  }
  const recal = bt && 'rows' in bt ? bt.recalibration : null;
  const one: [number, number] = [1, 1];
  const factors = recal ? [{ inner: one, outer: one }, ...recal.horizons.map((x) => ({ inner: x.inner ?? one, outer: x.outer ?? one, ...(x.shift ? { shift: x.shift } : {}) }))] : null;
  if (factors && recal!.horizons.some((x) => x.inner !== null || x.outer !== null || x.shift !== null)) sim.recalibration = { inner: INNER_BAND, outer: o.band, factors, sideRatio: innerSideRatio(o.band) };
  const out: ProjectOutput = {
    states,
    activeStates: [...tables.activeStates],
    source: { kind: 'events', fit: { from: picked[0].from, to: last.to, transitions: picked.length }, emptyRows: f.emptyRows },
    matrix: f.matrix,
    start: byState(states, start),
    inflow: byState(states, f.inflowVector),
    inflowMethod: o.inflow === undefined
      ? { method: f.inflow.method, center: f.inflow.center, slope: f.inflow.slope, periods: f.inflow.periods, outliers: f.inflow.outliers, trimmed: f.inflow.trimmed }
      : { method: 'given', center: o.inflow, slope: 0, periods: f.inflow.periods, outliers: f.inflow.outliers, trimmed: [] },
    horizon: o.horizon,
    ...longRunOf(states, f.matrix, start, f.inflowVector, f.counts),
    projection: stepsWithBands(states, f.point, sim, 0, o.band, activeIdx, labels),
    uncertainty: {
      method: BAND_METHOD,
      sources: BAND_SOURCES,
      samples: o.samples,
      seed: o.seed,
      percentiles: o.band,
      inner: [...INNER_BAND],
      rates: f.variation.filter((r) => r.rates !== null).map((r) => ({ state: r.state, periods: r.periods, noise: r.noise, drift: r.drift, estimated: r.estimated })),
      shared: f.model.common ?? 0,
      inflow: { noiseSd: f.inflow.noiseSd, drift: f.inflow.drift },
      recalibration: recalibrationOutput(bt, states),
    },
    warnings,
  };
  if (o.until) out.firstPassage = passageOutput(states, firstPassage({ states, matrix: f.matrix }, o.until), o.until);
  if (o.whatIf && o.whatIf.length > 0) out.scenario = whatIfOutput(whatIf({ states, matrix: f.matrix, inflow: f.inflowVector, moves: o.moves }, o.whatIf, start, o.horizon), states, labels);
  if (named.length) out.scenarios = namedScenarios(named, states, f, sim, o.band, activeIdx, labels);
  if (tables.segmentTransitions) {
    out.segments = projectSegments(tables, tables.segmentTransitions, selection, { ...o, fi, activeIdx, labels });
    warnings.push(...out.segments.warnings);
  }
  if (bt) out.backtest = bt;
  return out;
}

function fromDocument(doc: unknown, file: string, o: ProjectionOptions): ProjectOutput {
  const model = validateModel(doc);
  const { states, matrix } = model;
  let { inflow } = model;
  if (!model.start) throw new TidemarkError('INPUT_INVALID', 'the matrix document has no "start" counts to project from', { file, key: 'start' }, 'Add "start": {"state": count, ...}');
  const start = model.start;
  if (o.inflow !== undefined) {
    const into = inflow.findIndex((v) => v > 0);
    const fi = states.indexOf(baseState('arrival'));
    const at = into >= 0 ? into : fi;
    if (at < 0) throw new TidemarkError('INPUT_INVALID', 'a new-user inflow needs a state that new users arrive in: the document gives no inflow to show where', { key: 'inflow' }, 'add "inflow": {"state": count} to the document');
    const total = inflow.reduce((a, b) => a + b, 0);
    inflow = states.map((_, i) => (total > 0 ? (inflow[i] / total) * (o.inflow as number) : i === at ? (o.inflow as number) : 0));
  }
  const labels = undefined;
  const base = project(matrix, start, inflow, o.horizon);
  const out: ProjectOutput = {
    states,
    activeStates: [],
    source: { kind: 'matrix', file, ...(model.audience === undefined ? {} : { audience: model.audience }) },
    matrix,
    start: byState(states, start),
    inflow: byState(states, inflow),
    inflowMethod: null,
    horizon: o.horizon,
    ...longRunOf(states, matrix, start, inflow, undefined),
    projection: base.counts.map((c, t) => ({ step: t, total: base.totals[t], counts: byState(states, c), shares: byState(states, base.shares[t]), bands: null })),
    uncertainty: null,
    warnings: [],
  };
  if (o.until) out.firstPassage = passageOutput(states, firstPassage({ states, matrix }, o.until), o.until);
  if (o.whatIf && o.whatIf.length > 0) out.scenario = whatIfOutput(whatIf({ states, matrix, inflow, moves: o.moves }, o.whatIf, start, o.horizon), states, labels);
  if (o.scenarios?.length) {
    const f: Forecast = { matrix, counts: [], emptyRows: [], inflow: { method: 'mean', center: inflow.reduce((a, b) => a + b, 0), slope: 0, outliers: [], trimmed: [], noiseSd: 0, drift: 0, centerSd: 0, slopeSd: 0, periods: 0 }, inflowVector: inflow, variation: [], point: base, model: { rows: [], inflow: { center: 0, slope: 0, noiseSd: 0, drift: 0, centerSd: 0, slopeSd: 0 }, split: [] } };
    const named = scenarioEdits(o.scenarios, states, f, o.moves, o.horizon);
    out.scenarios = namedScenarios(named, states, f, undefined, o.band, [], labels);
  }
  return out;
}



function whatIfOutput(w: WhatIf, states: string[], labels?: readonly (string | undefined)[]): NonNullable<ProjectOutput['scenario']> {
  const plain = (p: { counts: number[][]; shares: number[][]; totals: number[] }): ProjectionStep[] =>
    p.counts.map((c, t) => ({ step: t, ...(labels?.[t] ? { period: labels[t] } : {}), total: p.totals[t], counts: byState(states, c), shares: byState(states, p.shares[t]), bands: null }));
  return { edits: w.scenario.changes, baseline: plain(w.baseline), projected: plain(w.projected), difference: plain(w.difference) };
}

function longRunOf(states: string[], matrix: number[][], start: number[], inflow: number[], counts: number[][] | undefined): Pick<ProjectOutput, 'steadyState' | 'longRun'> {
  const long = observedLongRun({ states, matrix }, start, inflow, counts);
  return { steadyState: long.kind === 'unique' ? byState(states, long.distribution) : null, longRun: { kind: long.kind, sentence: long.sentence, unobserved: long.unobserved } };
}

function passageOutput(states: string[], fp: FirstPassage, target: string): NonNullable<ProjectOutput['firstPassage']> {
  return {
    target,
    expectedSteps: byState(states, fp.expected as number[]),
    periodsInState: Object.fromEntries(fp.transient.map((i, k) => [states[i], Object.fromEntries(fp.transient.map((j, l) => [states[j], fp.fundamental[k][l]]))])),
    unreachable: fp.infinite.map((x) => ({ state: states[x.state], reason: x.reason })),
  };
}

/**
 * The stationary analysis over the states the data actually saw. A state with no users ever — no
 * transitions out or in, no start, no inflow (say `lapsing` when lapseLimit is 0) — would be kept
 * absorbing by the fit and show up as a spurious closed class; it is left out and gets share 0.
 */
export function observedLongRun(chain: { states: string[]; matrix: number[][] }, start: number[], inflow: number[], counts: number[][] | undefined): Stationary & { unobserved: string[] } {
  const S = chain.states.length;
  const seen = chain.states.map((_, i) => !counts || start[i] > 0 || inflow[i] > 0 || counts.some((row, k) => row[i] > 0 || counts[i][k] > 0));
  if (seen.every(Boolean)) return { ...stationary(chain), unobserved: [] };
  const keep = chain.states.map((_, i) => i).filter((i) => seen[i]);
  const sub = stationary({ states: keep.map((i) => chain.states[i]), matrix: keep.map((i) => keep.map((j) => chain.matrix[i][j])) });
  const unobserved = chain.states.filter((_, i) => !seen[i]);
  const widen = (v: number[]) => {
    const out = new Array<number>(S).fill(0);
    keep.forEach((i, k) => (out[i] = v[k]));
    return out;
  };
  const map = (idx: number[]) => idx.map((k) => keep[k]);
  const note = ` (${unobserved.join(', ')}: never observed, left out)`;
  if (sub.kind === 'unique') return { ...sub, distribution: widen(sub.distribution), recurrent: map(sub.recurrent), transient: map(sub.transient), sentence: sub.sentence + note, unobserved };
  if (sub.kind === 'periodic') return { ...sub, timeAverage: widen(sub.timeAverage), recurrent: map(sub.recurrent), transient: map(sub.transient), sentence: sub.sentence + note, unobserved };
  return { ...sub, closed: sub.closed.map((c) => ({ ...c, states: map(c.states), distribution: widen(c.distribution) })), transient: map(sub.transient), sentence: sub.sentence + note, unobserved };
}
