/** Heat map of transition rates (rows: state before; columns: state after), pooled over recent transitions. */
import type { TopLevelSpec } from 'vega-lite';
import { plural } from '../../text/plural.js';
import { WIDE, type Frame } from '../frame.js';
import { RAMP, RAMP_INK_SWITCH } from '../palette.js';
import { type Chart } from './types.js';

export interface HeatmapInput {
  states: string[];
  from: string;
  to: string;
  transitions: number;
  counts: number[][];
  minCell: number;
  grain: string;
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
  const draw = (f: Frame): TopLevelSpec => ({
    $schema: 'https://vega.github.io/schema/vega-lite/v6.json',
    width: f.width,
    height: h.states.length * (f.name === 'wide' ? 52 : 44),
    autosize: { type: 'fit-x', contains: 'padding' },
    data: { values: cells },
    encoding: {
      x: { field: 'to', type: 'nominal', sort: h.states, title: `state in the next ${h.grain}`, axis: { orient: 'top', labelAngle: 0, labelLimit: 90 } },
      y: { field: 'from', type: 'nominal', sort: h.states, title: 'state before' },
    },
    layer: [
      {
        mark: { type: 'rect', stroke: 'white', strokeWidth: 2 },
        encoding: {
          color: { field: 'rate', type: 'quantitative', scale: { domain: [0, 1], range: RAMP }, title: 'share of row', legend: { format: '.0%', orient: 'bottom', direction: 'horizontal', gradientLength: Math.min(240, f.width - 120) } },
          opacity: { condition: { test: 'datum.small', value: 0.35 }, value: 1 },
        },
      },
      {
        mark: { type: 'text', fontSize: f.fontSize + 1 },
        encoding: {
          text: { field: 'label' },
          color: { condition: { test: `datum.rate > ${RAMP_INK_SWITCH}`, value: 'white' }, value: '#1b2733' },
        },
      },
    ],
  }) as unknown as TopLevelSpec;
  const off = cells.filter((c) => c.from !== c.to && c.rate !== null).sort((a, b) => (b.rate ?? 0) - (a.rate ?? 0))[0];
  const stay = cells.filter((c) => c.from === c.to && (c.rate ?? 0) > 0).sort((a, b) => (b.rate ?? 0) - (a.rate ?? 0))[0];
  const small = cells.some((c) => c.small && c.n > 0);
  const parts = [
    stay ? `The stickiest state is ${stay.from} (${stay.label} stay)` : 'No user stayed in the same state',
    off && (off.rate ?? 0) > 0 ? `the strongest move to another state is ${off.from} → ${off.to} (${off.label})` : 'no user changed state',
  ];
  const reading = off || stay ? `${parts.join('; ')}.` : 'Too few transitions to read rates.';
  return {
    id: 'transition-rates',
    title: 'Transition rates',
    subtitle: `Share of each row's users moving to each state, pooled over ${plural(h.transitions, 'transition')} (${h.from} to ${h.to})`,
    reading,
    note: small ? `Rows with fewer than ${plural(h.minCell, 'user')} are faded: their rates are unreliable.` : undefined,
    spec: draw(WIDE),
    draw,
    maxWidth: 120 + h.states.length * 110,
    table: { name: 'transition-rates', header: ['state_from', 'state_to', 'users', 'row_users', 'rate'], rows: cells.map((c) => [c.from, c.to, c.users, c.n, c.rate]) },
  };
}
