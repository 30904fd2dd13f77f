/** Status-split retention over time: one line per prior state, with its Wilson 95% interval as a band. */
import type { TopLevelSpec } from 'vega-lite';
import { wilsonInterval } from '../../stats/wilson.js';
import { type Chart, WIDTH } from './types.js';

export interface RetentionPoint {
  to: string;
  state: string;
  n: number;
  retained: number;
}

export function retentionBands(points: RetentionPoint[], activeStates: string[], grainWord: string, minCell: number, colours: string[]): Chart {
  const rows = points.filter((p) => p.n > 0).map((p) => {
    const w = wilsonInterval(p.retained, p.n);
    return { ...p, rate: w.estimate, lower: w.lower, upper: w.upper, small: p.n < minCell };
  });
  const spec: TopLevelSpec = {
    $schema: 'https://vega.github.io/schema/vega-lite/v6.json',
    width: WIDTH,
    height: 260,
    title: { text: 'Retention by prior state', subtitle: `Share of users in each active state who are active the next ${grainWord}; bands are Wilson 95% intervals` },
    data: { values: rows },
    encoding: {
      x: { field: 'to', type: 'temporal', title: `period retained into (start date)`, axis: { format: '%d %b', labelAngle: 0, tickCount: 8 } },
      color: { field: 'state', type: 'nominal', sort: activeStates, scale: { domain: activeStates, range: colours }, title: 'prior state', legend: { symbolOpacity: 1 } },
    },
    layer: [
      { mark: { type: 'area', opacity: 0.22 }, encoding: { y: { field: 'lower', type: 'quantitative', title: 'retained next period', axis: { format: '.0%' }, scale: { zero: false } }, y2: { field: 'upper' } } },
      {
        mark: { type: 'line', strokeWidth: 2, point: { size: 18 } },
        encoding: {
          y: { field: 'rate', type: 'quantitative' },
          opacity: { condition: { test: 'datum.small', value: 0.35 }, value: 1 },
          tooltip: [{ field: 'to', title: 'into' }, { field: 'state' }, { field: 'rate', format: '.1%' }, { field: 'lower', format: '.1%' }, { field: 'upper', format: '.1%' }, { field: 'n', format: ',' }],
        },
      },
    ],
  } as unknown as TopLevelSpec;
  const latest = rows.length ? rows[rows.length - 1].to : '';
  const now = rows.filter((r) => r.to === latest).sort((a, b) => b.rate - a.rate);
  const reading = now.length
    ? `Into ${latest}, ${now.map((r) => `${r.state} ${(r.rate * 100).toFixed(0)}% (${(r.lower * 100).toFixed(0)}–${(r.upper * 100).toFixed(0)}%)`).join(', ')} stayed active.`
    : 'No retention to show yet.';
  return {
    id: 'retention-by-state',
    title: 'Retention by prior state',
    reading,
    note: rows.some((r) => r.small) ? `Points from fewer than ${minCell} users are faded.` : undefined,
    spec,
    table: { name: 'retention-by-state', header: ['period_to', 'state', 'users', 'retained', 'rate', 'lower95', 'upper95', 'small'], rows: rows.map((r) => [r.to, r.state, r.n, r.retained, r.rate, r.lower, r.upper, r.small]) },
  };
}
