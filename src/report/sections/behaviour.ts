/**
 * The report's behaviour sections, built from the events (read with detail) rather than the waist:
 * the data check (first, before any chart), early signals, habit profiles, RFM segments and the grain
 * advisor. An analysis the data cannot support (too short a log) gives a section that says why.
 */
import { TidemarkError } from '../../errors.js';
import { habitProfiles, WEEKDAY_NAMES } from '../../habits/profile.js';
import type { EventLog } from '../../ingest/eventLog.js';
import { inspectLog } from '../../inspect/check.js';
import type { ObservedRange, Timelines } from '../../lifecycle/timelines.js';
import { rfmSegments } from '../../rfm/segments.js';
import type { Rules } from '../../rules/schema.js';
import { earlySignals } from '../../signals/early.js';
import { adviseGrain } from '../../grain/advise.js';
import type { ReportSection } from './types.js';
import { plural } from '../../text/plural.js';

/** Defaults of the report's behaviour analyses (the commands take options). */
export const REPORT_BEHAVIOUR = { early: 1, horizon: 4, thresholds: [1, 2, 3, 5, 10], span: 8, window: 12 } as const;

const section = (id: string, title: string, placement: ReportSection['placement'] = 'after-charts'): ReportSection => ({ id, title, placement, paragraphs: [], warnings: [], tables: [], documents: [] });

/** Run `fn`; a NOT_ENOUGH_DATA error becomes a paragraph saying so. */
function guarded(s: ReportSection, fn: () => void): ReportSection {
  try {
    fn();
  } catch (e) {
    if (!(e instanceof TidemarkError && e.code === 'NOT_ENOUGH_DATA')) throw e;
    s.paragraphs.push(`Not shown: ${e.message}.`);
  }
  return s;
}

/** The data check, as the report's first section. */
export function dataCheckSection(log: EventLog, t: Timelines, rules: Rules): ReportSection {
  const s = section('data-check', 'Data check', 'first');
  const r = inspectLog(log, t, rules);
  s.paragraphs.push(r.warnings ? `The data check found ${plural(r.warnings, 'problem')} that ${r.warnings === 1 ? 'changes' : 'change'} the numbers below; each says what to do.` : 'The data check found nothing that changes the numbers below.');
  for (const x of r.findings) (x.kind === 'warning' ? s.warnings : s.paragraphs).push(`${x.text} What to do: ${x.action}`);
  s.documents.push({ name: 'inspect', value: r });
  return s;
}

export function earlySection(log: EventLog, t: Timelines, range: ObservedRange, rules: Rules): ReportSection {
  const s = section('early-signals', 'Early signals: first-period behaviour that goes with staying');
  return guarded(s, () => {
    const r = earlySignals(log, t, range, { early: REPORT_BEHAVIOUR.early, horizon: REPORT_BEHAVIOUR.horizon, thresholds: [...REPORT_BEHAVIOUR.thresholds], minCell: rules.minCell });
    s.paragraphs.push(r.reading, `${plural(r.newcomers, 'newcomer')} counted; ${r.leftOut.toLocaleString('en-US')} left out because the data end before their ${plural(REPORT_BEHAVIOUR.early + REPORT_BEHAVIOUR.horizon, 'period')}. ${r.criterion}`, r.caution);
    s.tables.push({
      name: 'early-signals', title: 'Retention by early events (Wilson and Newcombe 95%, Benjamini–Hochberg)',
      note: `Retention = active ${plural(REPORT_BEHAVIOUR.early + REPORT_BEHAVIOUR.horizon - 1, 'period')} after the first; events counted in the first ${plural(REPORT_BEHAVIOUR.early, 'period')}.`,
      header: ['event', 'at least', 'newcomers', 'retention', 'others', 'retention (others)', 'difference (pts)', 'lower', 'upper', 'lift', 'coverage', 'p adjusted', 'significant', "Youden's J"],
      formats: ['text', 'int', 'int', 'pct', 'int', 'pct', 'num', 'num', 'num', 'num', 'pct', 'num', 'text', 'num'],
      rows: r.rows.map((x) => [x.event ?? '(any event)', x.k, x.atLeast.n, x.atLeast.rate, x.below.n, x.below.rate, x.difference.value * 100, x.difference.lower * 100, x.difference.upper * 100, x.lift, x.coverage, x.pAdjusted, x.significant, x.youden]),
    });
    s.documents.push({ name: 'early-signals', value: r });
  });
}

export function habitsSection(log: EventLog, t: Timelines, range: ObservedRange, rules: Rules): ReportSection {
  const s = section('habits', 'Habit profiles: long-tenured users against early leavers');
  return guarded(s, () => {
    const span = Math.max(REPORT_BEHAVIOUR.span, rules.lapseLimit + 2);
    const h = habitProfiles(log, t, range, { span, minActive: Math.ceil(span * 0.75), lapseLimit: rules.lapseLimit });
    s.paragraphs.push(`Long-tenured: ${h.definitions.longTenured}; went dormant early: ${h.definitions.droppedEarly}.`, h.reading, h.caution);
    s.tables.push({
      name: 'habits-events', title: 'Events each group keeps doing',
      note: 'Users: share who did it in their first periods; periods: share of their periods with any event that hold it.',
      header: ['event', 'long-tenured users', 'long-tenured periods', 'early leavers users', 'early leavers periods'],
      formats: ['text', 'pct', 'pct', 'pct', 'pct'],
      rows: h.longTenured.events.map((x, i) => [x.event, x.memberShare, x.periodShare, h.droppedEarly.events[i].memberShare, h.droppedEarly.events[i].periodShare]),
    });
    s.tables.push({
      name: 'habits-weekdays', title: 'Share of events by weekday (local time)', header: ['weekday', 'long-tenured', 'early leavers'], formats: ['text', 'pct', 'pct'],
      rows: WEEKDAY_NAMES.map((d, i) => [d, h.longTenured.weekdays[i], h.droppedEarly.weekdays[i]]),
    });
    s.documents.push({ name: 'habits', value: h });
  });
}

export function rfmSection(log: EventLog, t: Timelines, range: ObservedRange): ReportSection {
  const s = section('rfm', 'RFM segments and their flows');
  return guarded(s, () => {
    const r = rfmSegments(log, t, range, { window: REPORT_BEHAVIOUR.window });
    s.paragraphs.push(r.reading, `Segments: ${r.segments.map((x) => `${x.name} (${x.rule})`).join('; ')}. ${r.scoring}`, `Long run of the flows: ${r.longRun} The fitted chain is in rfm.json (model), for tidemark project --matrix.`);
    const names = r.segments.map((x) => x.name);
    s.tables.push({ name: 'rfm-segments', title: 'Users per segment, latest 12 periods', header: ['period', 'scored', ...names], formats: ['text', 'int', ...names.map(() => 'int' as const)], rows: r.periods.slice(-12).map((p) => [p.period, p.scored, ...names.map((n) => p.counts[n])]) });
    s.tables.push({
      name: 'rfm-flows', title: 'Flows between segments, pooled (share of each row)', header: ['from', ...names, 'users'], formats: ['text', ...names.map(() => 'pct' as const), 'int'],
      rows: r.pooled.map((row, i) => {
        const n = row.reduce((a, b) => a + b, 0);
        return [names[i], ...row.map((v) => (n ? v / n : null)), n];
      }),
    });
    s.documents.push({ name: 'rfm', value: r });
  });
}

export function grainSection(log: EventLog, t: Timelines, rules: Rules): ReportSection {
  const s = section('grain', 'Grain advisor: how long users take to come back');
  const a = adviseGrain(log, t);
  s.paragraphs.push(a.reading, `The rules use a ${rules.grain} grain and a lapse limit of ${rules.lapseLimit}. ${a.rule}`);
  s.tables.push({ name: 'grain-gaps', title: 'Days between active days', header: ['from (days)', 'to (days)', 'gaps', 'share', 'cumulative'], formats: ['int', 'int', 'int', 'pct', 'pct'], rows: a.distribution.map((b) => [b.from, b.to, b.gaps, b.share, b.cumulative]) });
  s.documents.push({ name: 'grain', value: a });
  return s;
}

/** Every behaviour section, the data check first. */
export function behaviourSections(log: EventLog, t: Timelines, range: ObservedRange, rules: Rules): ReportSection[] {
  return [dataCheckSection(log, t, rules), earlySection(log, t, range, rules), habitsSection(log, t, range, rules), rfmSection(log, t, range), grainSection(log, t, rules)];
}
