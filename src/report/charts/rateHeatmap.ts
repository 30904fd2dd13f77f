/** Heat map of transition rates (rows: state before; columns: state after), pooled over recent transitions. */
import type { TopLevelSpec } from 'vega-lite';
import { RAMP } from '../palette.js';
import { type Chart } from './types.js';

export interface HeatmapInput {
  states: string[];
  from: string;
  to: string;
  transitions: number;
  counts: number[][];
  minCell: number;
}

export function rateHeatmap(h: HeatmapInput): Chart {
  const cells: { from: string; to: string; users: number; n: number; rate: number | null; label: string; small: boolean }[] = [];
  h.states.forEach((from, i) => {
    const n = h.counts[i].reduce((a, b) => a + b, 0);
    h.states.forEach((to, j) => {
      const rate = n === 0 ? null : h.counts[i][j] / n;
      cells.push({ from, to, users: h.counts[i][j], n, rate, label: rate === null ? '–' : `${(rate * 100).toFixed(0)}%`, small: n < h.minCell });
    });
  });
  const spec: TopLevelSpec = {
    $schema: 'https://vega.github.io/schema/vega-lite/v6.json',
    width: 360,
    height: 260,
    title: { text: 'Transition rates', subtitle: `Share of each row's users moving to each state, pooled over ${h.transitions} transitions (${h.from} to ${h.to})` },
    data: { values: cells },
    encoding: {
      x: { field: 'to', type: 'nominal', sort: h.states, title: 'state after (next period)', axis: { orient: 'top', labelAngle: 0 } },
      y: { field: 'from', type: 'nominal', sort: h.states, title: 'state before' },
    },
    layer: [
      {
        mark: { type: 'rect', stroke: 'white', strokeWidth: 2 },
        encoding: {
          color: { field: 'rate', type: 'quantitative', scale: { domain: [0, 1], range: RAMP }, title: 'share of row', legend: { format: '.0%' } },
          opacity: { condition: { test: 'datum.small', value: 0.35 }, value: 1 },
          tooltip: [{ field: 'from' }, { field: 'to' }, { field: 'users', format: ',' }, { field: 'n', title: 'row users', format: ',' }, { field: 'rate', format: '.1%' }],
        },
      },
      {
        mark: { type: 'text', fontSize: 12 },
        encoding: {
          text: { field: 'label' },
          color: { condition: { test: 'datum.rate > 0.55', value: 'white' }, value: '#1b2733' },
        },
      },
    ],
  } as unknown as TopLevelSpec;
  const off = cells.filter((c) => c.from !== c.to && c.rate !== null).sort((a, b) => (b.rate ?? 0) - (a.rate ?? 0))[0];
  const stay = cells.filter((c) => c.from === c.to && (c.rate ?? 0) > 0).sort((a, b) => (b.rate ?? 0) - (a.rate ?? 0))[0];
  const small = cells.some((c) => c.small && c.n > 0);
  const parts = [
    stay ? `The stickiest state is ${stay.from} (${stay.label} stay)` : 'No user stayed in the same state',
    off ? `the strongest move to another state is ${off.from} → ${off.to} (${off.label})` : 'no user changed state',
  ];
  const reading = off || stay ? `${parts.join('; ')}.` : 'Too few transitions to read rates.';
  return {
    id: 'transition-rates',
    title: 'Transition rates',
    reading,
    note: small ? `Rows with fewer than ${h.minCell} users are faded: their rates are unreliable.` : undefined,
    spec,
    table: { name: 'transition-rates', header: ['state_from', 'state_to', 'users', 'row_users', 'rate'], rows: cells.map((c) => [c.from, c.to, c.users, c.n, c.rate]) },
  };
}
