/**
 * The Monday report's content: every analysis run on one set of waist tables, turned into findings,
 * charts and data tables. Pure: no I/O (see write.ts for the files).
 */
import { showValue } from '../errors.js';
import { baseState } from '../lifecycle/states.js';
import { cohortReport, type CohortsOutput } from '../explain/cohortReport.js';
import { explainRetention, type ExplainOutput } from '../explain/run.js';
import { summariseFlows, type FlowsSummary } from '../flows/summary.js';
import { computeProjection, type ProjectOutput } from '../markov/run.js';
import { GRAIN_NOUN, type PeriodScheme } from '../periods/calendar.js';
import type { Weekday } from '../rules/schema.js';
import { noun, plural } from '../text/plural.js';
import type { Waist } from '../waist/types.js';
import { stateLabelsOf, type StateInfo } from '../waist/manifest.js';
import { mergeCohorts, survivalCurves, type SurvivalOutput } from '../survival/run.js';
import { cohortTriangleChart } from './charts/cohortTriangle.js';
import { decompositionChart } from './charts/decomposition.js';
import { flowRibbons } from './charts/flowRibbons.js';
import { backtestChart, coverageChart, projectionChart, scenarioChart } from './charts/projection.js';
import { lifecycleMoves } from '../lifecycle/moves.js';
import { rateHeatmap } from './charts/rateHeatmap.js';
import { retentionBands } from './charts/retentionBands.js';
import { stateMix } from './charts/stateMix.js';
import { survivalChart } from './charts/survival.js';
import type { Chart, DataTable } from './charts/types.js';
import { stateColours } from './palette.js';
import type { ReportSection } from './sections/types.js';
import { storyLines, storyTerms, type Comparison, type StoryLine, type Term } from './story.js';

export interface ReportOptions {
  /**
   * The one comparison of the findings: retention into `compare` against retention into `base`
   * (periods retained into). Default: the latest period against the one before; `compare` alone:
   * that period against the one before it.
   */
  base?: string;
  compare?: string;
  /** Periods to project ahead (default 12). */
  horizon?: number;
  /** Seed for the bands and backtest. */
  seed?: number;
  /** Sampled chains for the bands. */
  samples?: number;
  /** Transitions the projection is fitted on (default: the last 8, or all when fewer; the backtest uses the same window). */
  fit?: string;
  /** A note when the last, incomplete period was left out. */
  droppedPartial?: string;
  /** Sections built from the events by the caller (report/sections/behaviour.ts): the data check first. */
  sections?: ReportSection[];
  /** Named scenarios (`NAME=edits`) compared with the baseline projection. */
  scenarios?: string[];
  /** A report from a store: what changed in the latest period (store/digest.ts), shown first. */
  digest?: ReportSection;
}

export interface Finding {
  kind: 'flow' | 'change' | 'decomposition' | 'projection';
  text: string;
}

export interface ReportModel {
  /** The states of the rules, with roles, labels, colours and definitions (the waist's manifest). */
  states: StateInfo[];
  title: string;
  subtitle: string;
  grainWord: string;
  rules: { name?: string; version?: string; grain: string; weekStart: string; timezone: string; lapseLimit: number; minEvents: number; keyEvents: string[] | null };
  periods: { first: string; last: string; count: number };
  users: number;
  rows: Waist['manifest']['rows'];
  /** The comparison every finding uses (null when the data hold fewer than two periods retained into). */
  comparison: Comparison | null;
  /** The story: at most five short lines, each naming the periods it compares (story.ts). */
  story: StoryLine[];
  /** Terms of the trade used on the page, each with a one-line meaning. */
  terms: Term[];
  /** The longer findings behind the story, on the same comparison. */
  findings: Finding[];
  warnings: string[];
  cautions: string[];
  charts: Chart[];
  /** Tables shown as HTML tables (escaped), each also written as CSV/JSON. */
  tables: (DataTable & { title: string; note?: string })[];
  /** Full results as JSON files (flows.json, explain.json, …). */
  documents: { name: string; value: unknown }[];
  /** Sections from analyses of the events (the data check, behaviour); see report/sections/. */
  sections: ReportSection[];
}


const p1 = (x: number | null | undefined) => (x === null || x === undefined ? '–' : `${(x * 100).toFixed(1)}%`);
const pts = (x: number) => `${x >= 0 ? '+' : '−'}${Math.abs(x * 100).toFixed(1)}`;
const n0 = (x: number) => Math.round(x).toLocaleString('en-US');

/**
 * Acquisition cohorts the report reads, and backtest origins it scores: the latest 52 of each (a year
 * of weeks). Both would otherwise grow with the square of the periods; the commands give them all.
 */
export const REPORT_COHORTS = 52;
export const REPORT_BACKTEST_ORIGINS = 52;

export const CAUTIONS = [
  'Event data about people is personal data. This report shows aggregates only: counts, shares and rates, never a user id.',
  'Before contacting anyone from an audience list, follow local privacy law and the consent each person gave.',
  'An early behaviour that goes with staying is a correlation, not a cause. Test a change with an experiment before acting on it.',
];

/** Build the report from one engine run. */
export function buildReport(waist: Waist, o: ReportOptions = {}): ReportModel {
  const w = waist.tables;
  const m = waist.manifest;
  const rules = m.rules;
  const result = { rows: m.rows, lastPeriod: m.lastPeriod, warnings: m.warnings, events: m.events, users: m.users };
  const grainWord = GRAIN_NOUN[rules.grain];
  const scheme: PeriodScheme = { grain: rules.grain, weekStart: rules.weekStart as Weekday };
  const stateLabels = stateLabelsOf(m.states);
  const oneGrain = `one-${grainWord}`;
  const flows: FlowsSummary = summariseFlows(w);
  const charts: Chart[] = [];
  const findings: Finding[] = [];
  const warnings: string[] = [];
  const documents: ReportModel['documents'] = [{ name: 'flows', value: { ...flows, rows: result.rows, lastPeriod: result.lastPeriod } }];
  const last = flows.transitions[flows.transitions.length - 1];

  warnings.push(...result.warnings);
  // ── hook: sections from the event analyses (report/sections/), built by the caller from the same read ──
  const sections = [...(o.digest ? [o.digest] : []), ...(o.sections ?? [])];
  const checkWarnings = sections.filter((s) => s.placement === 'first').reduce((n, s) => n + s.warnings.length, 0);
  if (checkWarnings) warnings.unshift(`The data check found ${plural(checkWarnings, 'problem')} with the data (see its section, first on the page): read every number below with ${checkWarnings === 1 ? 'it' : 'them'} in mind.`);
  // ── end of hook ──
  if (o.droppedPartial) warnings.push(o.droppedPartial);
  if (w.warmup > 0) warnings.push(`${w.warmup === 1 ? `The first ${grainWord}` : `The first ${plural(w.warmup, grainWord)}`} (${w.periods.slice(0, w.warmup).join(', ')}) ${w.warmup === 1 ? 'is' : 'are'} a warm-up: classified, but left out of flows and retention.`);
  const censoring = leftCensoringHint(flows, grainWord, { arrival: w.arrivalState, continuing: m.states.find((s) => s.role === 'continuing')?.name });
  if (censoring) warnings.push(censoring);

  // the one comparison of every finding: the user's, else the latest period retained into against the one before
  const into = flows.transitions.map((t) => t.to);
  let comparison: Comparison | null = null;
  if (into.length >= 2 || (o.base && o.compare)) {
    const compare = o.compare ?? into[into.length - 1];
    const base = o.base ?? into[into.indexOf(compare) - 1];
    // an unknown period, or nothing before it: explain throws the located error ("did you mean")
    if (base === undefined) explainRetention(w, { compare, grainWord: oneGrain, minCell: rules.minCell });
    comparison = { base: base as string, compare, chosen: Boolean(o.base || o.compare) };
  }

  // flows
  if (last) {
    charts.push(flowRibbons({ states: w.states, from: last.from, to: last.to, counts: last.counts, fresh: last.fresh, arrival: w.arrivalState, colours: stateColours(w.states, m.states) }));
    // the moves over the comparison: every transition into a period after its base, up to its compare
    const iBase = comparison ? w.periods.indexOf(comparison.base) : w.periods.indexOf(last.from);
    const iCompare = comparison ? w.periods.indexOf(comparison.compare) : w.periods.indexOf(last.to);
    const span = flows.transitions.filter((t) => w.periods.indexOf(t.to) > iBase && w.periods.indexOf(t.to) <= iCompare);
    const moved = w.states.map((_, i) => w.states.map((_, j) => span.reduce((a, t) => a + t.counts[i][j], 0)));
    const moves: { from: string; to: string; n: number; share: number }[] = [];
    w.states.forEach((a, i) => w.states.forEach((b, j) => {
      const n = moved[i][j];
      const rowN = moved[i].reduce((x, y) => x + y, 0);
      if (i !== j && n > 0) moves.push({ from: a, to: b, n, share: n / rowN });
    }));
    moves.sort((x, y) => y.n - x.n);
    const top = moves.slice(0, 3).map((m) => `${m.from} → ${m.to} ${n0(m.n)} (${p1(m.share)} of ${m.from})`);
    const between = `${w.periods[iBase]} → ${w.periods[iCompare]}${span.length > 1 ? `, ${span.length} transitions added up` : ''}`;
    findings.push({ kind: 'flow', text: `Biggest moves between states (${between}): ${top.length ? top.join('; ') : 'none'}.` });
    const recent = flows.transitions.slice(-4);
    const pooled = w.states.map((_, i) => w.states.map((_, j) => recent.reduce((a, t) => a + t.counts[i][j], 0)));
    charts.push(rateHeatmap({ states: w.states, from: recent[0].from, to: recent[recent.length - 1].to, transitions: recent.length, counts: pooled, minCell: rules.minCell, grain: grainWord }));
    const small = w.states.filter((_, i) => last.counts[i].reduce((a, b) => a + b, 0) > 0 && last.counts[i].reduce((a, b) => a + b, 0) < rules.minCell);
    if (small.length) warnings.push(`Small cells: in the latest transition, ${small.join(', ')} had fewer than ${plural(rules.minCell, 'user')}; their rates are shown faded and should not be read alone.`);
  }
  charts.push(stateMix({ states: w.states, periods: w.periods, stateCounts: w.stateCounts, grain: rules.grain, activeStates: w.activeStates, colours: stateColours(w.states, m.states) }));
  if (flows.transitions.length > 0) charts.push(retentionBands(flows.transitions.flatMap((t) => w.activeStates.map((s) => ({ to: t.to, state: s, n: t.retention[s].n, retained: t.retention[s].retained }))), w.activeStates, rules.grain, rules.minCell, stateColours(w.activeStates, m.states)));

  // explanation: why retention moved, on the comparison
  let explained: ExplainOutput | undefined;
  if (comparison) {
    explained = explainRetention(w, { base: comparison.base, compare: comparison.compare, grainWord: oneGrain, minCell: rules.minCell, stateLabels });
    documents.push({ name: 'explain', value: explained });
    const sig = explained.changes.filter((c) => c.significant && c.change !== null);
    findings.push({
      kind: 'change',
      text: sig.length
        ? `Significant changes in retention by prior state (${explained.base} → ${explained.compare}): ${sig.map((c) => `${c.state} ${p1(c.base.rate)} → ${p1(c.compare.rate)} (${pts(c.change!)} points, 95% interval ${pts(c.lower!)} to ${pts(c.upper!)})`).join('; ')}; two-proportion z-tests, Benjamini–Hochberg at 5%.`
        : `No state's retention changed significantly (${explained.base} → ${explained.compare}; two-proportion z-tests, Benjamini–Hochberg at 5%).`,
    });
    charts.push(decompositionChart(explained, 'decomposition', `${explained.base} to ${explained.compare}`));
    findings.push({ kind: 'decomposition', text: `${explained.sentence.replace(/\.$/, '')} (${explained.base} → ${explained.compare}).` });
    if (explained.simpson) warnings.push(`Simpson's paradox (${explained.base} → ${explained.compare}): overall retention moved against every state's own retention, because the mix shifted.`);
  }

  // cohorts and survival
  let cohorts: CohortsOutput | undefined;
  // the latest cohorts only, so that the report grows linearly with the periods (the whole triangle
  // has cohorts × periods cells); `tidemark cohorts` gives every cohort
  const recent = w.cohorts.slice(-REPORT_COHORTS);
  if (recent.some((c) => c.active.length > 1)) {
    cohorts = cohortReport(recent, { ages: [1, 4, 12], window: [4, 8], groupBy: 'month', minN: rules.minCell });
    if (w.cohorts.length > recent.length) warnings.push(`The cohort analyses read the latest ${REPORT_COHORTS} of ${n0(w.cohorts.length)} acquisition cohorts (from ${recent[0].cohort}); tidemark cohorts gives every one.`);
    documents.push({ name: 'cohorts', value: cohorts });
    // a daily log's triangle is drawn by week (charts/cohortTriangle.ts): a year of weeks of daily cohorts
    const drawn = rules.grain === 'day' ? w.cohorts.slice(-REPORT_COHORTS * 7) : recent;
    charts.push(cohortTriangleChart(drawn, cohorts, { grain: grainWord, weekStart: scheme.weekStart, minCell: rules.minCell }));
  }
  if (w.durations.some((d) => d.observed === 1)) {
    const blocks = Math.max(1, Math.ceil(new Set(w.durations.map((d) => d.group)).size / 5));
    const surv: SurvivalOutput = survivalCurves(mergeCohorts(w.durations, blocks), 'cohort');
    documents.push({ name: 'survival', value: surv });
    charts.push(survivalChart(surv, grainWord, w.exitState));
  }

  // projection
  if (flows.transitions.length >= 1) {
    const horizon = o.horizon ?? 12;
    const scheme = { grain: rules.grain, weekStart: rules.weekStart as Weekday };
    const proj: ProjectOutput = computeProjection({ tables: w }, { fit: o.fit, horizon, samples: o.samples ?? 300, seed: o.seed ?? 1, band: [10, 90], backtestHorizon: 8, backtestOrigins: REPORT_BACKTEST_ORIGINS, scheme, scenarios: o.scenarios, moves: lifecycleMoves(rules), minSegment: rules.minCell });
    documents.push({ name: 'projection', value: proj });
    charts.push(projectionChart(proj, grainWord, { periods: w.periods, stateCounts: w.stateCounts }, stateColours(proj.states, m.states)));
    const end = proj.projection[horizon];
    const mix = proj.states.map((s) => `${s} ${p1(end.shares[s])}${end.bands ? ` (${p1(end.bands.shares[s][0])}–${p1(end.bands.shares[s][1])})` : ''}`).join(', ');
    findings.push({ kind: 'projection', text: `If the flows of the last ${proj.source.kind === 'events' ? proj.source.fit.transitions : ''} ${grainWord}s hold, in ${horizon} ${grainWord}s the mix is ${mix}; 80% bands from simulated paths in which the rates and arrivals vary as they did.` });
    warnings.push(...proj.warnings);
    const sc = scenarioChart(proj, grainWord);
    if (sc) {
      charts.push(sc);
      findings.push({ kind: 'projection', text: `Scenarios: ${sc.reading}` });
    }
    if (proj.backtest && 'rows' in proj.backtest) {
      const bt = proj.backtest;
      charts.push(backtestChart(bt, grainWord), coverageChart(bt, grainWord));
      const below = bt.rows.filter((r) => r.coverage < bt.target.outer[0] - 1e-9 || r.innerCoverage < bt.target.inner[0] - 1e-9).map((r) => r.horizon);
      const above = bt.rows.filter((r) => r.coverage > bt.target.outer[1] + 1e-9 || r.innerCoverage > bt.target.inner[1] + 1e-9).map((r) => r.horizon);
      const breaks = bt.missed.slice(0, 4).map((m) => m.period).join(', ');
      const ahead = (hs: number[]) => `${hs.join(', ')} ${grainWord}${hs.length > 1 || hs[0] > 1 ? 's' : ''} ahead`;
      if (below.length) warnings.push(`The projection bands held less than their target in the backtest at ${ahead(below)}${breaks ? `; the misses cluster on ${breaks}, where the flows changed beyond their past variation (a structural break, such as a promotion or a change of rules, which no band built from the past foresees)` : ': the flows varied more than the fit window showed'}.`);
      if (above.length) warnings.push(`The projection bands were wider than needed in the backtest at ${ahead(above)} (they held more than their target).`);
      if (!below.length && breaks) warnings.push(`The projection bands missed most of what happened in ${breaks}: the flows changed there beyond their past variation (a structural break).`);
    }
  }

  const projected = documents.find((d) => d.name === 'projection')?.value as ProjectOutput | undefined;
  const story = storyLines({ flows, periods: w.periods, stateCounts: w.stateCounts, activeStates: w.activeStates, states: m.states, grain: grainWord, scheme, users: result.users, comparison: comparison ?? undefined, explained, projection: projected });
  const terms = storyTerms(story, m.states, grainWord, projected?.projection[0]?.bands?.percentiles);

  const tables: ReportModel['tables'] = [];
  tables.push({
    name: 'growth', title: `${grainWord[0].toUpperCase()}${grainWord.slice(1)} by ${grainWord}: growth accounting`,
    note: 'active = active before − went quiet + new + came back; quick ratio = (new + came back) / went quiet: above 1, the active audience grows.',
    header: ['into', 'active', 'new', 'came back', 'went quiet', 'quick ratio'],
    formats: ['text', 'int', 'int', 'int', 'int', 'num'],
    rows: flows.transitions.map((t) => [t.to, t.growth.activeAfter, t.fresh, t.growth.returned, t.growth.newlyInactive, t.growth.quickRatio === null ? null : Number(t.growth.quickRatio.toFixed(2))]),
  });
  const chosenDoc = explained;
  const seg = chosenDoc?.bySegment;
  if (seg) {
    tables.push({
      // a file name holds at most 255 bytes: keep the column's part short
      name: `by-${seg.by}`.replace(/[^A-Za-z0-9_-]/g, '_').slice(0, 64), title: `Retention by ${showValue(seg.by, 40)}, ${chosenDoc!.base} to ${chosenDoc!.compare}`,
      note: `${seg.sentence} ${seg.caution}`,
      header: [seg.by, 'users before', 'retention before', 'users after', 'retention after', 'rate effect (pts)', 'mix effect (pts)'],
      formats: ['text', 'int', 'pct', 'int', 'pct', 'num', 'num'],
      rows: seg.groups.map((g) => [g.group, g.nBase, g.rateBase, g.nCompare, g.rateCompare, g.rateEffect === null ? null : g.rateEffect * 100, g.mixEffect === null ? null : g.mixEffect * 100]),
    });
  }
  tables.push({
    name: 'event-names', title: 'Events read, by name', note: result.events.some((e) => !e.key) ? 'Only key events count toward activity.' : 'Every event counts toward activity.',
    header: ['event', 'rows', 'key event'], formats: ['text', 'int', 'text'], rows: result.events.map((e) => [e.name, e.rows, e.key]),
  });

  return {
    states: m.states,
    title: `Lifecycle report, ${w.periods[0]} to ${w.periods[w.periods.length - 1]}`,
    subtitle: `${plural(result.users, 'user')}, ${plural(w.periods.length, grainWord)}, rules ${rules.name ?? 'unnamed'}${rules.version ? ` v${rules.version}` : ''} (${rules.timezone}, lapse limit ${rules.lapseLimit})`,
    grainWord,
    rules: { name: rules.name ?? undefined, version: rules.version ?? undefined, grain: rules.grain, weekStart: rules.weekStart, timezone: rules.timezone, lapseLimit: rules.lapseLimit, minEvents: rules.minEvents, keyEvents: rules.keyEvents },
    periods: { first: w.periods[0], last: w.periods[w.periods.length - 1], count: w.periods.length },
    users: result.users,
    rows: result.rows,
    comparison,
    story,
    terms,
    findings,
    warnings,
    cautions: CAUTIONS,
    charts,
    tables,
    documents,
    sections,
  };
}

/**
 * An export that starts in the middle of users' histories shows long-standing users as arrivals in
 * its first period; they retain like veterans. Warn when the first period's arrivals retain far
 * better (10 points or more) than later arrivals and closer to users in the continuing state. The
 * states are asked for by role (default: the base states').
 */
export function leftCensoringHint(f: FlowsSummary, grainWord: string, roles: { arrival?: string; continuing?: string } = {}): string | undefined {
  const arrival = roles.arrival ?? baseState('arrival');
  const continuing = roles.continuing ?? baseState('continuing');
  if (f.warmupPeriods.length > 0 || f.transitions.length < 4) return undefined;
  const first = f.transitions[0].retention[arrival];
  const later = f.transitions.slice(1);
  const n = later.reduce((a, t) => a + (t.retention[arrival]?.n ?? 0), 0);
  const kept = later.reduce((a, t) => a + (t.retention[arrival]?.retained ?? 0), 0);
  const en = later.reduce((a, t) => a + (t.retention[continuing]?.n ?? 0), 0);
  const ek = later.reduce((a, t) => a + (t.retention[continuing]?.retained ?? 0), 0);
  if (!first || first.rate === null || n === 0 || en === 0) return undefined;
  const freshLater = kept / n, steady = ek / en;
  if (first.rate - freshLater >= 0.1 && Math.abs(first.rate - steady) < Math.abs(first.rate - freshLater)) {
    return `The data may start in the middle of users' histories: users first seen in ${f.periods[0]} kept ${p1(first.rate)} active the next ${grainWord}, like ${continuing} users (${p1(steady)}), not like later arrivals (${p1(freshLater)}). Consider a warm-up (rules key warmup, or --warmup) of a few ${noun(2, grainWord)}.`;
  }
  return undefined;
}
