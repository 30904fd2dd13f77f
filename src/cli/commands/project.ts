/**
 * `tidemark project`: the audience mix projected with a Markov chain fitted from the flows (or a
 * planner's own matrix), with its long run, bands, what-if scenarios, time to a state and a backtest.
 */
import { readFileSync } from 'node:fs';
import { Option, type Command } from 'commander';
import { TidemarkError, inFile, showValue, suggestion } from '../../errors.js';
import { selectTransitions } from '../../flows/select.js';
import { lifecycleMoves } from '../../lifecycle/moves.js';
import { stateNames, type StateSplit } from '../../lifecycle/states.js';
import type { Weekday } from '../../rules/schema.js';
import type { Backtest } from '../../markov/backtest.js';
import { INFLOW_METHODS, type InflowMethod } from '../../markov/inflow.js';
import { computeProjection, DEFAULT_FIT, type ProjectionOptions, type ProjectionStep, type ProjectOutput } from '../../markov/run.js';
import { validateModel } from '../../markov/validate.js';
import { addEventOptions, addFormatOptions, addPartialOption, addWaistOption, analysisInput, partialJson, periodFlagHint, resolveRules, type CommonOptions } from '../common.js';
import { asFlags, countNumber, parseBand, scenarioOption, seedOption, selectionOption, stateOption, whatIfOption, wholeNumber } from '../options.js';
import { emit, json, pct, textTable, type Format, wrapProse } from '../format.js';
import { toCsv } from '../../output/csv.js';
import type { Io } from '../io.js';

export interface ProjectOptions extends Omit<CommonOptions, 'events'> {
  events?: string[];
  matrix?: string;
  fit?: string;
  horizon: string;
  inflow?: string;
  inflowMethod: string;
  until?: string;
  whatIf: string[];
  scenario: string[];
  by?: string;
  samples: string;
  seed: string;
  band: string;
  backtest: boolean;
  backtestHorizon: string;
  season?: string;
}

/** Longest projection, in periods (the bands cost samples × horizon × states² each). */
export const MAX_HORIZON = 1000;
/** Most sampled paths for the bands. */
export const MAX_SAMPLES = 100_000;

/** Flags of the projection's library keys, for errors that need the fitted chain. */
const PROJECTION_FLAGS = { range: '--fit', scenario: '--what-if', scenarios: '--scenario', target: '--until', inflow: '--inflow', samples: '--samples' };

/** A count for a table: whole numbers with separators; a small fraction keeps two decimals, so a share-sized count never prints as 0. */
export function countText(x: number): string {
  if (!Number.isFinite(x)) return '–';
  if (Math.abs(x) < 0.005) return '0';
  if (Math.abs(x) >= 9.995 || Number.isInteger(x)) return (Math.round(x) || 0).toLocaleString('en-US');
  return x.toFixed(2);
}
const n0 = countText;
const signed = (x: number) => `${x > 0 && n0(x) !== '0' ? '+' : ''}${n0(x)}`;
const range = (r: [number, number] | null | undefined, f: (x: number) => string = n0) => (r ? `${f(r[0])} to ${f(r[1])}` : '');

export function formatProjection(p: ProjectOutput, format: Format): string {
  if (format === 'json') return json(p);
  if (format === 'csv') {
    const head = ['step', 'period', 'state', 'count', 'share', 'count_lo', 'count_hi', 'share_lo', 'share_hi', 'count_lo50', 'count_hi50', 'share_lo50', 'share_hi50'];
    const rows = p.projection.flatMap((s) => p.states.map((st) => [s.step, s.period ?? '', st, s.counts[st], s.shares[st], s.bands?.counts[st][0] ?? '', s.bands?.counts[st][1] ?? '', s.bands?.shares[st][0] ?? '', s.bands?.shares[st][1] ?? '', s.bands?.inner.counts[st][0] ?? '', s.bands?.inner.counts[st][1] ?? '', s.bands?.inner.shares[st][0] ?? '', s.bands?.inner.shares[st][1] ?? '']));
    return toCsv(head, rows);
  }
  const out: string[] = [];
  const H = p.horizon;
  const src = p.source.kind === 'events' ? `fitted on ${p.source.fit.transitions} transitions ${p.source.fit.from} to ${p.source.fit.to}` : `matrix from ${p.source.file}${p.source.audience !== undefined ? ` (start: shares of ${n0(p.source.audience)} users)` : ''}`;
  const inflow = Object.entries(p.inflow).filter(([, v]) => v > 0).map(([s, v]) => `${n0(v)} ${s}`).join(', ') || 'none';
  const how = p.inflowMethod ? (p.inflowMethod.method === 'given' ? ' (given)' : ` (${INFLOW_WORDS[p.inflowMethod.method]} of ${p.inflowMethod.periods} periods${p.inflowMethod.slope ? `, ${signed(p.inflowMethod.slope)} a period` : ''})`) : '';
  out.push(`Projection ${H} periods ahead, ${src}; inflow per period: ${inflow}${how}`);
  for (const w of p.warnings) out.push(`warning: ${w}`);
  if (p.source.kind === 'events' && p.source.emptyRows.length) out.push(`note: no transitions seen out of ${p.source.emptyRows.join(', ')}; kept absorbing`);
  const startTotal = Object.values(p.start).reduce((a, b) => a + b, 0);
  if (p.source.kind === 'matrix' && p.source.audience === undefined && Math.abs(startTotal - 1) < 1e-6 && Object.values(p.start).some((v) => v > 0 && v < 1)) {
    out.push('note: the start sums to 1; if these are shares, add "audience": N (users) to the document to project counts');
  }
  out.push(`Long run: ${p.longRun.sentence}`);
  if (p.uncertainty) {
    const u = p.uncertainty;
    out.push(`Bands: ${u.inner[0]}th-${u.inner[1]}th (50%) and ${u.percentiles[0]}th-${u.percentiles[1]}th percentiles of ${n0(u.samples)} simulated paths, seed ${u.seed}: the rates vary as they did over the fit window (from the level at its end, a drifting level plus period-to-period noise, ${pct(u.shared)} of that movement shared by every state, as in the window), arrivals vary, and a finite audience adds binomial noise. The bands start from where the rates ended in the window, the projection from their average over it, so after a change the two can part. Recalibration: ${u.recalibration.applied ? `each state's band moved by the median of its recent backtest errors, and each side of a band scaled so that it would have held its share of the latest ${u.recalibration.scoreOrigins} backtest origins (${u.recalibration.horizons.filter((x) => x.outer !== null).map((x) => `+${x.horizon} x${x.inner![0].toFixed(2)}-${x.inner![1].toFixed(2)}/x${x.outer![0].toFixed(2)}-${x.outer![1].toFixed(2)}`).join(', ')}; 50%/outer band, lower-upper side)` : u.recalibration.note}. Sources: ${u.sources}.`);
  } else out.push('Bands: none (a planner\'s matrix carries no record of how its rates vary).');
  if (p.steadyState) out.push(`Steady-state mix: ${p.states.map((s) => `${s} ${pct(p.steadyState![s])}`).join(', ')}`);
  const show = [...new Set([0, 1, Math.min(4, H), Math.min(8, H), H])].filter((k) => k <= H);
  const last = p.projection[H];
  const b = last.bands;
  const head = ['state', ...show.map((k) => (k === 0 ? 'now' : `+${k}`)), ...(b ? [`+${H} ${b.inner.percentiles[0]}-${b.inner.percentiles[1]}%`, `+${H} ${b.percentiles[0]}-${b.percentiles[1]}%`] : []), `share +${H}`];
  const rows = p.states.map((s) => [s, ...show.map((k) => n0(p.projection[k].counts[s])), ...(b ? [range(b.inner.counts[s]), range(b.counts[s])] : []), pct(last.shares[s])]);
  if (last.active !== undefined) rows.push(['active', ...show.map((k) => n0(p.projection[k].active ?? 0)), ...(b?.active ? [range(b.active.inner), range(b.active.outer)] : b ? ['', ''] : []), pct(last.active / (last.total || 1))]);
  rows.push(['total', ...show.map((k) => n0(p.projection[k].total)), ...(b ? ['', ''] : []), '']);
  out.push('', textTable(head, rows).trimEnd());
  if (p.scenarios?.length) out.push('', ...scenarioLines(p));
  if (p.scenario) {
    out.push('', `What-if ${p.scenario.edits.map((e) => `${e.text} (${fmtEdit(e.before)} -> ${fmtEdit(e.after)})`).join('; ')}, at +${H}:`);
    const bs = p.scenario.baseline[H], sc = p.scenario.projected[H], d = p.scenario.difference[H];
    const r = p.states.map((st) => [st, n0(bs.counts[st]), n0(sc.counts[st]), signed(d.counts[st]), `${d.shares[st] * 100 >= 0.05 ? '+' : ''}${(Math.abs(d.shares[st] * 100) < 0.05 ? 0 : d.shares[st] * 100).toFixed(1)} pts`]);
    r.push(['total', n0(bs.total), n0(sc.total), signed(d.total), '']);
    out.push(textTable(['state', 'baseline', 'scenario', 'change', 'share change'], r).trimEnd());
  }
  if (p.segments) out.push('', ...segmentLines(p));
  if (p.firstPassage) {
    const fp = p.firstPassage;
    out.push('', `Expected periods until first ${fp.target}:`);
    out.push(textTable(['from', 'periods'], p.states.filter((s) => s !== fp.target).map((s) => [s, fp.expectedSteps[s] === null ? 'never (see note)' : fp.expectedSteps[s]!.toFixed(1)])).trimEnd());
    for (const u of fp.unreachable) out.push(`note: ${u.state}: ${u.reason}`);
  }
  if (p.backtest) out.push('', ...backtestLines(p.backtest));
  return wrapProse(`${out.join('\n')}\n`);
}

const INFLOW_WORDS = { median: 'median', mean: 'mean', trimmed: '20% trimmed mean', trend: 'Theil-Sen trend' } as const;
const fmtEdit = (x: number) => (Number.isInteger(x) ? n0(x) : x.toFixed(3));

function scenarioLines(p: ProjectOutput): string[] {
  const H = p.horizon;
  const sc = p.scenarios ?? [];
  const base = p.projection[H];
  const outer = base.bands ? `${base.bands.percentiles[0]}-${base.bands.percentiles[1]}%` : '';
  const out = [`Scenarios at +${H}, side by side with the baseline${outer ? ` (ranges: ${outer} bands; a change's band comes from the same simulated paths)` : ''}:`];
  for (const s of sc) out.push(`- ${s.name}: ${s.edits.map((e) => `${e.text} (${fmtEdit(e.before)} -> ${fmtEdit(e.after)})`).join('; ')}`);
  const head = ['state', 'baseline', ...sc.flatMap((s) => [s.name, `change`, ...(base.bands ? ['change band'] : [])])];
  const row = (label: string, baseV: number, cells: (s: (typeof sc)[number]) => { v: number; d: number; band: [number, number] | null }) =>
    [label, n0(baseV), ...sc.flatMap((s) => { const c = cells(s); return [n0(c.v), signed(c.d), ...(base.bands ? [range(c.band, signed)] : [])]; })];
  const rows = p.states.map((st) => row(st, base.counts[st], (s) => ({ v: s.atHorizon.counts[st].value, d: s.atHorizon.difference[st].value, band: s.atHorizon.difference[st].outer })));
  if (base.active !== undefined) rows.push(row('active', base.active, (s) => ({ v: s.steps[H].active?.value ?? 0, d: s.steps[H].difference.active?.value ?? 0, band: s.steps[H].difference.active?.outer ?? null })));
  rows.push(row('total', base.total, (s) => ({ v: s.steps[H].total.value, d: s.steps[H].difference.total.value, band: s.steps[H].difference.total.outer })));
  out.push(textTable(head, rows).trimEnd());
  out.push(`Mix at +${H}: baseline ${p.states.map((st) => `${st} ${pct(base.shares[st])}`).join(', ')}`);
  for (const s of sc) out.push(`  ${s.name}: ${p.states.map((st) => `${st} ${pct(s.atHorizon.shares[st].value)}${s.atHorizon.shares[st].outer ? ` (${range(s.atHorizon.shares[st].outer, (x) => pct(x))})` : ''}`).join(', ')}`);
  return out;
}

function segmentLines(p: ProjectOutput): string[] {
  const g = p.segments!;
  const H = p.horizon;
  const out = [`By ${showValue(g.by, 40)} (each user's value in their first active period), each group from its own flows, at +${H}:`];
  const line = (name: string, steps: ProjectionStep[]) => {
    const e = steps[H], s0 = steps[0];
    const act = (x: ProjectionStep) => (x.active !== undefined ? pct(x.active / (x.total || 1)) : '');
    return [name, n0(s0.total), n0(e.total), e.bands?.active ? range(e.bands.active.outer) : '', act(s0), act(e)];
  };
  const rows = g.groups.map((x) => line(x.segment === '(pooled)' ? `(pooled: ${x.members?.length ?? 0})` : showValue(x.segment, 30), x.projection));
  rows.push(line('sum', g.sum));
  rows.push(line('all users, one chain', p.projection));
  const outer = p.projection[H].bands?.percentiles;
  out.push(textTable(['group', 'users now', `+${H}`, outer ? `active +${H} ${outer[0]}-${outer[1]}%` : '', 'active now', `active +${H}`], rows).trimEnd());
  if (g.pooled.length) out.push(`Pooled (fewer than ${g.minUsers} users leaving a state over the fit window, or beyond the largest): ${g.pooled.map((x) => `${showValue(x.segment, 30)} (${x.reason})`).slice(0, 12).join('; ')}${g.pooled.length > 12 ? `; and ${g.pooled.length - 12} more` : ''}`);
  return out;
}

function backtestLines(bt: NonNullable<ProjectOutput['backtest']>): string[] {
  if ('skipped' in bt) return [`Backtest skipped: ${bt.skipped}`];
  const pts = (x: number | null | undefined) => (x === null || x === undefined ? '–' : (x * 100).toFixed(2));
  const [ilo, ihi] = bt.bands.inner, [olo, ohi] = bt.bands.outer;
  const out = [`Backtest over ${bt.origins.length} origins${bt.window ? `, each fitted on the ${bt.window} transitions before it` : ''}: errors of state shares in points; interval scores of the ${olo}-${ohi}% band (Gneiting & Raftery 2007; lower is better)`];
  out.push(textTable(['ahead', 'origins', 'MAE', 'no change', 'seasonal', `${ihi - ilo}% band held`, `${ohi - olo}% band held`, 'score', 'no change', 'seasonal'],
    bt.rows.map((r) => [r.horizon, r.origins, pts(r.mae), pts(r.naiveMae), pts(r.seasonalMae), pct(r.innerCoverage, 0), pct(r.coverage, 0), pts(r.intervalScore.model.outer), pts(r.intervalScore.noChange.outer), pts(r.intervalScore.seasonalNaive?.outer)])).trimEnd());
  const [ti0, ti1] = bt.target.inner, [to0, to1] = bt.target.outer;
  out.push(`Target: the ${ihi - ilo}% band holds ${pct(ti0, 0)}-${pct(ti1, 0)} and the ${ohi - olo}% band ${pct(to0, 0)}-${pct(to1, 0)} of what happened, at every horizon.`);
  if (bt.seasonalNote) out.push(`note: no seasonal-naive baseline: ${bt.seasonalNote}.`);
  if (bt.recalibration && bt.rows.some((r) => r.recalibrated > 0)) {
    const span = (f: (r: Backtest['rows'][number]) => number) => `${pct(Math.min(...bt.rows.map(f)), 0)}-${pct(Math.max(...bt.rows.map(f)), 0)}`;
    out.push(`note: each origin's bands were recalibrated from the errors of the latest ${bt.recalibration.scoreOrigins} earlier origins whose outcome was known: each state's band moved by the median of its errors, each side scaled by its own quantile of them (the model's widths where fewer than ${bt.recalibration.minScores} scores); the model's own bands held ${span((r) => r.modelInnerCoverage)} (${ihi - ilo}%) and ${span((r) => r.modelCoverage)} (${ohi - olo}%).`);
  }
  const below = bt.rows.filter((r) => r.coverage < to0 - 1e-9 || r.innerCoverage < ti0 - 1e-9).map((r) => `+${r.horizon}`);
  const above = bt.rows.filter((r) => r.coverage > to1 + 1e-9 || r.innerCoverage > ti1 + 1e-9).map((r) => `+${r.horizon}`);
  const breaks = bt.missed.slice(0, 6).map((m) => m.period).join(', ');
  if (below.length) {
    out.push(`note: the bands held too little at ${below.join(', ')}.${breaks ? ` The misses cluster on ${breaks}: the flows changed there beyond their past variation (a structural break such as a launch, a promotion or a change of rules), which no band built from the past foresees.` : ' No period stands out: the flows vary more than the fit window showed.'}`);
  }
  if (above.length) out.push(`note: the bands were wider than needed at ${above.join(', ')} (they held more than the target).`);
  if (!below.length && breaks) out.push(`note: the bands missed most of what happened in ${breaks} (a structural break there).`);
  return out;
}

/** The projection options, every one checked before anything is read (states and moves come later). */
function projectionOptions(o: ProjectOptions): ProjectionOptions {
  if (o.fit !== undefined) selectionOption(o.fit, '--fit');
  return {
    fit: o.fit,
    horizon: wholeNumber(o.horizon, '--horizon', 1, MAX_HORIZON),
    until: o.until,
    whatIf: o.whatIf,
    scenarios: o.scenario,
    samples: wholeNumber(o.samples, '--samples', 1, MAX_SAMPLES),
    seed: seedOption(o.seed),
    band: parseBand(o.band),
    backtest: o.backtest,
    backtestHorizon: wholeNumber(o.backtestHorizon, '--backtest-horizon', 1, MAX_HORIZON),
    inflow: o.inflow === undefined ? undefined : countNumber(o.inflow, '--inflow'),
    inflowMethod: inflowMethodOption(o.inflowMethod),
    season: o.season === undefined ? undefined : wholeNumber(o.season, '--season', 1, 1000),
  };
}

/** One of the inflow methods, with a "did you mean". */
function inflowMethodOption(text: string): InflowMethod {
  if ((INFLOW_METHODS as readonly string[]).includes(text)) return text as InflowMethod;
  throw new TidemarkError('USAGE', `'${showValue(text)}' is not an inflow method`, { key: '--inflow-method' }, suggestion(text, INFLOW_METHODS) ?? `Methods: ${INFLOW_METHODS.join(', ')}`);
}

export async function runProject(o: ProjectOptions, io: Io): Promise<void> {
  const common = projectionOptions(o);
  let result: ProjectOutput;
  if (o.matrix) {
    if (o.events) throw new TidemarkError('USAGE', 'give either --events or --matrix, not both', { key: '--matrix' });
    if (o.fit !== undefined) throw new TidemarkError('USAGE', 'fits a chain on events; a --matrix is used as given', { key: '--fit' });
    if (o.by !== undefined) throw new TidemarkError('USAGE', 'splits the users of an event log; a --matrix has no users to split', { key: '--by' });
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
    scenarioOption(o.scenario, '--scenario', model.states, common.horizon);
    try {
      result = asFlags(() => computeProjection({ doc, file: o.matrix as string }, common), PROJECTION_FLAGS);
    } catch (e) {
      throw e instanceof TidemarkError && e.code === 'USAGE' ? e : inFile(e, o.matrix);
    }
  } else {
    if (!o.events && !o.db && !o.waist && !o.store) throw new TidemarkError('USAGE', 'give --events (with --rules), --waist, --store or --matrix', { key: '--events' }, 'See tidemark project --help');
    // options that name states and moves are checked before any event is read: against the rules
    // file with --events, against the waist's manifest with --waist
    const checkStates = (rules: { lapseLimit: number; splits?: StateSplit[] }, states: readonly string[]) => {
      const moves = lifecycleMoves(rules);
      if (o.until !== undefined) stateOption(o.until, '--until', states);
      whatIfOption(o.whatIf, '--what-if', states, moves);
      scenarioOption(o.scenario, '--scenario', states, common.horizon, moves);
      return moves;
    };
    const early = o.events || o.db ? (() => {
      const r = resolveRules(o as CommonOptions);
      return checkStates(r, stateNames(r));
    })() : undefined;
    const input = await analysisInput(o as CommonOptions, io, { partial: 'drop', by: o.by });
    const t = input.waist.tables;
    const mr = input.waist.manifest.rules;
    const moves = early ?? checkStates(mr, t.states);
    const hint = periodFlagHint(input, { range: common.fit });
    // --fit against the data: N at most the transitions there are, labels that are periods of the data
    if (t.transitions.length > 0 && common.fit !== undefined) asFlags(() => selectTransitions(t, selectionOption(common.fit as string, '--fit')), { range: '--fit' }, hint);
    const scheme = { grain: mr.grain, weekStart: mr.weekStart as Weekday };
    result = { ...asFlags(() => computeProjection({ tables: t }, { ...common, moves, scheme, minSegment: mr.minCell }), { ...input.flags, ...PROJECTION_FLAGS }, hint), ...partialJson(input) };
  }
  emit(formatProjection(result, o.format), o.out, io);
}

export function projectCommand(program: Command, io: Io): void {
  const cmd = program
    .command('project')
    .description('project the state mix with a Markov chain fitted from the flows (or your own matrix): long run, bands, what-ifs, backtest')
    .option('--matrix <file>', 'a planner\'s matrix instead of events: {"states","matrix","start","inflow"} (JSON)')
    .option('--fit <range>', `transitions to fit on: all, N (the last N) or FROM..TO (default: the last ${DEFAULT_FIT}, or all when fewer)`)
    .option('--horizon <n>', `periods to project ahead (1 to ${MAX_HORIZON})`, '12')
    .option('--inflow <n>', 'new users per period (default: estimated from the fit window by --inflow-method)')
    .option('--inflow-method <method>', `how new users per period are estimated from the fit window: ${INFLOW_METHODS.join(', ')} (the median is robust to one-off spikes)`, 'median')
    .option('--until <state>', 'expected periods until first reaching this state, from each other state')
    .option('--scenario <name=edits>', 'a named scenario compared with the baseline, with bands; repeatable: keep="lapsing->dormant*0.8; fresh->engaged=0.6", boost="inflow*1.2", launch="+3000 fresh at +4"', (v: string, acc: string[]) => [...acc, v], [] as string[])
    .option('--what-if <edit>', 'quick what-if, repeatable; all edits form one unnamed scenario without bands: "lapsing->dormant*0.8", "lapsing->dormant=0.3", "inflow*1.2", "inflow=500"', (v: string, acc: string[]) => [...acc, v], [] as string[])
    .option('--by <column>', 'also project each group of users by this column (their value in their first active period) from its own flows, and the sum')
    .option('--samples <n>', `simulated paths for the bands (1 to ${MAX_SAMPLES.toLocaleString('en-US')})`, '500')
    .option('--seed <n>', 'random seed for the bands and backtest', '1')
    .option('--band <lo,hi>', 'outer band percentiles (the inner band is 25,75)', '10,90')
    .addOption(new Option('--no-backtest', 'skip the backtest'))
    .option('--backtest-horizon <n>', 'periods ahead scored in the backtest', '8')
    .option('--season <n>', 'periods in a season for the seasonal-naive baseline (default: 7 days, 52 weeks, 12 months)');
  cmd.option('--events <files...>', 'event log(s): CSV or NDJSON');
  addPartialOption(addEventOptions(addWaistOption(cmd), false));
  addFormatOptions(cmd, 'table').action((opts: ProjectOptions) => runProject(opts, io));
}
