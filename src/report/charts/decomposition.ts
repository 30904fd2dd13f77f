/** Mix-versus-rate decomposition bars: each prior state's rate effect and mix effect, in points. */
import type { TopLevelSpec } from 'vega-lite';
import type { ExplainOutput } from '../../explain/run.js';
import { WIDE, type Frame } from '../frame.js';
import { SERIES } from '../palette.js';
import { type Chart } from './types.js';

/** The two parts, and their colours: series colours, never state colours (the bars are not states). */
const PARTS = ['rate effect', 'mix effect'];
const COLOURS = [SERIES[0], SERIES[1]];

export function decompositionChart(e: ExplainOutput, id: string, label: string): Chart {
  const rows = e.byState.flatMap((g) => [
    { state: g.state, part: PARTS[0], points: (g.rateEffect ?? 0) * 100 },
    { state: g.state, part: PARTS[1], points: (g.mixEffect ?? 0) * 100 },
  ]);
  rows.push({ state: 'all states', part: PARTS[0], points: (e.rateEffect ?? 0) * 100 }, { state: 'all states', part: PARTS[1], points: (e.mixEffect ?? 0) * 100 });
  const order = [...e.byState.map((g) => g.state), 'all states'];
  const draw = (f: Frame): TopLevelSpec => ({
    $schema: 'https://vega.github.io/schema/vega-lite/v6.json',
    width: f.width,
    height: order.length * (f.name === 'wide' ? 40 : 34),
    autosize: { type: 'fit-x', contains: 'padding' },
    data: { values: rows },
    layer: [
      {
        mark: { type: 'bar' },
        encoding: {
          y: { field: 'state', type: 'nominal', sort: order, title: null },
          yOffset: { field: 'part', sort: PARTS },
          x: { field: 'points', type: 'quantitative', title: 'contribution to the change (percentage points)' },
          color: { field: 'part', type: 'nominal', scale: { domain: PARTS, range: COLOURS }, legend: null },
        },
      },
      { data: { values: [{ x: 0 }] }, mark: { type: 'rule', color: '#5b6875' }, encoding: { x: { field: 'x', type: 'quantitative' } } },
    ],
  }) as unknown as TopLevelSpec;
  return {
    id,
    title: `Why retention moved: ${label}`,
    subtitle: `Retention into ${e.compare} against ${e.base}: a change of ${((e.overall.change ?? 0) * 100).toFixed(1).replace('-', '−')} points = rate effect (each state's own retention) + mix effect (the shift between states), by Kitagawa's decomposition`,
    reading: e.sentence,
    note: e.simpson ? "Overall retention moved against every state's own retention (Simpson's paradox): the shift in mix drives it." : undefined,
    spec: draw(WIDE),
    draw,
    legend: PARTS.map((p, i) => ({ label: p, colour: COLOURS[i] })),
    table: { name: id, header: ['base', 'compare', 'state', 'n_base', 'n_compare', 'weight_base', 'weight_compare', 'rate_base', 'rate_compare', 'rate_effect', 'mix_effect'], rows: e.byState.map((g) => [e.base, e.compare, g.state, g.nBase, g.nCompare, g.weightBase, g.weightCompare, g.rateBase, g.rateCompare, g.rateEffect, g.mixEffect]) },
  };
}
