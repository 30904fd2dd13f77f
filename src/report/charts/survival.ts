/** Kaplan–Meier curves of the time to first reaching the exit state, one per block of cohorts, as step lines. */
import type { TopLevelSpec } from 'vega-lite';
import type { SurvivalOutput } from '../../survival/run.js';
import { noun, plural } from '../../text/plural.js';
import { WIDE, type Frame } from '../frame.js';
import { seriesColour, seriesDash } from '../palette.js';
import { type Chart } from './types.js';

/**
 * The curves in series colours (never state colours: a cohort block is not a state), each with its own
 * dash so that curves running close together stay apart; the 95% bands only for one or two curves,
 * where they do not pile up (all of them are in survival.csv).
 */
export function survivalChart(s: SurvivalOutput, grain: string, exitState: string): Chart {
  const rows = s.groups.flatMap((g) => g.points.map((p) => ({ group: g.group, t: p.t, survival: p.survival, lower: p.lower, upper: p.upper, atRisk: p.atRisk })));
  const groups = s.groups.map((g) => g.group);
  const colours = groups.map((_, i) => seriesColour(i));
  const dashes = groups.map((_, i) => seriesDash(i));
  const bands = groups.length <= 2;
  const draw = (f: Frame): TopLevelSpec => ({
    $schema: 'https://vega.github.io/schema/vega-lite/v6.json',
    width: f.width,
    height: f.name === 'wide' ? 260 : 220,
    autosize: { type: 'fit-x', contains: 'padding' },
    data: { values: rows },
    encoding: {
      x: { field: 't', type: 'quantitative', title: `${grain}s since first active`, axis: { tickMinStep: 1 } },
      color: { field: 'group', type: 'nominal', sort: groups, scale: { domain: groups, range: colours }, legend: null },
    },
    layer: [
      ...(bands ? [{ mark: { type: 'area', opacity: 0.12, interpolate: 'step-after' }, encoding: { y: { field: 'lower', type: 'quantitative' }, y2: { field: 'upper' } } }] : []),
      {
        mark: { type: 'line', interpolate: 'step-after', strokeWidth: 2 },
        encoding: {
          y: { field: 'survival', type: 'quantitative', title: `not yet ${exitState}`, axis: { format: '.0%' }, scale: { domain: [0, 1] } },
          strokeDash: { field: 'group', type: 'nominal', sort: groups, scale: { domain: groups, range: dashes }, legend: null },
        },
      },
    ],
  }) as unknown as TopLevelSpec;
  const medians = s.groups.map((g) => g.median).filter((m): m is number => m !== null);
  const lr = s.logRank;
  const span = medians.length === 0 ? null : Math.min(...medians) === Math.max(...medians) ? plural(medians[0], grain) : `${Math.min(...medians)}–${Math.max(...medians)} ${noun(2, grain)}`;
  const reading = `${span === null ? `Fewer than half of users reach ${exitState} within the observed ${noun(2, grain)}` : `Half of users first reach ${exitState} within ${span}`}${lr ? `; the log-rank test across ${plural(groups.length, 'cohort block')} gives chi-square ${lr.chiSquare.toFixed(1)} on ${lr.df} df (p ${lr.pValue < 0.001 ? '< 0.001' : `= ${lr.pValue.toFixed(3)}`})` : ''}.`;
  return {
    id: 'survival',
    title: `Time to first ${exitState}`,
    subtitle: `Kaplan–Meier: share of users not yet ${exitState}, by blocks of cohorts starting in the ${grain} shown; censored at the end of the data${bands ? '; bands are 95% intervals' : ' (95% intervals in survival.csv)'}`,
    reading,
    spec: draw(WIDE),
    draw,
    legend: groups.map((g, i) => ({ label: `cohorts from ${g}`, colour: colours[i], dash: dashes[i] })),
    table: { name: 'survival', header: ['group', 't', 'survival', 'lower95', 'upper95', 'at_risk'], rows: rows.map((r) => [r.group, r.t, r.survival, r.lower, r.upper, r.atRisk]) },
  };
}
