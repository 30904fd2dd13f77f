/**
 * The projected state mix joined to its history on one time axis, with the calibrated bands and a
 * line at "now"; the named scenarios' active users against the baseline; the backtest's error and the
 * coverage of its bands by horizon.
 */
import type { TopLevelSpec } from 'vega-lite';
import type { Backtest } from '../../markov/backtest.js';
import type { ProjectOutput } from '../../markov/run.js';
import { WIDE, type Frame } from '../frame.js';
import { seriesColour, seriesDash, stateColours } from '../palette.js';
import { timeXUtc, valueAxisOrient, type TimeGrain } from '../timeAxis.js';
import { type Chart } from './types.js';

/** Periods of history drawn before the forecast. */
export const HISTORY_PERIODS = 26;
/** The baseline's line: near black, so that it reads as no state and no scenario. */
const BASELINE = '#2B2B2B';

/** The x encoding of a chart over forecast steps: dated periods on the report's time axis, else step numbers. */
function stepX(f: Frame, periods: string[] | undefined, grainWord: string): Record<string, unknown> {
  if (periods) return timeXUtc({ field: 'x', periods, grain: grainWord as TimeGrain, frame: f, title: null });
  return { field: 'x', type: 'quantitative', title: `${grainWord}s from now`, axis: { tickMinStep: 1 } };
}

interface History {
  periods: string[];
  stateCounts: number[][];
}

/** The x value of a forecast step: its period label, or the step number when the calendar is unknown. */
const xOf = (p: ProjectOutput, t: number): string | number => p.projection[t].period ?? t;

export function projectionChart(p: ProjectOutput, grainWord: string, history?: History, colours: string[] = stateColours(p.states)): Chart {
  const dated = p.projection[0].period !== undefined;
  const past = history ? history.periods.map((period, i) => ({ period, counts: history.stateCounts[i] })).slice(-HISTORY_PERIODS - 1, -1) : [];
  const histRows = past.flatMap((h, k) => {
    const total = h.counts.reduce((a, b) => a + b, 0);
    return p.states.map((st, s) => ({ x: dated ? h.period : k - past.length, state: st, part: 'history', share: total > 0 ? h.counts[s] / total : 0, lower: null, upper: null, lower50: null, upper50: null, count: h.counts[s] }));
  });
  const rows = p.projection.flatMap((s) => p.states.map((st) => ({
    step: s.step, x: xOf(p, s.step), state: st, part: s.step === 0 ? 'now' : 'forecast', share: s.shares[st], lower: s.bands?.shares[st][0] ?? s.shares[st], upper: s.bands?.shares[st][1] ?? s.shares[st],
    lower50: s.bands?.inner.shares[st][0] ?? s.shares[st], upper50: s.bands?.inner.shares[st][1] ?? s.shares[st], count: s.counts[st],
  })));
  const band = p.projection[0].bands?.percentiles ?? [10, 90];
  const periods = dated ? [...past.map((h) => h.period), ...p.projection.map((s) => s.period as string)] : undefined;
  const nowX = xOf(p, 0);
  const draw = (f: Frame): TopLevelSpec => ({
    $schema: 'https://vega.github.io/schema/vega-lite/v6.json',
    width: f.width,
    height: f.name === 'wide' ? 280 : 230,
    autosize: { type: 'fit-x', contains: 'padding' },
    data: { values: [...histRows, ...rows] },
    encoding: {
      x: stepX(f, periods, grainWord),
      color: { field: 'state', type: 'nominal', sort: p.states, scale: { domain: p.states, range: colours }, legend: null },
    },
    layer: [
      { transform: [{ filter: "datum.part !== 'history'" }], mark: { type: 'area', opacity: 0.15 }, encoding: { y: { field: 'lower', type: 'quantitative', title: 'share of users', axis: { format: '.0%', orient: valueAxisOrient(f) } }, y2: { field: 'upper' } } },
      { transform: [{ filter: "datum.part !== 'history'" }], mark: { type: 'area', opacity: 0.3 }, encoding: { y: { field: 'lower50', type: 'quantitative' }, y2: { field: 'upper50' } } },
      { transform: [{ filter: "datum.part !== 'forecast'" }], mark: { type: 'line', strokeWidth: 2 }, encoding: { y: { field: 'share', type: 'quantitative' } } },
      { transform: [{ filter: "datum.part !== 'history'" }], mark: { type: 'line', strokeWidth: 2, strokeDash: [5, 3] }, encoding: { y: { field: 'share', type: 'quantitative' } } },
      { data: { values: [{ x: nowX, label: 'now' }] }, mark: { type: 'rule', color: '#555', strokeDash: [2, 2] }, encoding: { x: { field: 'x', type: dated ? 'temporal' : 'quantitative' }, color: { value: '#555' } } },
      { data: { values: [{ x: nowX, label: 'now' }] }, mark: { type: 'text', align: 'left', dx: 4, dy: -4, baseline: 'bottom', color: '#555' }, encoding: { x: { field: 'x', type: dated ? 'temporal' : 'quantitative' }, y: { value: 0 }, text: { field: 'label' }, color: { value: '#555' } } },
    ],
  }) as unknown as TopLevelSpec;
  const end = p.projection[p.horizon];
  const now = p.projection[0];
  const share = (x: typeof end) => (x.active ?? 0) / (x.total || 1);
  const act = end.bands?.active?.outer;
  const reading = `If the fitted flows hold, ${(share(end) * 100).toFixed(1)}% of users are active ${p.horizon} ${grainWord}s ahead${act ? ` (${Math.round(act[0]).toLocaleString('en-US')}–${Math.round(act[1]).toLocaleString('en-US')} active users in the ${band[1] - band[0]}% band)` : ''}, against ${(share(now) * 100).toFixed(1)}% now; the audience grows from ${Math.round(now.total).toLocaleString('en-US')} to ${Math.round(end.total).toLocaleString('en-US')} users with a state.`;
  const offLine = p.uncertainty?.recalibration?.applied ? offLineReading(p, end) : '';
  return {
    id: 'projection',
    title: `State mix: the last ${past.length} ${grainWord}s and ${p.horizon} ${grainWord}s ahead`,
    subtitle: `Solid: what happened; dashed: the projection if the fitted flows hold. Bands: 25th–75th and ${band[0]}th–${band[1]}th percentiles of simulated paths (rates drift and vary as in the fit window, partly together, from where they ended; arrivals vary; binomial noise)${p.uncertainty?.recalibration?.applied ? ', recalibrated by the backtest\'s past errors (each state\'s band moved by its recent bias, each side widened or narrowed)' : ''}`,
    reading: reading + offLine,
    note: 'The bands hold what the fit window says can happen; the backtest below checks how often they held in the past. A change the past never showed (a launch, a promotion) falls outside them.',
    spec: draw(WIDE),
    draw,
    ...(periods ? { timeline: { periods, minStep: 8 } } : {}),
    legend: p.states.map((st, k) => ({ label: st, colour: colours[k] })),
    table: { name: 'projection', header: ['step', 'period', 'state', 'count', 'share', 'share_lower', 'share_upper', 'share_lower50', 'share_upper50'], rows: rows.map((r) => [r.step, dated ? r.x : null, r.state, r.count, r.share, r.lower, r.upper, r.lower50, r.upper50]) },
  };
}

/**
 * When recalibration moved the bands by the backtest's recent bias, the states whose dashed line lies
 * outside their own 25th–75th band at the horizon: the chain has lately run above (or below) what
 * happened for them, and the bands say where the mix fell around such projections. Empty when none.
 */
export function offLineReading(p: ProjectOutput, end: ProjectOutput['projection'][number]): string {
  const inner = end.bands?.inner.shares;
  if (!inner) return '';
  const high = p.states.filter((st) => end.shares[st] > inner[st][1]);
  const low = p.states.filter((st) => end.shares[st] < inner[st][0]);
  if (!high.length && !low.length) return '';
  const list = (xs: string[]) => (xs.length > 1 ? `${xs.slice(0, -1).join(', ')} and ${xs[xs.length - 1]}` : xs[0]);
  const parts = [high.length ? `above what happened for ${list(high)} (their bands sit below the dashed line)` : '', low.length ? `below what happened for ${list(low)} (their bands sit above it)` : ''].filter(Boolean);
  return ` In the backtest the chain has lately run ${parts.join(', and ')}: the bands are moved by that recent bias, so read them, not the line alone, as where the mix is likely to be.`;
}

/** Active users under each named scenario against the baseline, with their outer bands. */
export function scenarioChart(p: ProjectOutput, grainWord: string): Chart | undefined {
  const sc = p.scenarios ?? [];
  if (!sc.length || p.projection[0].active === undefined) return undefined;
  const dated = p.projection[0].period !== undefined;
  const names = ['baseline', ...sc.map((s) => s.name)];
  const rows = [
    ...p.projection.map((s) => ({ x: xOf(p, s.step), scenario: 'baseline', active: s.active ?? 0, lower: s.bands?.active?.outer[0] ?? null, upper: s.bands?.active?.outer[1] ?? null })),
    ...sc.flatMap((s) => s.steps.map((st) => ({ x: xOf(p, st.step), scenario: s.name, active: st.active?.value ?? 0, lower: st.active?.outer?.[0] ?? null, upper: st.active?.outer?.[1] ?? null }))),
  ];
  const band = p.projection[0].bands?.percentiles ?? [10, 90];
  const periods = dated ? p.projection.map((s) => s.period as string) : undefined;
  const colours = [BASELINE, ...sc.map((_, i) => seriesColour(i))];
  const dashes = [[], ...sc.map((_, i) => seriesDash(i))];
  const draw = (f: Frame): TopLevelSpec => ({
    $schema: 'https://vega.github.io/schema/vega-lite/v6.json',
    width: f.width,
    height: f.name === 'wide' ? 240 : 200,
    autosize: { type: 'fit-x', contains: 'padding' },
    data: { values: rows },
    encoding: {
      x: stepX(f, periods, grainWord),
      color: { field: 'scenario', type: 'nominal', sort: names, scale: { domain: names, range: colours }, legend: null },
    },
    layer: [
      { mark: { type: 'area', opacity: 0.1 }, encoding: { y: { field: 'lower', type: 'quantitative', title: 'active users', axis: { format: ',.0f', orient: valueAxisOrient(f) } }, y2: { field: 'upper' } } },
      { mark: { type: 'line', strokeWidth: 2 }, encoding: { y: { field: 'active', type: 'quantitative' }, strokeDash: { field: 'scenario', type: 'nominal', sort: names, scale: { domain: names, range: dashes }, legend: null } } },
    ],
  }) as unknown as TopLevelSpec;
  const H = p.horizon;
  const parts = sc.map((s) => {
    const d = s.steps[H].difference.active;
    const v = d?.value ?? 0;
    const b = d?.outer;
    return `${s.name} ${v >= 0 ? 'adds' : 'loses'} ${Math.abs(Math.round(v)).toLocaleString('en-US')} active users${b ? ` (band ${fmtSigned(b[0])} to ${fmtSigned(b[1])})` : ''}`;
  });
  return {
    id: 'scenarios',
    title: `Scenarios: active users over the next ${p.horizon} ${grainWord}s`,
    subtitle: `Each scenario against the baseline, with its ${band[0]}th–${band[1]}th percentile band (the same simulated paths for all)`,
    spec: draw(WIDE),
    draw,
    legend: names.map((n, i) => ({ label: n, colour: colours[i], dash: dashes[i] })),
    reading: `${H} ${grainWord}s ahead, against the baseline: ${parts.join('; ')}.`,
    note: 'A scenario is an assumption about the flows, not a forecast of what an action will do: test the action before relying on it.',
    table: {
      name: 'scenarios',
      header: ['scenario', 'step', 'period', 'active', 'active_lower', 'active_upper', 'difference', 'difference_lower', 'difference_upper'],
      rows: sc.flatMap((s) => s.steps.map((st) => [s.name, st.step, st.period ?? null, st.active?.value ?? null, st.active?.outer?.[0] ?? null, st.active?.outer?.[1] ?? null, st.difference.active?.value ?? null, st.difference.active?.outer?.[0] ?? null, st.difference.active?.outer?.[1] ?? null])),
    },
  };
}

const fmtSigned = (x: number) => `${Math.round(x) > 0 ? '+' : ''}${Math.round(x).toLocaleString('en-US')}`;

export function backtestChart(b: Backtest, grainWord: string): Chart {
  const rows = b.rows.flatMap((r) => [
    { horizon: r.horizon, method: 'Markov projection', mae: r.mae * 100 },
    { horizon: r.horizon, method: 'no change (mix as at origin)', mae: r.naiveMae * 100 },
    ...(r.seasonalMae === null ? [] : [{ horizon: r.horizon, method: 'seasonal naive', mae: r.seasonalMae * 100 }]),
  ]);
  const methods = [...new Set(rows.map((r) => r.method))];
  const colours = methods.map((_, i) => seriesColour(i));
  const spec: TopLevelSpec = {
    $schema: 'https://vega.github.io/schema/vega-lite/v6.json',
    width: WIDE.width,
    height: 220,
    title: { text: 'Backtest: projection error by horizon', subtitle: `Mean absolute error of state shares over ${b.origins.length} past origins, in percentage points (lower is better)` },
    data: { values: rows },
    mark: { type: 'bar' },
    encoding: {
      x: { field: 'horizon', type: 'ordinal', title: `${grainWord}s ahead`, axis: { labelAngle: 0 } },
      xOffset: { field: 'method' },
      y: { field: 'mae', type: 'quantitative', title: 'mean absolute error (points)' },
      color: { field: 'method', type: 'nominal', sort: methods, scale: { domain: methods, range: colours }, legend: null },
      tooltip: [{ field: 'horizon' }, { field: 'method' }, { field: 'mae', format: '.2f' }],
    },
  } as unknown as TopLevelSpec;
  const last = b.rows[b.rows.length - 1];
  const better = b.rows.filter((r) => r.mae < r.naiveMae).length;
  const reading = `At ${last.horizon} ${grainWord}s ahead the projection missed state shares by ${(last.mae * 100).toFixed(1)} points on average, against ${(last.naiveMae * 100).toFixed(1)} for assuming no change; it beat no-change at ${better} of ${b.rows.length} horizons, and its interval score (${(last.intervalScore.model.outer * 100).toFixed(1)}) was ${last.intervalScore.model.outer < last.intervalScore.noChange.outer ? 'better' : 'worse'} than no-change's (${(last.intervalScore.noChange.outer * 100).toFixed(1)}).`;
  return {
    id: 'backtest',
    title: 'Backtest',
    reading,
    spec,
    legend: methods.map((m, i) => ({ label: m, colour: colours[i] })),
    table: {
      name: 'backtest',
      header: ['horizon', 'origins', 'mae', 'naive_mae', 'seasonal_mae', 'coverage_50', 'coverage_outer', 'interval_score', 'interval_score_no_change', 'interval_score_seasonal', 'model_coverage_50', 'model_coverage_outer', 'model_interval_score'],
      rows: b.rows.map((r) => [r.horizon, r.origins, r.mae, r.naiveMae, r.seasonalMae, r.innerCoverage, r.coverage, r.intervalScore.model.outer, r.intervalScore.noChange.outer, r.intervalScore.seasonalNaive?.outer ?? null, r.modelInnerCoverage, r.modelCoverage, r.modelIntervalScore.outer]),
    },
  };
}

/** How often the 50% and outer bands held the actual mix, by horizon, against their target ranges. */
export function coverageChart(b: Backtest, grainWord: string): Chart {
  const inner = b.bands.inner[1] - b.bands.inner[0];
  const outer = b.bands.outer[1] - b.bands.outer[0];
  const rows = b.rows.flatMap((r) => [
    { horizon: r.horizon, band: `${inner}% band`, coverage: r.innerCoverage },
    { horizon: r.horizon, band: `${outer}% band`, coverage: r.coverage },
  ]);
  const targets = [
    { band: `${inner}% band`, lo: b.target.inner[0], hi: b.target.inner[1] },
    { band: `${outer}% band`, lo: b.target.outer[0], hi: b.target.outer[1] },
  ];
  const bands = targets.map((t) => t.band);
  const spec: TopLevelSpec = {
    $schema: 'https://vega.github.io/schema/vega-lite/v6.json',
    width: WIDE.width,
    height: 200,
    title: { text: 'Backtest: how often the bands held', subtitle: 'Share of past (origin, state) cells whose actual share fell inside the band; shaded: the target range' },
    encoding: { color: { field: 'band', type: 'nominal', sort: bands, scale: { domain: bands, range: [seriesColour(0), seriesColour(1)] }, legend: null } },
    layer: [
      { data: { values: targets }, mark: { type: 'rect', opacity: 0.15 }, encoding: { y: { field: 'lo', type: 'quantitative', scale: { domain: [0, 1] }, axis: { format: '.0%' }, title: 'held the actual share' }, y2: { field: 'hi' } } },
      { data: { values: rows }, mark: { type: 'line', point: true, strokeWidth: 2 }, encoding: { x: { field: 'horizon', type: 'quantitative', title: `${grainWord}s ahead`, axis: { tickMinStep: 1 } }, y: { field: 'coverage', type: 'quantitative' }, tooltip: [{ field: 'horizon' }, { field: 'band' }, { field: 'coverage', format: '.0%' }] } },
    ],
  } as unknown as TopLevelSpec;
  const lo = (k: 'innerCoverage' | 'coverage' | 'modelInnerCoverage' | 'modelCoverage') => Math.min(...b.rows.map((r) => r[k]));
  const hi = (k: 'innerCoverage' | 'coverage' | 'modelInnerCoverage' | 'modelCoverage') => Math.max(...b.rows.map((r) => r[k]));
  const recal = b.recalibration !== null && b.rows.some((r) => r.recalibrated > 0);
  const pc = (x: number) => `${Math.round(x * 100)}%`;
  return {
    id: 'coverage',
    title: 'Band coverage',
    legend: bands.map((label, i) => ({ label, colour: seriesColour(i) })),
    reading: `Over horizons 1 to ${b.rows[b.rows.length - 1].horizon}, the ${inner}% band held ${pc(lo('innerCoverage'))}–${pc(hi('innerCoverage'))} of past shares (target ${pc(b.target.inner[0])}–${pc(b.target.inner[1])}) and the ${outer}% band ${pc(lo('coverage'))}–${pc(hi('coverage'))} (target ${pc(b.target.outer[0])}–${pc(b.target.outer[1])})${recal ? `; the bands were recalibrated at each origin from the errors of earlier origins, and the model's own bands held ${pc(lo('modelInnerCoverage'))}–${pc(hi('modelInnerCoverage'))} and ${pc(lo('modelCoverage'))}–${pc(hi('modelCoverage'))}` : ''}.`,
    spec,
    table: { name: 'coverage', header: ['horizon', 'origins', 'coverage_50', 'coverage_outer', 'model_coverage_50', 'model_coverage_outer'], rows: b.rows.map((r) => [r.horizon, r.origins, r.innerCoverage, r.coverage, r.modelInnerCoverage, r.modelCoverage]) },
  };
}
