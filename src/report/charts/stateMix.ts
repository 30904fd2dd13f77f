/** The state mix over time: users in each state per period, stacked. */
import type { TopLevelSpec } from 'vega-lite';
import { WIDE, type Frame } from '../frame.js';
import { timeX, valueAxisOrient, type TimeGrain } from '../timeAxis.js';
import { plural } from '../../text/plural.js';
import { type Chart } from './types.js';

export interface StateMixInput {
  states: string[];
  periods: string[];
  stateCounts: number[][];
  grain: TimeGrain;
  activeStates: readonly string[];
  colours: string[];
}

export function stateMix(i: StateMixInput): Chart {
  const { states, periods, stateCounts, grain, activeStates, colours } = i;
  const rows = periods.flatMap((p, t) => states.map((s, k) => ({ period: p, state: s, order: k, users: stateCounts[t][k] })));
  const draw = (f: Frame): TopLevelSpec => ({
    $schema: 'https://vega.github.io/schema/vega-lite/v6.json',
    width: f.width,
    height: f.name === 'wide' ? 280 : 220,
    autosize: { type: 'fit-x', contains: 'padding' },
    data: { values: rows },
    mark: { type: 'area', line: false },
    encoding: {
      x: timeX({ field: 'period', periods, grain, frame: f, title: `${grain} starting` }),
      y: { field: 'users', type: 'quantitative', stack: 'zero', title: 'users', axis: { orient: valueAxisOrient(f), format: ',' } },
      color: { field: 'state', type: 'nominal', sort: states, scale: { domain: states, range: colours }, legend: null },
      order: { field: 'order', type: 'quantitative' },
    },
  }) as unknown as TopLevelSpec;
  const last = stateCounts[stateCounts.length - 1];
  const first = stateCounts[0];
  const total = last.reduce((a, b) => a + b, 0);
  const big = states.map((s, k) => ({ s, n: last[k] })).sort((a, b) => b.n - a.n)[0];
  const activeNow = states.reduce((a, s, k) => a + (activeStates.includes(s) ? last[k] : 0), 0);
  const activeThen = states.reduce((a, s, k) => a + (activeStates.includes(s) ? first[k] : 0), 0);
  const reading = periods.length === 1
    ? `In ${periods[0]}, the only ${grain} of data, ${plural(total, 'user')} ${total === 1 ? 'has' : 'have'} a state, all ${big.s}.`
    : `In ${periods[periods.length - 1]} ${plural(total, 'user')} ${total === 1 ? 'has' : 'have'} a state; the largest group is ${big.s} (${((big.n / Math.max(total, 1)) * 100).toFixed(0)}%), and ${activeNow.toLocaleString('en-US')} ${activeNow === 1 ? 'is' : 'are'} active, against ${activeThen.toLocaleString('en-US')} in ${periods[0]}.`;
  return {
    id: 'state-mix',
    title: 'State mix over time',
    subtitle: `Users in each lifecycle state, ${grain} by ${grain}`,
    reading,
    spec: draw(WIDE),
    draw,
    timeline: { periods, minStep: 4 },
    legend: states.map((s, k) => ({ label: s, colour: colours[k] })),
    table: { name: 'state-mix', header: ['period', 'state', 'users'], rows: rows.map((r) => [r.period, r.state, r.users]) },
  };
}
