/**
 * The projection job: fit (or take) a chain, then its long run, projection with bands, first passage,
 * what-if and backtest, in one serialisable result. Pure: no I/O.
 */
import { TidemarkError } from '../errors.js';
import { parseSelection } from '../flows/select.js';
import type { WaistTables } from '../flows/types.js';
import { backtest, type Backtest } from './backtest.js';
import { projectionBands, type Bands } from './bands.js';
import { fitChain } from './fit.js';
import { firstPassage, type FirstPassage } from './passage.js';
import { project } from './project.js';
import { stationary, type Stationary } from './stationary.js';
import { validateModel } from './validate.js';
import { whatIf, type MoveRules, type WhatIf } from './whatif.js';
import { baseState } from '../lifecycle/states.js';

type Counts = Record<string, number>;

export interface ProjectionStep {
  step: number;
  total: number;
  counts: Counts;
  shares: Counts;
  bands: { percentiles: [number, number]; counts: Record<string, [number, number]>; shares: Record<string, [number, number]> } | null;
}

export interface ProjectOutput {
  states: string[];
  source: { kind: 'events'; fit: { from: string; to: string; transitions: number }; emptyRows: string[] } | { kind: 'matrix'; file: string };
  matrix: number[][];
  start: Counts;
  inflow: Counts;
  horizon: number;
  /** The stationary mix when the chain has one; null otherwise (see longRun). */
  steadyState: Counts | null;
  /** `unobserved`: states no user was ever seen in (left out of the class analysis, share 0). */
  longRun: { kind: Stationary['kind']; sentence: string; unobserved: string[] };
  projection: ProjectionStep[];
  /** How the bands were made (null without bands: a planner's matrix has no counts to sample from). */
  uncertainty: { method: string; prior: number; samples: number; seed: number; percentiles: [number, number] } | null;
  firstPassage?: { target: string; expectedSteps: Record<string, number | null>; periodsInState: Record<string, Counts>; unreachable: { state: string; reason: string }[] };
  scenario?: { edits: { text: string; before: number; after: number }[]; baseline: ProjectionStep[]; projected: ProjectionStep[]; difference: ProjectionStep[] };
  backtest?: Backtest | { skipped: string };
}

const byState = (states: string[], v: number[]): Counts => Object.fromEntries(states.map((s, i) => [s, v[i]]));

function steps(states: string[], p: { counts: number[][]; shares: number[][]; totals: number[] }, bands?: Bands): ProjectionStep[] {
  return p.counts.map((c, t) => ({
    step: t,
    total: p.totals[t],
    counts: byState(states, c),
    shares: byState(states, p.shares[t]),
    bands: bands
      ? {
          percentiles: [bands.percentiles[0], bands.percentiles[bands.percentiles.length - 1]],
          counts: Object.fromEntries(states.map((s, i) => [s, [bands.counts[0][t][i], bands.counts[bands.counts.length - 1][t][i]]])),
          shares: Object.fromEntries(states.map((s, i) => [s, [bands.shares[0][t][i], bands.shares[bands.shares.length - 1][t][i]]])),
        }
      : null,
  }));
}


/** The Dirichlet prior added to each observed cell when sampling rows for the bands (Jeffreys). */
const PRIOR = 0.5;

export interface ProjectionOptions {
  /** Transitions to fit on: 'all', 'N' or 'FROM..TO' (default all). */
  fit?: string;
  horizon: number;
  /** New users per period into the fresh state, replacing the fitted or given inflow. */
  inflow?: number;
  /** Target state for first passage. */
  until?: string;
  whatIf?: string[];
  /** The moves the states allow (lifecycle rules: `lifecycle/moves.ts`); what-ifs on others are refused. */
  moves?: MoveRules;
  samples: number;
  seed: number;
  band: [number, number];
  backtest?: boolean;
  backtestHorizon?: number;
  /** Score only the latest N backtest origins (default: all). */
  backtestOrigins?: number;
}

/**
 * Everything `tidemark project` computes, from waist tables (events) or a planner's matrix document.
 * @throws TidemarkError as the Markov functions it calls; INPUT_INVALID when a document has no start.
 */
export function computeProjection(input: { tables: WaistTables } | { doc: unknown; file: string }, o: ProjectionOptions): ProjectOutput {
  let states: string[], matrix: number[][], start: number[], inflow: number[], counts: number[][] | undefined;
  let source: ProjectOutput['source'];
  if ('tables' in input) {
    const fitted = fitChain(input.tables, { selection: parseSelection(o.fit ?? 'all') });
    ({ states, matrix, start, inflow, counts } = fitted);
    source = { kind: 'events', fit: fitted.range, emptyRows: fitted.emptyRows };
  } else {
    const model = validateModel(input.doc);
    ({ states, matrix, inflow } = model);
    if (!model.start) throw new TidemarkError('INPUT_INVALID', 'the matrix document has no "start" counts to project from', { file: input.file, key: 'start' }, 'Add "start": {"state": count, ...}');
    start = model.start;
    source = { kind: 'matrix', file: input.file };
  }
  if (o.inflow !== undefined) {
    const fi = states.indexOf('tables' in input ? input.tables.arrivalState : baseState('arrival'));
    const into = fi >= 0 ? fi : inflow.findIndex((v) => v > 0);
    if (into < 0) throw new TidemarkError('INPUT_INVALID', 'a new-user inflow needs a state that new users arrive in: the model has no arrival state and no inflow', { key: 'inflow' });
    inflow = states.map((_, i) => (i === into ? o.inflow! : 0));
  }
  const chain = { states, matrix };
  const long = observedLongRun(chain, start, inflow, counts);
  const base = project(matrix, start, inflow, o.horizon);
  const bands = counts ? projectionBands(counts, start, inflow, o.horizon, { samples: o.samples, seed: o.seed, percentiles: [o.band[0], 50, o.band[1]], prior: PRIOR }) : undefined;
  const out: ProjectOutput = {
    states,
    source,
    matrix,
    start: byState(states, start),
    inflow: byState(states, inflow),
    horizon: o.horizon,
    steadyState: long.kind === 'unique' ? byState(states, long.distribution) : null,
    longRun: { kind: long.kind, sentence: long.sentence, unobserved: long.unobserved },
    projection: steps(states, base, bands),
    uncertainty: bands
      ? {
          method: 'each row of P sampled from Dirichlet(counts + prior) over the transitions seen in the data; every sample projected; percentiles per step',
          prior: PRIOR,
          samples: o.samples,
          seed: o.seed,
          percentiles: o.band,
        }
      : null,
  };
  if (o.until) out.firstPassage = passageOutput(states, firstPassage(chain, o.until), o.until);
  if (o.whatIf && o.whatIf.length > 0) {
    const w: WhatIf = whatIf({ states, matrix, inflow, moves: o.moves }, o.whatIf, start, o.horizon);
    out.scenario = { edits: w.scenario.changes, baseline: steps(states, w.baseline), projected: steps(states, w.projected), difference: steps(states, w.difference) };
  }
  if ('tables' in input && o.backtest !== false) {
    try {
      out.backtest = backtest(input.tables, { horizon: o.backtestHorizon ?? 4, seed: o.seed, band: o.band, prior: PRIOR, maxOrigins: o.backtestOrigins });
    } catch (e) {
      if (e instanceof TidemarkError && e.code === 'NOT_ENOUGH_DATA') out.backtest = { skipped: e.message };
      else throw e;
    }
  }
  return out;
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
