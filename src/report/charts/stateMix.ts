/** The state mix over time: users in each state per period, stacked. */
import type { TopLevelSpec } from 'vega-lite';
import { type Chart, WIDTH } from './types.js';

export function stateMix(states: string[], periods: string[], stateCounts: number[][], grainWord: string, activeStates: readonly string[], colours: string[]): Chart {
  const rows = periods.flatMap((p, t) => states.map((s, i) => ({ period: p, state: s, order: i, users: stateCounts[t][i] })));
  const spec: TopLevelSpec = {
    $schema: 'https://vega.github.io/schema/vega-lite/v6.json',
    width: WIDTH,
    height: 260,
    title: { text: 'State mix over time', subtitle: `Users in each lifecycle state, ${grainWord} by ${grainWord}` },
    data: { values: rows },
    mark: { type: 'area', line: false },
    encoding: {
      x: { field: 'period', type: 'temporal', title: `period (start date of the ${grainWord})`, axis: { format: '%d %b', labelAngle: 0, tickCount: 8 } },
      y: { field: 'users', type: 'quantitative', stack: 'zero', title: 'users' },
      color: { field: 'state', type: 'nominal', sort: states, scale: { domain: states, range: colours }, title: 'state' },
      order: { field: 'order', type: 'quantitative' },
      tooltip: [{ field: 'period' }, { field: 'state' }, { field: 'users', format: ',' }],
    },
  } as unknown as TopLevelSpec;
  const last = stateCounts[stateCounts.length - 1];
  const first = stateCounts[0];
  const total = last.reduce((a, b) => a + b, 0);
  const big = states.map((s, i) => ({ s, n: last[i] })).sort((a, b) => b.n - a.n)[0];
  const activeNow = states.reduce((a, s, i) => a + (activeStates.includes(s) ? last[i] : 0), 0);
  const activeThen = states.reduce((a, s, i) => a + (activeStates.includes(s) ? first[i] : 0), 0);
  const reading = `In the last period ${total.toLocaleString('en-US')} users have a state; the largest group is ${big.s} (${((big.n / Math.max(total, 1)) * 100).toFixed(0)}%), and ${activeNow.toLocaleString('en-US')} are active, against ${activeThen.toLocaleString('en-US')} in the first period.`;
  return {
    id: 'state-mix',
    title: 'State mix over time',
    reading,
    spec,
    table: { name: 'state-mix', header: ['period', 'state', 'users'], rows: rows.map((r) => [r.period, r.state, r.users]) },
  };
}
