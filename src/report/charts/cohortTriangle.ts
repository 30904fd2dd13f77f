/** The cohort triangle as a heat map: share of each acquisition cohort active N periods after its first. */
import type { TopLevelSpec } from 'vega-lite';
import type { CohortsOutput } from '../../explain/cohortReport.js';
import { RAMP } from '../palette.js';
import { type Chart, WIDTH } from './types.js';

/** Ages the chart shows at most (a year of weeks): the full rows are in cohorts.json. */
export const TRIANGLE_AGES = 52;

export function cohortTriangleChart(c: CohortsOutput, grainWord: string, minCell: number): Chart {
  const cells = c.triangle.flatMap((r) => r.cells.filter((x) => x.age > 0 && x.age <= TRIANGLE_AGES).map((x) => ({ cohort: r.cohort, age: x.age, n: x.n, active: x.active, share: x.share, small: x.n < minCell })));
  const spec: TopLevelSpec = {
    $schema: 'https://vega.github.io/schema/vega-lite/v6.json',
    width: WIDTH,
    height: Math.max(160, Math.min(420, c.triangle.length * 13)),
    title: { text: 'Acquisition cohorts', subtitle: `Share of each cohort active N ${grainWord}s after its first active ${grainWord}${c.triangle.some((r) => r.cells.length > TRIANGLE_AGES + 1) ? ` (N up to ${TRIANGLE_AGES})` : ''}` },
    data: { values: cells },
    mark: { type: 'rect' },
    encoding: {
      x: { field: 'age', type: 'ordinal', title: `${grainWord}s since first active`, axis: { labelAngle: 0, labelOverlap: true } },
      y: { field: 'cohort', type: 'ordinal', title: `cohort (first active ${grainWord})`, axis: { labelOverlap: true } },
      color: { field: 'share', type: 'quantitative', scale: { domain: [0, 1], range: RAMP }, title: 'active share', legend: { format: '.0%' } },
      opacity: { condition: { test: 'datum.small', value: 0.35 }, value: 1 },
      tooltip: [{ field: 'cohort' }, { field: 'age' }, { field: 'active', format: ',' }, { field: 'n', title: 'members', format: ',' }, { field: 'share', format: '.1%' }],
    },
  } as unknown as TopLevelSpec;
  const one = c.classic[0];
  const readings = c.shapes.filter((s) => s.reading !== 'too short');
  const falling = readings.filter((s) => s.reading === 'still falling').length;
  const reading = `${one && one.pooled.rate !== null ? `Pooled, ${(Number(one.pooled.rate) * 100).toFixed(0)}% of members are active ${one.from} ${grainWord}${one.from === 1 ? '' : 's'} after their first; ` : ''}${readings.length ? `${falling} of ${readings.length} cohorts with enough history are still falling, the rest flattening or rising.` : 'no cohort has enough history yet for a reading of its curve\'s shape.'}`;
  return {
    id: 'cohort-triangle',
    title: 'Acquisition cohorts',
    reading,
    note: 'Shape readings compare each cohort curve\'s late slope with its early one (the rule is in cohorts.json). A habit that goes with staying is a correlation, not a cause.',
    spec,
    table: { name: 'cohort-triangle', header: ['cohort', 'age', 'members', 'active', 'share'], rows: cells.map((x) => [x.cohort, x.age, x.n, x.active, x.share]) },
  };
}
