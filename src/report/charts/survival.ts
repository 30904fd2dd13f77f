/** Kaplan–Meier curves of the time to first dormant, one per block of cohorts, as step lines. */
import type { TopLevelSpec } from 'vega-lite';
import type { SurvivalOutput } from '../../survival/run.js';
import { type Chart, WIDTH } from './types.js';

const LINES = ['#1D4F91', '#C4622D', '#5AA9E6', '#E9B44C', '#6B6B6B', '#7D9B76'];

export function survivalChart(s: SurvivalOutput, grainWord: string): Chart {
  const rows = s.groups.flatMap((g) => g.points.map((p) => ({ group: g.group, t: p.t, survival: p.survival, lower: p.lower, upper: p.upper, atRisk: p.atRisk })));
  const groups = s.groups.map((g) => g.group);
  const spec: TopLevelSpec = {
    $schema: 'https://vega.github.io/schema/vega-lite/v6.json',
    width: WIDTH,
    height: 240,
    title: { text: 'Time to first dormant', subtitle: `Kaplan–Meier: share of members not yet dormant, by cohorts starting in the ${grainWord} shown; censored at the end of the data` },
    data: { values: rows },
    encoding: {
      x: { field: 't', type: 'quantitative', title: `${grainWord}s since first active` },
      color: { field: 'group', type: 'nominal', sort: groups, scale: { domain: groups, range: LINES }, title: 'cohorts from', legend: { symbolOpacity: 1 } },
    },
    layer: [
      { mark: { type: 'area', opacity: 0.12, interpolate: 'step-after' }, encoding: { y: { field: 'lower', type: 'quantitative', title: 'not yet dormant', axis: { format: '.0%' }, scale: { domain: [0, 1] } }, y2: { field: 'upper' } } },
      { mark: { type: 'line', interpolate: 'step-after', strokeWidth: 2 }, encoding: { y: { field: 'survival', type: 'quantitative' }, tooltip: [{ field: 'group' }, { field: 't' }, { field: 'survival', format: '.1%' }, { field: 'atRisk', format: ',' }] } },
    ],
  } as unknown as TopLevelSpec;
  const medians = s.groups.map((g) => g.median).filter((m): m is number => m !== null);
  const lr = s.logRank;
  const span = medians.length === 0 ? 'more than the observed' : Math.min(...medians) === Math.max(...medians) ? `${medians[0]}` : `${Math.min(...medians)}–${Math.max(...medians)}`;
  const reading = `Half of members first go dormant within ${span} ${grainWord}s${lr ? `; the log-rank test across cohort blocks gives chi-square ${lr.chiSquare.toFixed(1)} on ${lr.df} df (p ${lr.pValue < 0.001 ? '< 0.001' : lr.pValue.toFixed(3)})` : ''}.`;
  return {
    id: 'survival',
    title: 'Time to first dormant',
    reading,
    spec,
    table: { name: 'survival', header: ['group', 't', 'survival', 'lower95', 'upper95', 'at_risk'], rows: rows.map((r) => [r.group, r.t, r.survival, r.lower, r.upper, r.atRisk]) },
  };
}
