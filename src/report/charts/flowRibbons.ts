/**
 * The flow between states over one transition: two stacked columns (states before, states after)
 * joined by ribbons whose width is the number of users moving. Drawn with Vega-Lite area marks:
 * each ribbon is sampled along x and eased with a smoothstep curve, so it is a filled band between
 * two curves.
 */
import type { TopLevelSpec } from 'vega-lite';
import { type Chart, WIDTH } from './types.js';

const STEPS = 24;
const GAP = 0.02; // gap between stacked states, as a share of the total

export interface FlowInput {
  states: string[];
  from: string;
  to: string;
  counts: number[][];
  /** Users who arrived in `to`, and the state they arrive in. */
  fresh: number;
  arrival: string;
  /** A colour per state. */
  colours: string[];
}

export function flowRibbons(f: FlowInput): Chart {
  const S = f.states.length;
  const left = f.counts.map((row) => row.reduce((a, b) => a + b, 0));
  const right = f.states.map((_, j) => f.counts.reduce((a, row) => a + row[j], 0) + (f.states[j] === f.arrival ? f.fresh : 0));
  const total = Math.max(left.reduce((a, b) => a + b, 0) + f.fresh, right.reduce((a, b) => a + b, 0));
  const gap = GAP * total;
  // stack positions; a virtual "arriving" block on the left carries the fresh inflow
  const leftBlocks = [...f.states.map((s, i) => ({ state: s, n: left[i] })), { state: 'arriving', n: f.fresh }];
  const place = (blocks: { state: string; n: number }[]) => {
    let y = 0;
    return blocks.map((b) => {
      const y0 = y;
      y += b.n + (b.n > 0 ? gap : 0);
      return { ...b, y0, y1: y0 + b.n };
    });
  };
  const L = place(leftBlocks);
  const R = place(f.states.map((s, j) => ({ state: s, n: right[j] })));
  const lCursor = L.map((b) => b.y0);
  const rCursor = R.map((b) => b.y0);
  const ribbons: { link: string; from: string; x: number; y: number; y2: number; users: number }[] = [];
  const table: Chart['table'] = { name: 'flow-latest', header: ['period_from', 'period_to', 'state_from', 'state_to', 'users'], rows: [] };
  const addLink = (li: number, j: number, n: number, fromLabel: string) => {
    if (n <= 0) return;
    const a0 = lCursor[li], b0 = rCursor[j];
    lCursor[li] += n;
    rCursor[j] += n;
    for (let k = 0; k <= STEPS; k++) {
      const x = k / STEPS;
      const e = x * x * (3 - 2 * x);
      const y = a0 + (b0 - a0) * e;
      ribbons.push({ link: `${fromLabel}>${f.states[j]}`, from: fromLabel, x, y, y2: y + n, users: n });
    }
    table.rows.push([f.from, f.to, fromLabel, f.states[j], n]);
  };
  for (let i = 0; i < S; i++) for (let j = 0; j < S; j++) addLink(i, j, f.counts[i][j], f.states[i]);
  addLink(S, f.states.indexOf(f.arrival), f.fresh, 'arriving');
  const blocks = [
    ...L.filter((b) => b.n > 0).map((b) => ({ side: 0, state: b.state, y: b.y0, y2: b.y1, label: `${b.state} ${b.n.toLocaleString('en-US')}` })),
    ...R.filter((b) => b.n > 0).map((b) => ({ side: 1, state: b.state, y: b.y0, y2: b.y1, label: `${b.state} ${b.n.toLocaleString('en-US')}` })),
  ];
  const colourStates = [...f.states, 'arriving'];
  const colours = [...f.colours, '#B9C3CE'];
  const maxY = Math.max(...blocks.map((b) => b.y2), 1);
  const yScale = { domain: [maxY, 0], nice: false } as const;
  const spec: TopLevelSpec = {
    $schema: 'https://vega.github.io/schema/vega-lite/v6.json',
    width: WIDTH,
    height: 320,
    title: { text: `Where users went, ${f.from} to ${f.to}`, subtitle: 'Ribbon width = users moving between states; the grey block on the left is new arrivals' },
    layer: [
      {
        data: { values: ribbons },
        mark: { type: 'area', opacity: 0.45, interpolate: 'linear' },
        encoding: {
          x: { field: 'x', type: 'quantitative', scale: { domain: [-0.3, 1.3] }, axis: null },
          y: { field: 'y', type: 'quantitative', scale: yScale, axis: null },
          y2: { field: 'y2' },
          detail: { field: 'link' },
          color: { field: 'from', type: 'nominal', scale: { domain: colourStates, range: colours }, legend: null },
          tooltip: [{ field: 'link', title: 'move' }, { field: 'users', title: 'users', format: ',' }],
        },
      },
      {
        data: { values: blocks },
        mark: { type: 'rect', width: 14, xOffset: 0 },
        encoding: {
          x: { field: 'side', type: 'quantitative' },
          y: { field: 'y', type: 'quantitative', scale: yScale },
          y2: { field: 'y2' },
          color: { field: 'state', type: 'nominal', scale: { domain: colourStates, range: colours }, legend: null },
        },
      },
      ...[0, 1].map((side) => ({
        data: { values: blocks.filter((b) => b.side === side).map((b) => ({ ...b, mid: (b.y + b.y2) / 2 })) },
        mark: { type: 'text', fontSize: 11, align: side === 0 ? 'right' : 'left', dx: side === 0 ? -12 : 12 },
        encoding: {
          x: { field: 'side', type: 'quantitative' },
          y: { field: 'mid', type: 'quantitative', scale: yScale },
          text: { field: 'label' },
        },
      })),
    ],
  } as unknown as TopLevelSpec;
  // reading: the biggest move between different states, and the biggest inflow
  let best = { n: 0, from: '', to: '' };
  for (let i = 0; i < S; i++) for (let j = 0; j < S; j++) if (i !== j && f.counts[i][j] > best.n) best = { n: f.counts[i][j], from: f.states[i], to: f.states[j] };
  const stayed = f.states.map((s, i) => ({ s, n: f.counts[i][i] })).sort((a, b) => b.n - a.n)[0];
  const reading = best.n > 0
    ? `The largest move was ${best.from} → ${best.to} (${best.n.toLocaleString('en-US')} users, ${((best.n / Math.max(left[f.states.indexOf(best.from)], 1)) * 100).toFixed(0)}% of ${best.from}); ${f.fresh.toLocaleString('en-US')} users arrived${stayed.n > 0 ? `, and the largest group staying put was ${stayed.s} (${stayed.n.toLocaleString('en-US')})` : ''}.`
    : `No user changed state; ${f.fresh.toLocaleString('en-US')} users arrived.`;
  return { id: 'flow-latest', title: `Flows ${f.from} → ${f.to}`, reading, spec, table };
}
