/**
 * The flow between states over one transition: two stacked columns (states before, states after)
 * joined by ribbons whose width is the number of users moving. Drawn with Vega-Lite area marks: each
 * ribbon is sampled along x and eased with a smoothstep curve, so it is a filled band between two
 * curves.
 *
 * Two rules keep the moves readable:
 * - **Arrivals enter from the top**, on their own track: the arrival state's block heads the later
 *   column and the earlier column starts below it, so the arrivals' ribbon crosses no other ribbon.
 *   It is coloured as the state users arrive in (arrivals are not a state before).
 * - **The largest resting group is shortened** when, drawn to scale, it would take more than a third
 *   of the height: its ribbon is drawn at half the height of everything else (so a third of the
 *   diagram), crossed by a break mark and labelled with its true count. Every other ribbon is to
 *   scale, and the blocks' labels give true counts.
 */
import type { TopLevelSpec } from 'vega-lite';
import { plural } from '../../text/plural.js';
import { WIDE, type Frame } from '../frame.js';
import { type Chart } from './types.js';

const STEPS = 24;
const GAP = 0.02; // gap between stacked states, as a share of the drawn total
/** Where the arrivals' ribbon starts, on the x scale of the columns (0 and 1). */
const ARRIVAL_X = 0.34;

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

/** The drawn height of the largest resting group: itself, or half of all else when it would take over a third. */
export function shortenedStay(stay: number, rest: number): number {
  return stay > rest / 2 ? rest / 2 : stay;
}

/**
 * Move labels (by their middle `mid`, ascending) apart so that neighbours are at least `sep` apart,
 * keeping them inside 0 … `max`: a forward pass pushes down, a backward pass pulls up from the end.
 */
export function dodge<T extends { mid: number }>(labels: T[], sep: number, max: number): T[] {
  const out = [...labels].sort((a, b) => a.mid - b.mid).map((l) => ({ ...l }));
  for (let k = 1; k < out.length; k++) out[k].mid = Math.max(out[k].mid, out[k - 1].mid + sep);
  if (out.length) out[out.length - 1].mid = Math.min(out[out.length - 1].mid, max - sep / 2);
  for (let k = out.length - 2; k >= 0; k--) out[k].mid = Math.min(out[k].mid, out[k + 1].mid - sep);
  return out;
}

export function flowRibbons(f: FlowInput): Chart {
  const S = f.states.length;
  const a = f.states.indexOf(f.arrival);
  const left = f.counts.map((row) => row.reduce((x, y) => x + y, 0));
  const right = f.states.map((_, j) => f.counts.reduce((x, row) => x + row[j], 0) + (j === a ? f.fresh : 0));
  // the largest resting group, and how tall it is drawn
  const r = f.states.map((_, i) => i).sort((x, y) => f.counts[y][y] - f.counts[x][x])[0];
  const stay = r === undefined ? 0 : f.counts[r][r];
  const all = left.reduce((x, y) => x + y, 0) + f.fresh;
  const drawnStay = shortenedStay(stay, all - stay);
  const cut = stay - drawnStay;
  const shortened = cut > 0;
  const drawn = (i: number, j: number) => (shortened && i === r && j === r ? drawnStay : f.counts[i][j]);
  const leftDrawn = left.map((n, i) => n - (shortened && i === r ? cut : 0));
  const rightDrawn = right.map((n, j) => n - (shortened && j === r ? cut : 0));
  const gap = GAP * Math.max(all - cut, 1);
  // later column: the arrival state first; earlier column: starts below the arrivals
  const rightOrder = [a, ...f.states.map((_, j) => j).filter((j) => j !== a)].filter((j) => j >= 0);
  const stack = (order: number[], sizes: number[], start: number) => {
    const y0 = new Array<number>(S).fill(0);
    let y = start;
    for (const i of order) {
      y0[i] = y;
      y += sizes[i] + (sizes[i] > 0 ? gap : 0);
    }
    return y0;
  };
  const arrivalsOnTop = a >= 0 && f.fresh > 0;
  const leftTop = arrivalsOnTop ? rightDrawn[a] + gap : 0;
  const L0 = stack(f.states.map((_, i) => i), leftDrawn, leftTop);
  const R0 = stack(rightOrder, rightDrawn, 0);
  const lCursor = [...L0];
  // arrivals fill the top of the arrival state's block; moves into it (if any) come below them
  const rCursor = R0.map((y, j) => (j === a ? y + f.fresh : y));
  const ribbons: { link: string; from: string; colour: string; x: number; y: number; y2: number }[] = [];
  const table: Chart['table'] = { name: 'flow-latest', header: ['period_from', 'period_to', 'state_from', 'state_to', 'users'], rows: [] };
  const band = (link: string, colourOf: string, xStart: number, a0: number, b0: number, n: number) => {
    for (let k = 0; k <= STEPS; k++) {
      const x = xStart + ((1 - xStart) * k) / STEPS;
      const t = k / STEPS;
      const e = t * t * (3 - 2 * t);
      const y = a0 + (b0 - a0) * e;
      ribbons.push({ link, from: colourOf, colour: colourOf, x, y, y2: y + n });
    }
  };
  let stayMid: { y: number; y2: number } | undefined;
  for (let i = 0; i < S; i++) {
    for (let j = 0; j < S; j++) {
      const n = drawn(i, j);
      if (f.counts[i][j] <= 0) continue;
      const a0 = lCursor[i], b0 = rCursor[j];
      lCursor[i] += n;
      rCursor[j] += n;
      band(`${f.states[i]}>${f.states[j]}`, f.states[i], 0, a0, b0, n);
      if (shortened && i === r && j === r) stayMid = { y: (a0 + b0) / 2, y2: (a0 + b0) / 2 + n };
      table.rows.push([f.from, f.to, f.states[i], f.states[j], f.counts[i][j]]);
    }
  }
  if (arrivalsOnTop) {
    band(`arriving>${f.arrival}`, f.arrival, ARRIVAL_X, R0[a], R0[a], f.fresh);
    table.rows.push([f.from, f.to, 'arriving', f.arrival, f.fresh]);
  }
  const label = (state: string, n: number) => `${state}\n${n.toLocaleString('en-US')}`;
  const blocks = [
    ...f.states.map((s, i) => ({ side: 0, state: s, y: L0[i], y2: L0[i] + leftDrawn[i], label: label(s, left[i]), n: left[i] })),
    ...f.states.map((s, j) => ({ side: 1, state: s, y: R0[j], y2: R0[j] + rightDrawn[j], label: label(s, right[j]), n: right[j] })),
  ].filter((b) => b.n > 0);
  const maxY = Math.max(...blocks.map((b) => b.y2), 1);
  const yScale = { domain: [maxY, 0], nice: false, zero: false } as const;
  const colour = { field: 'colour', type: 'nominal', scale: { domain: f.states, range: f.colours }, legend: null } as const;
  const draw = (fr: Frame): TopLevelSpec => {
    const font = fr.fontSize;
    const height = fr.name === 'wide' ? 340 : 320;
    const xScale = { domain: [fr.name === 'wide' ? -0.3 : -0.42, fr.name === 'wide' ? 1.3 : 1.42], nice: false, zero: false };
    const x = (field: string) => ({ field, type: 'quantitative', scale: xScale, axis: null });
    const y = (field: string) => ({ field, type: 'quantitative', scale: yScale, axis: null });
    return {
      $schema: 'https://vega.github.io/schema/vega-lite/v6.json',
      width: fr.width,
      height,
      autosize: { type: 'fit-x', contains: 'padding' },
      layer: [
        { data: { values: ribbons }, mark: { type: 'area', opacity: 0.45, interpolate: 'linear' }, encoding: { x: x('x'), y: y('y'), y2: { field: 'y2' }, detail: { field: 'link' }, color: colour } },
        { data: { values: blocks.map((b) => ({ ...b, colour: b.state })) }, mark: { type: 'rect', width: 14 }, encoding: { x: x('side'), y: y('y'), y2: { field: 'y2' }, color: colour } },
        ...[0, 1].map((side) => ({
          data: { values: dodge(blocks.filter((b) => b.side === side).map((b) => ({ ...b, mid: (b.y + b.y2) / 2 })), (2.4 * font * maxY) / height, maxY) },
          mark: { type: 'text', fontSize: font, align: side === 0 ? 'right' : 'left', dx: side === 0 ? -11 : 11, baseline: 'middle', lineBreak: '\n', color: '#1b2733' },
          encoding: { x: x('side'), y: y('mid'), text: { field: 'label' } },
        })),
        ...(arrivalsOnTop ? [
          { data: { values: [{ x: ARRIVAL_X, y: R0[a], y2: R0[a] + f.fresh, colour: f.arrival }] }, mark: { type: 'rect', width: 8 }, encoding: { x: x('x'), y: y('y'), y2: { field: 'y2' }, color: colour } },
          { data: { values: [{ x: ARRIVAL_X, y: R0[a] + f.fresh / 2, text: `arriving\n${f.fresh.toLocaleString('en-US')} new` }] }, mark: { type: 'text', fontSize: font, align: 'right', dx: -8, baseline: 'middle', lineBreak: '\n', color: '#1b2733' }, encoding: { x: x('x'), y: y('y'), text: { field: 'text' } } },
        ] : []),
        ...(stayMid ? [
          // the break mark: two white strokes across the shortened ribbon, and its true count beside them
          { data: { values: [-0.012, 0.012].map((d) => ({ x: 0.49 + d, x2: 0.51 + d, y: stayMid!.y2 + gap * 0.6, y2: stayMid!.y - gap * 0.6 })) }, mark: { type: 'rule', color: 'white', strokeWidth: 4 }, encoding: { x: x('x'), x2: { field: 'x2' }, y: y('y'), y2: { field: 'y2' } } },
          // left of the break, inside the ribbon: the later column's labels sit right of it
          { data: { values: [{ x: 0.46, y: (stayMid.y + stayMid.y2) / 2, text: `${stay.toLocaleString('en-US')} stayed\n(shortened)` }] }, mark: { type: 'text', fontSize: font, align: 'right', baseline: 'middle', lineBreak: '\n', color: '#1b2733' }, encoding: { x: x('x'), y: y('y'), text: { field: 'text' } } },
        ] : []),
      ],
    } as unknown as TopLevelSpec;
  };
  // reading: the biggest move between different states, and the biggest inflow
  let best = { n: 0, from: '', to: '' };
  for (let i = 0; i < S; i++) for (let j = 0; j < S; j++) if (i !== j && f.counts[i][j] > best.n) best = { n: f.counts[i][j], from: f.states[i], to: f.states[j] };
  const stayed = f.states.map((s, i) => ({ s, n: f.counts[i][i] })).sort((x, y) => y.n - x.n)[0];
  const arrived = `${plural(f.fresh, 'user')} arrived`;
  const reading = best.n > 0
    ? `The largest move was ${best.from} → ${best.to} (${plural(best.n, 'user')}, ${((best.n / Math.max(left[f.states.indexOf(best.from)], 1)) * 100).toFixed(0)}% of ${best.from}); ${arrived}${stayed && stayed.n > 0 ? `, and the largest group staying put was ${stayed.s} (${stayed.n.toLocaleString('en-US')})` : ''}.`
    : `No user changed state; ${arrived}.`;
  return {
    id: 'flow-latest',
    title: `Where users went, ${f.from} to ${f.to}`,
    subtitle: `Ribbon width = users moving between states; new users arrive from the top${shortened ? `; the ${f.states[r]} users who stayed ${f.states[r]} are drawn shortened (not to scale), so that the moves stay readable` : ''}`,
    reading,
    spec: draw(WIDE),
    draw,
    legend: f.states.map((s, i) => ({ label: s, colour: f.colours[i] })),
    table,
  };
}
