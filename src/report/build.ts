/**
 * The Monday report's content: every analysis run on one set of waist tables, turned into findings,
 * charts and data tables. Pure: no I/O (see write.ts for the files).
 */
import { showValue } from '../errors.js';
import { cohortReport, type CohortsOutput } from '../explain/cohortReport.js';
import { explainRetention, type ExplainOutput } from '../explain/run.js';
import { summariseFlows, type FlowsSummary } from '../flows/summary.js';
import { computeProjection, type ProjectOutput } from '../markov/run.js';
import { GRAIN_NOUN } from '../periods/calendar.js';
import type { Waist } from '../waist/types.js';
import { stateLabelsOf, type StateInfo } from '../waist/manifest.js';
import { mergeCohorts, survivalCurves, type SurvivalOutput } from '../survival/run.js';
import { cohortTriangleChart } from './charts/cohortTriangle.js';
import { decompositionChart } from './charts/decomposition.js';
import { flowRibbons } from './charts/flowRibbons.js';
import { backtestChart, projectionChart } from './charts/projection.js';
import { rateHeatmap } from './charts/rateHeatmap.js';
import { retentionBands } from './charts/retentionBands.js';
import { stateMix } from './charts/stateMix.js';
import { survivalChart } from './charts/survival.js';
import type { Chart, DataTable } from './charts/types.js';
import { stateColours } from './palette.js';
import type { ReportSection } from './sections/types.js';

export interface ReportOptions {
  /** Chosen comparison for the decomposition: periods retained into. Default: latest against `lookback` earlier. */
  base?: string;
  compare?: string;
  /** Periods to project ahead (default 12). */
  horizon?: number;
  /** Seed for the bands and backtest. */
  seed?: number;
  /** Sampled chains for the bands. */
  samples?: number;
  /** Transitions the projection is fitted on (default: the last 8, or all when fewer). */
  fit?: string;
  /** A note when the last, incomplete period was left out. */
  droppedPartial?: string;
  /** Sections built from the events by the caller (report/sections/behaviour.ts): the data check first. */
  sections?: ReportSection[];
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
  rules: { name?: string; version?: string; grain: string; timezone: string; lapseLimit: number; minEvents: number; keyEvents: string[] | null };
  periods: { first: string; last: string; count: number };
  users: number;
  rows: Waist['manifest']['rows'];
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
  if (checkWarnings) warnings.unshift(`The data check found ${checkWarnings} problem${checkWarnings > 1 ? 's' : ''} with the data (see its section, first on the page): read every number below with them in mind.`);
  // ── end of hook ──
  if (o.droppedPartial) warnings.push(o.droppedPartial);
  if (w.warmup > 0) warnings.push(`The first ${w.warmup} ${grainWord}${w.warmup > 1 ? 's' : ''} (${w.periods.slice(0, w.warmup).join(', ')}) are a warm-up: classified, but left out of flows and retention.`);
  const censoring = leftCensoringHint(flows, grainWord);
  if (censoring) warnings.push(censoring);

  // flows
  if (last) {
    charts.push(flowRibbons({ states: w.states, from: last.from, to: last.to, counts: last.counts, fresh: last.fresh, arrival: w.arrivalState, colours: stateColours(w.states, m.states) }));
    const moves: { from: string; to: string; n: number; share: number }[] = [];
    w.states.forEach((a, i) => w.states.forEach((b, j) => {
      const n = last.counts[i][j];
      const rowN = last.counts[i].reduce((x, y) => x + y, 0);
      if (i !== j && n > 0) moves.push({ from: a, to: b, n, share: n / rowN });
    }));
    moves.sort((x, y) => y.n - x.n);
    const top = moves.slice(0, 3).map((m) => `${m.from} → ${m.to} ${n0(m.n)} (${p1(m.share)} of ${m.from})`);
    findings.push({ kind: 'flow', text: `Biggest moves into ${last.to}: ${top.join('; ')}; ${n0(last.fresh)} new users arrived and ${n0(last.growth.returned)} came back, against ${n0(last.growth.newlyInactive)} who went quiet (quick ratio ${last.growth.quickRatio === null ? '–' : last.growth.quickRatio.toFixed(2)}).` });
    const recent = flows.transitions.slice(-4);
    const pooled = w.states.map((_, i) => w.states.map((_, j) => recent.reduce((a, t) => a + t.counts[i][j], 0)));
    charts.push(rateHeatmap({ states: w.states, from: recent[0].from, to: recent[recent.length - 1].to, transitions: recent.length, counts: pooled, minCell: rules.minCell }));
    const small = w.states.filter((_, i) => last.counts[i].reduce((a, b) => a + b, 0) > 0 && last.counts[i].reduce((a, b) => a + b, 0) < rules.minCell);
    if (small.length) warnings.push(`Small cells: in the latest transition, ${small.join(', ')} had fewer than ${rules.minCell} users; their rates are shown faded and should not be read alone.`);
  }
  charts.push(stateMix(w.states, w.periods, w.stateCounts, grainWord, w.activeStates, stateColours(w.states, m.states)));
  if (flows.transitions.length > 0) charts.push(retentionBands(flows.transitions.flatMap((t) => w.activeStates.map((s) => ({ to: t.to, state: s, n: t.retention[s].n, retained: t.retention[s].retained }))), w.activeStates, grainWord, rules.minCell, stateColours(w.activeStates, m.states)));

  // explanation: latest change, and the chosen comparison
  if (flows.transitions.length >= 2) {
    const latest: ExplainOutput = explainRetention(w, { grainWord: oneGrain, minCell: rules.minCell, stateLabels });
    documents.push({ name: 'explain-latest', value: latest });
    const sig = latest.changes.filter((c) => c.significant && c.change !== null);
    findings.push({
      kind: 'change',
      text: sig.length
        ? `Significant changes in retention into ${latest.compare} against ${latest.base}: ${sig.map((c) => `${c.state} ${p1(c.base.rate)} → ${p1(c.compare.rate)} (${pts(c.change!)} points, 95% interval ${pts(c.lower!)} to ${pts(c.upper!)})`).join('; ')}; tested with two-proportion z-tests, Benjamini–Hochberg at 5%.`
        : `No state's retention into ${latest.compare} changed significantly from ${latest.base} (two-proportion z-tests, Benjamini–Hochberg at 5%).`,
    });
    charts.push(decompositionChart(latest, 'decomposition-latest', `${latest.base} to ${latest.compare}`));
    const into = flows.transitions.map((t) => t.to);
    const compare = o.compare ?? into[into.length - 1];
    const base = o.base ?? into[Math.max(0, into.indexOf(compare) - 4)];
    if (base !== latest.base || compare !== latest.compare) {
      const chosen = explainRetention(w, { base, compare, grainWord: oneGrain, minCell: rules.minCell, stateLabels });
      documents.push({ name: 'explain-chosen', value: chosen });
      charts.push(decompositionChart(chosen, 'decomposition-chosen', `${chosen.base} to ${chosen.compare}`));
      findings.push({ kind: 'decomposition', text: `${chosen.sentence.replace(/\.$/, '')} (retention into ${chosen.compare} against ${chosen.base}).` });
    } else {
      findings.push({ kind: 'decomposition', text: latest.sentence });
    }
    if (latest.simpson) warnings.push("Simpson's paradox in the latest change: overall retention moved against every state's own retention, because the mix shifted.");
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
    charts.push(cohortTriangleChart(cohorts, grainWord, rules.minCell));
  }
  if (w.durations.some((d) => d.observed === 1)) {
    const blocks = Math.max(1, Math.ceil(new Set(w.durations.map((d) => d.group)).size / 5));
    const surv: SurvivalOutput = survivalCurves(mergeCohorts(w.durations, blocks), 'cohort');
    documents.push({ name: 'survival', value: surv });
    charts.push(survivalChart(surv, grainWord));
  }

  // projection
  if (flows.transitions.length >= 1) {
    const horizon = o.horizon ?? 12;
    const fit = o.fit ?? String(Math.min(8, flows.transitions.length));
    const proj: ProjectOutput = computeProjection({ tables: w }, { fit, horizon, samples: o.samples ?? 300, seed: o.seed ?? 1, band: [10, 90], backtestHorizon: 4, backtestOrigins: REPORT_BACKTEST_ORIGINS });
    documents.push({ name: 'projection', value: proj });
    charts.push(projectionChart(proj, grainWord, w.activeStates, stateColours(proj.states, m.states)));
    const end = proj.projection[horizon];
    const mix = proj.states.map((s) => `${s} ${p1(end.shares[s])}${end.bands ? ` (${p1(end.bands.shares[s][0])}–${p1(end.bands.shares[s][1])})` : ''}`).join(', ');
    findings.push({ kind: 'projection', text: `If the flows of the last ${proj.source.kind === 'events' ? proj.source.fit.transitions : ''} ${grainWord}s hold, in ${horizon} ${grainWord}s the mix is ${mix}; 10th–90th percentile bands.` });
    if (proj.backtest && 'rows' in proj.backtest) {
      charts.push(backtestChart(proj.backtest, grainWord));
      const bt = proj.backtest.rows[proj.backtest.rows.length - 1];
      if (bt && bt.coverage < 0.6) warnings.push(`The projection bands held the actual mix only ${(bt.coverage * 100).toFixed(0)}% of the time in the backtest (${bt.horizon} ${grainWord}s ahead): they reflect sampling error in the fitted rates, not shifts in the flows themselves. Treat them as a floor on the uncertainty.`);
    }
  }

  const tables: ReportModel['tables'] = [];
  tables.push({
    name: 'growth', title: `${grainWord[0].toUpperCase()}${grainWord.slice(1)} by ${grainWord}: growth accounting`,
    note: 'active = active before − went quiet + new + came back; quick ratio = (new + came back) / went quiet.',
    header: ['into', 'active', 'new', 'came back', 'went quiet', 'quick ratio'],
    formats: ['text', 'int', 'int', 'int', 'int', 'num'],
    rows: flows.transitions.map((t) => [t.to, t.growth.activeAfter, t.fresh, t.growth.returned, t.growth.newlyInactive, t.growth.quickRatio === null ? null : Number(t.growth.quickRatio.toFixed(2))]),
  });
  const chosenDoc = documents.find((d) => d.name === 'explain-chosen')?.value as ExplainOutput | undefined;
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
    subtitle: `${n0(result.users)} users, ${w.periods.length} ${grainWord}s, rules ${rules.name ?? 'unnamed'}${rules.version ? ` v${rules.version}` : ''} (${rules.timezone}, lapse limit ${rules.lapseLimit})`,
    grainWord,
    rules: { name: rules.name ?? undefined, version: rules.version ?? undefined, grain: rules.grain, timezone: rules.timezone, lapseLimit: rules.lapseLimit, minEvents: rules.minEvents, keyEvents: rules.keyEvents },
    periods: { first: w.periods[0], last: w.periods[w.periods.length - 1], count: w.periods.length },
    users: result.users,
    rows: result.rows,
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
 * An export that starts in the middle of users' histories shows long-standing users as "fresh" in
 * its first period; they retain like veterans. Warn when the first period's fresh users retain far
 * better (10 points or more) than later newcomers and closer to engaged users.
 */
export function leftCensoringHint(f: FlowsSummary, grainWord: string): string | undefined {
  if (f.warmupPeriods.length > 0 || f.transitions.length < 4) return undefined;
  const first = f.transitions[0].retention.fresh;
  const later = f.transitions.slice(1);
  const n = later.reduce((a, t) => a + t.retention.fresh.n, 0);
  const kept = later.reduce((a, t) => a + t.retention.fresh.retained, 0);
  const en = later.reduce((a, t) => a + (t.retention.engaged?.n ?? 0), 0);
  const ek = later.reduce((a, t) => a + (t.retention.engaged?.retained ?? 0), 0);
  if (!first || first.rate === null || n === 0 || en === 0) return undefined;
  const freshLater = kept / n, engaged = ek / en;
  if (first.rate - freshLater >= 0.1 && Math.abs(first.rate - engaged) < Math.abs(first.rate - freshLater)) {
    return `The data may start in the middle of users' histories: users first seen in ${f.periods[0]} kept ${p1(first.rate)} active the next ${grainWord}, like engaged users (${p1(engaged)}), not like later newcomers (${p1(freshLater)}). Consider a warm-up (rules key warmup, or --warmup) of a few ${grainWord}s.`;
  }
  return undefined;
}
