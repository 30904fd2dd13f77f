/** Mix-versus-rate decomposition bars: each prior state's rate effect and mix effect, in points. */
import type { TopLevelSpec } from 'vega-lite';
import type { ExplainOutput } from '../../explain/run.js';
import { GAIN, LOSS } from '../palette.js';
import { type Chart, WIDTH } from './types.js';

export function decompositionChart(e: ExplainOutput, id: string, label: string): Chart {
  const rows = e.byState.flatMap((g) => [
    { state: g.state, part: 'rate effect', points: (g.rateEffect ?? 0) * 100 },
    { state: g.state, part: 'mix effect', points: (g.mixEffect ?? 0) * 100 },
  ]);
  rows.push({ state: 'total', part: 'rate effect', points: (e.rateEffect ?? 0) * 100 }, { state: 'total', part: 'mix effect', points: (e.mixEffect ?? 0) * 100 });
  const order = [...e.byState.map((g) => g.state), 'total'];
  const spec: TopLevelSpec = {
    $schema: 'https://vega.github.io/schema/vega-lite/v6.json',
    width: WIDTH,
    height: 200,
    title: { text: `Why retention moved: ${label}`, subtitle: `Retention into ${e.compare} against ${e.base}: change ${((e.overall.change ?? 0) * 100).toFixed(1)} points = rate effect + mix effect (Kitagawa)` },
    data: { values: rows },
    mark: { type: 'bar' },
    encoding: {
      y: { field: 'state', type: 'nominal', sort: order, title: 'prior state' },
      yOffset: { field: 'part' },
      x: { field: 'points', type: 'quantitative', title: 'contribution to the change (percentage points)' },
      color: { field: 'part', type: 'nominal', scale: { domain: ['rate effect', 'mix effect'], range: [GAIN, LOSS] }, title: null },
      tooltip: [{ field: 'state' }, { field: 'part' }, { field: 'points', format: '+.2f' }],
    },
  } as unknown as TopLevelSpec;
  return {
    id,
    title: `Why retention moved: ${label}`,
    reading: e.sentence,
    note: e.simpson ? "Overall retention moved against every state's own retention (Simpson's paradox): the shift in mix drives it." : undefined,
    spec,
    table: { name: id, header: ['base', 'compare', 'state', 'n_base', 'n_compare', 'weight_base', 'weight_compare', 'rate_base', 'rate_compare', 'rate_effect', 'mix_effect'], rows: e.byState.map((g) => [e.base, e.compare, g.state, g.nBase, g.nCompare, g.weightBase, g.weightCompare, g.rateBase, g.rateCompare, g.rateEffect, g.mixEffect]) },
  };
}
