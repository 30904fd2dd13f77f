/**
 * `tidemark project`: the audience mix projected with a Markov chain fitted from the flows (or a
 * planner's own matrix), with its long run, bands, what-if scenarios, time to a state and a backtest.
 */
import { readFileSync } from 'node:fs';
import { Option, type Command } from 'commander';
import { TidemarkError, inFile } from '../../errors.js';
import { selectTransitions } from '../../flows/select.js';
import { lifecycleMoves } from '../../lifecycle/moves.js';
import { stateNames, type StateSplit } from '../../lifecycle/states.js';
import { computeProjection, type ProjectionOptions, type ProjectOutput } from '../../markov/run.js';
import { validateModel } from '../../markov/validate.js';
import { addEventOptions, addFormatOptions, addPartialOption, addWaistOption, analysisInput, partialJson, periodFlagHint, resolveRules, type CommonOptions } from '../common.js';
import { asFlags, countNumber, parseBand, seedOption, selectionOption, stateOption, whatIfOption, wholeNumber } from '../options.js';
import { emit, json, pct, textTable, type Format, wrapProse } from '../format.js';
import type { Io } from '../io.js';

export interface ProjectOptions extends Omit<CommonOptions, 'events'> {
  events?: string[];
  matrix?: string;
  fit: string;
  horizon: string;
  inflow?: string;
  until?: string;
  whatIf: string[];
  samples: string;
  seed: string;
  band: string;
  backtest: boolean;
  backtestHorizon: string;
}

/** Longest projection, in periods (the bands cost samples × horizon × states² each). */
export const MAX_HORIZON = 1000;
/** Most sampled chains for the bands. */
export const MAX_SAMPLES = 100_000;

/** Flags of the projection's library keys, for errors that need the fitted chain. */
const PROJECTION_FLAGS = { range: '--fit', scenario: '--what-if', target: '--until', inflow: '--inflow' };

const n0 = (x: number) => (Math.round(x) || 0).toLocaleString('en-US');
const signed = (x: number) => `${Math.round(x) > 0 ? '+' : ''}${n0(x)}`;

export function formatProjection(p: ProjectOutput, format: Format): string {
  if (format === 'json') return json(p);
  if (format === 'csv') {
    const head = ['step', 'state', 'count', 'share', 'count_lo', 'count_hi', 'share_lo', 'share_hi'];
    const rows = p.projection.flatMap((s) => p.states.map((st) => [s.step, st, s.counts[st], s.shares[st], s.bands?.counts[st][0] ?? '', s.bands?.counts[st][1] ?? '', s.bands?.shares[st][0] ?? '', s.bands?.shares[st][1] ?? '']));
    return [head.join(','), ...rows.map((r) => r.join(','))].join('\n') + '\n';
  }
  const out: string[] = [];
  const src = p.source.kind === 'events' ? `fitted on ${p.source.fit.transitions} transitions ${p.source.fit.from} to ${p.source.fit.to}` : `matrix from ${p.source.file}`;
  const inflow = Object.entries(p.inflow).filter(([, v]) => v > 0).map(([s, v]) => `${n0(v)} ${s}`).join(', ') || 'none';
  out.push(`Projection ${p.horizon} periods ahead, ${src}; inflow per period: ${inflow}`);
  if (p.source.kind === 'events' && p.source.emptyRows.length) out.push(`note: no transitions seen out of ${p.source.emptyRows.join(', ')}; kept absorbing`);
  out.push(`Long run: ${p.longRun.sentence}`);
  if (p.uncertainty) out.push(`Bands: ${p.uncertainty.percentiles[0]}th-${p.uncertainty.percentiles[1]}th percentiles of ${p.uncertainty.samples} chains sampled row by row from Dirichlet(counts + ${p.uncertainty.prior}), seed ${p.uncertainty.seed}.`);
  if (p.steadyState) out.push(`Steady-state mix: ${p.states.map((s) => `${s} ${pct(p.steadyState![s])}`).join(', ')}`);
  const H = p.horizon;
  const show = [...new Set([0, 1, Math.min(4, H), Math.min(8, H), H])].filter((k) => k <= H);
  const last = p.projection[H];
  const band = last.bands ? `+${H} ${last.bands.percentiles[0]}-${last.bands.percentiles[1]}%` : undefined;
  const rows = p.states.map((s) => [s, ...show.map((k) => n0(p.projection[k].counts[s])), ...(band ? [`${n0(last.bands!.counts[s][0])}-${n0(last.bands!.counts[s][1])}`] : []), pct(last.shares[s])]);
  rows.push(['total', ...show.map((k) => n0(p.projection[k].total)), ...(band ? [''] : []), '']);
  out.push('', textTable(['state', ...show.map((k) => (k === 0 ? 'now' : `+${k}`)), ...(band ? [band] : []), `share +${H}`], rows).trimEnd());
  if (p.scenario) {
    out.push('', `What-if ${p.scenario.edits.map((e) => `${e.text} (${e.before.toFixed(3)} -> ${e.after.toFixed(3)})`).join('; ')}, at +${H}:`);
    const b = p.scenario.baseline[H], s = p.scenario.projected[H], d = p.scenario.difference[H];
    const r = p.states.map((st) => [st, n0(b.counts[st]), n0(s.counts[st]), signed(d.counts[st]), `${d.shares[st] * 100 >= 0.05 ? '+' : ''}${(Math.abs(d.shares[st] * 100) < 0.05 ? 0 : d.shares[st] * 100).toFixed(1)} pts`]);
    r.push(['total', n0(b.total), n0(s.total), signed(d.total), '']);
    out.push(textTable(['state', 'baseline', 'scenario', 'change', 'share change'], r).trimEnd());
  }
  if (p.firstPassage) {
    const fp = p.firstPassage;
    out.push('', `Expected periods until first ${fp.target}:`);
    out.push(textTable(['from', 'periods'], p.states.filter((s) => s !== fp.target).map((s) => [s, fp.expectedSteps[s] === null ? 'never (see note)' : fp.expectedSteps[s]!.toFixed(1)])).trimEnd());
    for (const u of fp.unreachable) out.push(`note: ${u.state}: ${u.reason}`);
  }
  if (p.backtest) {
    if ('skipped' in p.backtest) out.push('', `Backtest skipped: ${p.backtest.skipped}`);
    else {
      out.push('', `Backtest over ${p.backtest.origins.length} origins: mean absolute error of state shares (points)`);
      out.push(textTable(['ahead', 'origins', 'model', 'no change', 'band coverage'], p.backtest.rows.map((r) => [r.horizon, r.origins, (r.mae * 100).toFixed(2), (r.naiveMae * 100).toFixed(2), pct(r.coverage, 0)])).trimEnd());
      const nominal = (p.projection[0].bands?.percentiles[1] ?? 90) - (p.projection[0].bands?.percentiles[0] ?? 10);
      if (p.backtest.rows.some((r) => r.coverage * 100 < nominal - 20)) {
        out.push(`note: the bands cover far less than ${nominal}% of what happened. They reflect sampling error in the fitted rates only; the flows themselves shifted over time, so read the bands as a floor on the uncertainty.`);
      }
    }
  }
  return wrapProse(`${out.join('\n')}\n`);
}

/** The projection options, every one checked before anything is read (states and moves come later). */
function projectionOptions(o: ProjectOptions): ProjectionOptions & { fit: string } {
  const fit = o.fit ?? 'all';
  selectionOption(fit, '--fit');
  return {
    fit,
    horizon: wholeNumber(o.horizon, '--horizon', 1, MAX_HORIZON),
    until: o.until,
    whatIf: o.whatIf,
    samples: wholeNumber(o.samples, '--samples', 1, MAX_SAMPLES),
    seed: seedOption(o.seed),
    band: parseBand(o.band),
    backtest: o.backtest,
    backtestHorizon: wholeNumber(o.backtestHorizon, '--backtest-horizon', 1, MAX_HORIZON),
    inflow: o.inflow === undefined ? undefined : countNumber(o.inflow, '--inflow'),
  };
}

export async function runProject(o: ProjectOptions, io: Io): Promise<void> {
  const common = projectionOptions(o);
  let result: ProjectOutput;
  if (o.matrix) {
    if (o.events) throw new TidemarkError('USAGE', 'give either --events or --matrix, not both', { key: '--matrix' });
    if (o.fit !== 'all') throw new TidemarkError('USAGE', 'fits a chain on events; a --matrix is used as given', { key: '--fit' });
    let doc: unknown;
    try {
      doc = JSON.parse(readFileSync(o.matrix, 'utf8'));
    } catch (e) {
      const missing = (e as { code?: string }).code === 'ENOENT';
      throw new TidemarkError(missing ? 'FILE_NOT_FOUND' : 'INPUT_INVALID', missing ? 'cannot read the matrix file' : `not valid JSON: ${(e as Error).message}`, { file: o.matrix });
    }
    const model = (() => {
      try {
        return validateModel(doc);
      } catch (e) {
        throw inFile(e, o.matrix as string);
      }
    })();
    // the planner's states are known now: check the options that name them
    if (o.until !== undefined) stateOption(o.until, '--until', model.states);
    whatIfOption(o.whatIf, '--what-if', model.states);
    try {
      result = asFlags(() => computeProjection({ doc, file: o.matrix as string }, common), PROJECTION_FLAGS);
    } catch (e) {
      throw e instanceof TidemarkError && e.code === 'USAGE' ? e : inFile(e, o.matrix);
    }
  } else {
    if (!o.events && !o.waist && !o.store) throw new TidemarkError('USAGE', 'give --events (with --rules), --waist, --store or --matrix', { key: '--events' }, 'See tidemark project --help');
    // options that name states and moves are checked before any event is read: against the rules
    // file with --events, against the waist's manifest with --waist
    const checkStates = (rules: { lapseLimit: number; splits?: StateSplit[] }, states: readonly string[]) => {
      const moves = lifecycleMoves(rules);
      if (o.until !== undefined) stateOption(o.until, '--until', states);
      whatIfOption(o.whatIf, '--what-if', states, moves);
      return moves;
    };
    const early = o.events ? (() => {
      const r = resolveRules(o as CommonOptions);
      return checkStates(r, stateNames(r));
    })() : undefined;
    const input = await analysisInput(o as CommonOptions, io, { partial: 'drop' });
    const t = input.waist.tables;
    const moves = early ?? checkStates(input.waist.manifest.rules, t.states);
    const hint = periodFlagHint(input, { range: common.fit });
    // --fit against the data: N at most the transitions there are, labels that are periods of the data
    if (t.transitions.length > 0) asFlags(() => selectTransitions(t, selectionOption(common.fit, '--fit')), { range: '--fit' }, hint);
    result = { ...asFlags(() => computeProjection({ tables: t }, { ...common, moves }), PROJECTION_FLAGS, hint), ...partialJson(input) };
  }
  emit(formatProjection(result, o.format), o.out, io);
}

export function projectCommand(program: Command, io: Io): void {
  const cmd = program
    .command('project')
    .description('project the state mix with a Markov chain fitted from the flows (or your own matrix): long run, bands, what-ifs, backtest')
    .option('--matrix <file>', 'a planner\'s matrix instead of events: {"states","matrix","start","inflow"} (JSON)')
    .option('--fit <range>', 'transitions to fit on: all, N (the last N) or FROM..TO', 'all')
    .option('--horizon <n>', `periods to project ahead (1 to ${MAX_HORIZON})`, '12')
    .option('--inflow <n>', 'new users per period (default: the mean fresh count over the fitted range)')
    .option('--until <state>', 'expected periods until first reaching this state, from each other state')
    .option('--what-if <edit>', 'scenario edit, repeatable: "lapsing->dormant*0.8", "lapsing->dormant=0.3", "inflow*1.2", "inflow=500"', (v: string, acc: string[]) => [...acc, v], [] as string[])
    .option('--samples <n>', `sampled matrices for the uncertainty bands (1 to ${MAX_SAMPLES.toLocaleString('en-US')})`, '500')
    .option('--seed <n>', 'random seed for the bands and backtest', '1')
    .option('--band <lo,hi>', 'band percentiles', '10,90')
    .addOption(new Option('--no-backtest', 'skip the backtest'))
    .option('--backtest-horizon <n>', 'periods ahead scored in the backtest', '4');
  cmd.option('--events <files...>', 'event log(s): CSV or NDJSON');
  addPartialOption(addEventOptions(addWaistOption(cmd), false));
  addFormatOptions(cmd, 'table').action((opts: ProjectOptions) => runProject(opts, io));
}
