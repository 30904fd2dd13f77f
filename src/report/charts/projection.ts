/** The projected state mix with its uncertainty bands, and the backtest error by horizon. */
import type { TopLevelSpec } from 'vega-lite';
import type { Backtest } from '../../markov/index.js';
import type { ProjectOutput } from '../../markov/run.js';
import { GAIN, LOSS } from '../palette.js';
import { type Chart, WIDTH } from './types.js';

export function projectionChart(p: ProjectOutput, grainWord: string, activeStates: readonly string[], colours: string[]): Chart {
  const rows = p.projection.flatMap((s) => p.states.map((st) => ({
    step: s.step, state: st, share: s.shares[st], lower: s.bands?.shares[st][0] ?? s.shares[st], upper: s.bands?.shares[st][1] ?? s.shares[st], count: s.counts[st],
  })));
  const band = p.projection[0].bands?.percentiles ?? [10, 90];
  const spec: TopLevelSpec = {
    $schema: 'https://vega.github.io/schema/vega-lite/v6.json',
    width: WIDTH,
    height: 260,
    title: { text: `Projected state mix, ${p.horizon} ${grainWord}s ahead`, subtitle: `Markov chain fitted on the flows; bands: ${band[0]}th–${band[1]}th percentile of ${'sampled'} chains` },
    data: { values: rows },
    encoding: {
      x: { field: 'step', type: 'quantitative', title: `${grainWord}s ahead`, axis: { tickMinStep: 1 } },
      color: { field: 'state', type: 'nominal', sort: p.states, scale: { domain: p.states, range: colours }, title: 'state', legend: { symbolOpacity: 1 } },
    },
    layer: [
      { mark: { type: 'area', opacity: 0.25 }, encoding: { y: { field: 'lower', type: 'quantitative', title: 'share of users', axis: { format: '.0%' } }, y2: { field: 'upper' } } },
      { mark: { type: 'line', strokeWidth: 2 }, encoding: { y: { field: 'share', type: 'quantitative' }, tooltip: [{ field: 'step' }, { field: 'state' }, { field: 'share', format: '.1%' }, { field: 'lower', format: '.1%' }, { field: 'upper', format: '.1%' }, { field: 'count', format: ',.0f' }] } },
    ],
  } as unknown as TopLevelSpec;
  const end = p.projection[p.horizon];
  const now = p.projection[0];
  const active = p.states.filter((s) => activeStates.includes(s));
  const share = (x: typeof end) => active.reduce((a, s) => a + x.shares[s], 0);
  const lo = end.bands ? active.reduce((a, s) => a + end.bands!.shares[s][0], 0) : share(end);
  const hi = end.bands ? active.reduce((a, s) => a + end.bands!.shares[s][1], 0) : share(end);
  const reading = `If the fitted flows hold, ${(share(end) * 100).toFixed(1)}% of users are active ${p.horizon} ${grainWord}s ahead (about ${(lo * 100).toFixed(1)}–${(hi * 100).toFixed(1)}% summing the state bands), against ${(share(now) * 100).toFixed(1)}% now; the audience grows from ${Math.round(now.total).toLocaleString('en-US')} to ${Math.round(end.total).toLocaleString('en-US')} users with a state.`;
  return {
    id: 'projection',
    title: 'Projected state mix',
    reading,
    note: 'A projection assumes the fitted flows stay as they were; the backtest below shows how well that held in the past.',
    spec,
    table: { name: 'projection', header: ['step', 'state', 'count', 'share', 'share_lower', 'share_upper'], rows: rows.map((r) => [r.step, r.state, r.count, r.share, r.lower, r.upper]) },
  };
}

export function backtestChart(b: Backtest, grainWord: string): Chart {
  const rows = b.rows.flatMap((r) => [
    { horizon: r.horizon, method: 'Markov projection', mae: r.mae * 100 },
    { horizon: r.horizon, method: 'no change (mix as at origin)', mae: r.naiveMae * 100 },
  ]);
  const spec: TopLevelSpec = {
    $schema: 'https://vega.github.io/schema/vega-lite/v6.json',
    width: WIDTH,
    height: 220,
    title: { text: 'Backtest: projection error by horizon', subtitle: `Mean absolute error of state shares over ${b.origins.length} past origins, in percentage points (lower is better)` },
    data: { values: rows },
    mark: { type: 'bar' },
    encoding: {
      x: { field: 'horizon', type: 'ordinal', title: `${grainWord}s ahead`, axis: { labelAngle: 0 } },
      xOffset: { field: 'method' },
      y: { field: 'mae', type: 'quantitative', title: 'mean absolute error (points)' },
      color: { field: 'method', type: 'nominal', scale: { range: [GAIN, LOSS] }, title: null, legend: { labelLimit: 320 } },
      tooltip: [{ field: 'horizon' }, { field: 'method' }, { field: 'mae', format: '.2f' }],
    },
  } as unknown as TopLevelSpec;
  const last = b.rows[b.rows.length - 1];
  const better = b.rows.filter((r) => r.mae < r.naiveMae).length;
  const reading = `At ${last.horizon} ${grainWord}s ahead the projection missed state shares by ${(last.mae * 100).toFixed(1)} points on average, against ${(last.naiveMae * 100).toFixed(1)} for assuming no change; it beat no-change at ${better} of ${b.rows.length} horizons, and its bands held the actual share ${(last.coverage * 100).toFixed(0)}% of the time.`;
  return {
    id: 'backtest',
    title: 'Backtest',
    reading,
    spec,
    table: { name: 'backtest', header: ['horizon', 'origins', 'mae', 'naive_mae', 'band_coverage'], rows: b.rows.map((r) => [r.horizon, r.origins, r.mae, r.naiveMae, r.coverage]) },
  };
}
