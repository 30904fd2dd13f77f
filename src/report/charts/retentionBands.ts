/** Status-split retention over time: one line per prior state, with its Wilson 95% interval as a band. */
import type { TopLevelSpec } from 'vega-lite';
import { wilsonInterval } from '../../stats/wilson.js';
import { plural } from '../../text/plural.js';
import { WIDE, type Frame } from '../frame.js';
import { timeX, valueAxisOrient, type TimeGrain } from '../timeAxis.js';
import { type Chart } from './types.js';

export interface RetentionPoint {
  to: string;
  state: string;
  n: number;
  retained: number;
}

export function retentionBands(points: RetentionPoint[], activeStates: string[], grain: TimeGrain, minCell: number, colours: string[]): Chart {
  const rows = points.filter((p) => p.n > 0).map((p) => {
    const w = wilsonInterval(p.retained, p.n);
    return { ...p, rate: w.estimate, lower: w.lower, upper: w.upper, small: p.n < minCell };
  });
  const periods = [...new Set(points.map((p) => p.to))];
  const draw = (f: Frame): TopLevelSpec => ({
    $schema: 'https://vega.github.io/schema/vega-lite/v6.json',
    width: f.width,
    height: f.name === 'wide' ? 280 : 240,
    autosize: { type: 'fit-x', contains: 'padding' },
    data: { values: rows },
    encoding: {
      x: timeX({ field: 'to', periods, grain, frame: f, title: `${grain} retained into (start date)` }),
      color: { field: 'state', type: 'nominal', sort: activeStates, scale: { domain: activeStates, range: colours }, legend: null },
    },
    layer: [
      { mark: { type: 'area', opacity: 0.2 }, encoding: { y: { field: 'lower', type: 'quantitative', title: `active the next ${grain}`, axis: { format: '.0%', orient: valueAxisOrient(f) }, scale: { zero: false } }, y2: { field: 'upper' } } },
      {
        mark: { type: 'line', strokeWidth: 2, point: { size: f.name === 'wide' ? 22 : 14 } },
        encoding: {
          y: { field: 'rate', type: 'quantitative' },
          opacity: { condition: { test: 'datum.small', value: 0.35 }, value: 1 },
        },
      },
    ],
  }) as unknown as TopLevelSpec;
  const latest = rows.length ? rows[rows.length - 1].to : '';
  const now = rows.filter((r) => r.to === latest).sort((a, b) => b.rate - a.rate);
  const reading = now.length
    ? `Into ${latest}, ${now.map((r) => `${r.state} ${(r.rate * 100).toFixed(0)}% (${(r.lower * 100).toFixed(0)}–${(r.upper * 100).toFixed(0)}%, ${plural(r.n, 'user')})`).join(', ')} stayed active.`
    : 'No retention to show yet.';
  return {
    id: 'retention-by-state',
    title: 'Retention by prior state',
    subtitle: `Share of users in each active state who are active the next ${grain}; bands are Wilson 95% intervals`,
    reading,
    note: rows.some((r) => r.small) ? `Points from fewer than ${plural(minCell, 'user')} are faded.` : undefined,
    spec: draw(WIDE),
    draw,
    timeline: { periods, minStep: 8 },
    legend: activeStates.map((s, k) => ({ label: s, colour: colours[k], dash: [] })),
    table: { name: 'retention-by-state', header: ['period_to', 'state', 'users', 'retained', 'rate', 'lower95', 'upper95', 'small'], rows: rows.map((r) => [r.to, r.state, r.n, r.retained, r.rate, r.lower, r.upper, r.small]) },
  };
}
