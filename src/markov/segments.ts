/**
 * `project --by COLUMN`: each segment's mix projected from its own flows (users split by the column's
 * value in their first active period, WaistTables.segmentTransitions), and their sum.
 *
 * A segment is fitted on its own when, over the fit window, at least `minSegment` users left each
 * state it holds at the start; at most {@link MAX_SEGMENTS} segments (the largest) are. The others are
 * pooled into one group projected from their summed flows; when even that group is too small, it uses
 * the rates and variation of all users with its own start and inflow. The sum's bands add the
 * segments' simulated paths one by one (path k of every segment uses the same seed).
 */
import { showValue } from '../errors.js';
import { selectTransitions, type TransitionSelection } from '../flows/select.js';
import type { SegmentFlows, TransitionCounts, WaistTables } from '../flows/types.js';
import { forecastWindow, type Forecast } from './forecast.js';
import { inflowAt } from './inflow.js';
import { projectVarying } from './project.js';
import type { ProjectionOptions } from './run.js';
import { forecastWarnings, stepsWithBands, type ProjectionStep } from './steps.js';
import { simulatePaths, type Simulation } from './simulate.js';

/** Most segments fitted on their own; the rest are pooled. */
export const MAX_SEGMENTS = 12;
/** The name of the group of pooled segments. */
export const POOLED = '(pooled)';

export interface SegmentsOutput {
  by: string;
  /** Users leaving each populated state over the fit window that a segment needs to be fitted alone. */
  minUsers: number;
  /** The groups projected: segments fitted alone, then the pooled group (if any). */
  groups: { segment: string; users: number; members?: string[]; ownRates: boolean; projection: ProjectionStep[] }[];
  /** Segments too small to fit alone, and why. */
  pooled: { segment: string; reason: string }[];
  /** The sum of the groups, with bands from the summed paths. */
  sum: ProjectionStep[];
  warnings: string[];
}

/**
 * Projects each segment and the sum.
 *
 * @throws TidemarkError as {@link selectTransitions} and {@link forecastWindow}.
 * @example projectSegments(tables, tables.segmentTransitions!, { last: 8 }, options).groups.map((g) => g.segment)
 */
export function projectSegments(tables: WaistTables, split: NonNullable<WaistTables['segmentTransitions']>, selection: TransitionSelection, o: ProjectionOptions & { fi: number; activeIdx: number[]; labels?: (string | undefined)[] }): SegmentsOutput {
  const { states, periods } = tables;
  const minUsers = o.minSegment ?? 30;
  const method = o.inflowMethod ?? 'median';
  const at = (flows: SegmentFlows) => {
    const picked = selectTransitions({ periods, transitions: flows.transitions }, selection);
    const p = periods.indexOf(picked[picked.length - 1].to);
    return { picked, start: flows.stateCounts[p].slice() };
  };
  const tooSmall = (picked: TransitionCounts[], start: number[]): string | undefined => {
    for (let i = 0; i < states.length; i++) {
      if (!(start[i] > 0)) continue;
      const left = picked.reduce((a, t) => a + t.counts[i].reduce((x, y) => x + y, 0), 0);
      if (left < minUsers) return `${Number.isInteger(left) ? left : left.toFixed(1)} user${left === 1 ? '' : 's'} left ${states[i]} over the fit window, fewer than ${minUsers}`;
    }
    return undefined;
  };
  const candidates = split.segments.map((s) => ({ flows: s, ...at(s) })).map((c) => ({ ...c, users: c.start.reduce((a, b) => a + b, 0), reason: tooSmall(c.picked, c.start) }));
  const fits = candidates.filter((c) => c.reason === undefined).sort((a, b) => b.users - a.users || (a.flows.segment < b.flows.segment ? -1 : 1));
  const own = fits.slice(0, MAX_SEGMENTS);
  const pooled = [
    ...candidates.filter((c) => c.reason !== undefined).map((c) => ({ segment: c.flows.segment, reason: c.reason as string })),
    ...fits.slice(MAX_SEGMENTS).map((c) => ({ segment: c.flows.segment, reason: `beyond the ${MAX_SEGMENTS} largest segments` })),
  ];
  const groups: { segment: string; users: number; members?: string[]; ownRates: boolean; f: Forecast; start: number[] }[] = own.map((c) => ({
    segment: c.flows.segment, users: c.users, ownRates: true, start: c.start, f: forecastWindow(states, c.picked, c.start, o.fi, o.horizon, method),
  }));
  const warnings: string[] = [];
  if (pooled.length) {
    const members = candidates.filter((c) => pooled.some((p) => p.segment === c.flows.segment));
    const picked = members[0].picked.map((t, k) => ({ ...t, fresh: members.reduce((a, m) => a + m.picked[k].fresh, 0), counts: t.counts.map((row, i) => row.map((_, j) => members.reduce((a, m) => a + m.picked[k].counts[i][j], 0))) }));
    const start = states.map((_, s) => members.reduce((a, m) => a + m.start[s], 0));
    const ownRates = tooSmall(picked, start) === undefined;
    let f = forecastWindow(states, picked, start, o.fi, o.horizon, method);
    if (!ownRates) {
      // too few users even together: all users' rates and variation, with the group's own start and inflow
      const all = forecastWindow(states, selectTransitions(tables, selection), start, o.fi, o.horizon, method);
      const own = f;
      const point = projectVarying(all.matrix, start, (h) => own.model.split.map((x) => x * inflowAt(own.inflow, h)), o.horizon);
      f = { ...all, inflow: own.inflow, inflowVector: own.inflowVector, point, model: { rows: all.variation, inflow: own.inflow, split: own.model.split } };
    }
    groups.push({ segment: POOLED, users: start.reduce((a, b) => a + b, 0), members: members.map((m) => m.flows.segment), ownRates, f, start });
    // a column whose values are nearly unique per person: sentences never name its values
    const names = split.perPerson ? [] : pooled.map((p) => `'${showValue(p.segment, 30)}'`);
    const which = split.perPerson ? `${pooled.length} segment${pooled.length === 1 ? '' : 's'}` : `${names.slice(0, 8).join(', ')}${names.length > 8 ? ` and ${names.length - 8} more` : ''}`;
    warnings.push(`Segments by ${showValue(split.by, 30)}: ${which} had too few users to fit alone and were pooled${ownRates ? '' : '; even together they are too few, so the pooled group uses the rates of all users'}.`);
  }
  // one group's paths at a time (their bands taken, then added into the sum), so memory holds two simulations
  let sum: Simulation | undefined;
  const projections = groups.map((g, k) => {
    const sim = simulatePaths(g.f.model, g.start, o.horizon, { samples: o.samples, seed: o.seed });
    warnings.push(...forecastWarnings(g.f, split.perPerson ? `segment ${k + 1}` : `segment '${showValue(g.segment, 30)}'`).filter((w) => w.startsWith('Bands')));
    if (!sum) sum = { ...sim, counts: [sim.counts[0].slice()] };
    else for (let i = 0; i < sum.counts[0].length; i++) sum.counts[0][i] += sim.counts[0][i];
    return stepsWithBands(states, g.f.point, sim, 0, o.band, o.activeIdx, o.labels);
  });
  const S = states.length;
  const sumPoint = groups.reduce<{ counts: number[][] }>((acc, g) => ({ counts: acc.counts.map((row, t) => row.map((v, s) => v + g.f.point.counts[t][s])) }), { counts: Array.from({ length: o.horizon + 1 }, () => new Array<number>(S).fill(0)) });
  const totals = sumPoint.counts.map((r) => r.reduce((a, b) => a + b, 0));
  return {
    by: split.by,
    minUsers,
    groups: groups.map((g, k) => ({ segment: g.segment, users: g.users, ...(g.members ? { members: g.members } : {}), ownRates: g.ownRates, projection: projections[k] })),
    pooled,
    sum: stepsWithBands(states, { counts: sumPoint.counts, totals, shares: sumPoint.counts.map((r, t) => r.map((v) => (totals[t] > 0 ? v / totals[t] : 0))) }, sum, 0, o.band, o.activeIdx, o.labels),
    warnings,
  };
}
