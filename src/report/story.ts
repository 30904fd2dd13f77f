/**
 * The story at the top of the report: at most five short lines — what moved, whether it matters,
 * why, and what comes next — every one naming the periods it compares, and all of them on one
 * comparison (the user's `--base`/`--compare`, else the latest period against the one before). Terms
 * of the trade used in them get a one-line meaning. Pure; nouns come from the rules' state labels and
 * "users", never from any one data set.
 */
import type { ExplainOutput } from '../explain/run.js';
import type { FlowsSummary } from '../flows/summary.js';
import type { ProjectOutput } from '../markov/run.js';
import { periodKeyOfDate, periodLabel, type PeriodScheme } from '../periods/calendar.js';
import { newcombeDifference } from '../stats/newcombe.js';
import { twoProportionZTest } from '../stats/ztest.js';
import { noun, plural } from '../text/plural.js';
import type { StateInfo } from '../waist/manifest.js';

/** The one comparison of the findings: retention into `compare` against retention into `base`. */
export interface Comparison {
  base: string;
  compare: string;
  /** True when the user chose it; false for the default (the latest period against the one before). */
  chosen: boolean;
}

export interface StoryLine {
  kind: 'moved' | 'matters' | 'why' | 'next' | 'only';
  /** "What moved", "Does it matter", "Why", "What comes next". */
  lead: string;
  /** The periods the line compares, "2026-08-10 → 2026-09-14". */
  periods: string;
  text: string;
}

/** A term of the trade used on the page, and its one-line meaning. */
export interface Term {
  term: string;
  meaning: string;
}

export interface StoryInput {
  flows: FlowsSummary;
  periods: readonly string[];
  stateCounts: readonly (readonly number[])[];
  activeStates: readonly string[];
  states: readonly StateInfo[];
  grain: string;
  scheme: PeriodScheme;
  users: number;
  comparison?: Comparison;
  explained?: ExplainOutput;
  projection?: ProjectOutput;
}

/** The comparison in one sentence, for the page, the Markdown and the digest. */
export function comparisonText(c: Comparison | null, grain: string): string {
  if (!c) return `No comparison: the data hold fewer than two ${noun(2, grain)} retained into.`;
  return `Every finding compares ${c.base} → ${c.compare} (${c.chosen ? 'as chosen' : `the latest ${grain} against the one before; --base and --compare choose others`}).`;
}

/** The whole line as one string: "What moved (A → B): …". */
export const lineText = (l: StoryLine): string => (l.periods ? `${l.lead} (${l.periods}): ${l.text}` : `${l.lead}: ${l.text}`);

const pct = (x: number) => `${(x * 100).toFixed(1)}%`;
const signed = (x: number, digits = 1) => `${x > 0 ? '+' : x < 0 ? '−' : '±'}${Math.abs(x).toFixed(digits)}`;
const int = (x: number) => Math.round(x).toLocaleString('en-US');
/** A p-value as text: "p < 0.001", "p = 0.03". */
export const pText = (p: number) => (p < 0.001 ? 'p < 0.001' : `p = ${p < 0.01 ? p.toFixed(3) : p.toFixed(2)}`);

/** Active users in period index `t`. */
function activeAt(i: StoryInput, t: number): number {
  const idx = i.flows.states.map((s, k) => (i.activeStates.includes(s) ? k : -1)).filter((k) => k >= 0);
  return idx.reduce((a, k) => a + (i.stateCounts[t]?.[k] ?? 0), 0);
}

/** What moved between two periods: active users, and the growth account summed over the transitions between them. */
export function movedLine(i: StoryInput, from: string, to: string): StoryLine {
  const a = i.periods.indexOf(from), b = i.periods.indexOf(to);
  const between = i.flows.transitions.filter((t) => {
    const k = i.periods.indexOf(t.to);
    return k > a && k <= b;
  });
  const sum = (f: (g: (typeof between)[number]['growth']) => number) => between.reduce((x, t) => x + f(t.growth), 0);
  const arrived = sum((g) => g.fresh), back = sum((g) => g.returned), quiet = sum((g) => g.newlyInactive);
  const before = activeAt(i, a), after = activeAt(i, b);
  const change = after - before;
  const rel = before > 0 ? ` (${signed((change / before) * 100, 0)}%)` : '';
  const qr = quiet > 0 ? `; quick ratio ${((arrived + back) / quiet).toFixed(2)}` : '';
  return {
    kind: 'moved', lead: 'What moved', periods: `${from} → ${to}`,
    text: `active users ${int(before)} → ${int(after)}${rel}: ${plural(arrived, 'user')} arrived, ${int(back)} came back and ${int(quiet)} went quiet${qr}.`,
  };
}

/** Whether the change in retention is more than chance: the overall change with Newcombe's interval and a z-test, and the states whose own change is significant (Benjamini–Hochberg). */
export function mattersLine(e: ExplainOutput, labels: Readonly<Record<string, string>>, grain: string): StoryLine | undefined {
  const rows = e.changes.filter((c) => c.segment === '' || c.segment === undefined);
  const x0 = rows.reduce((a, c) => a + c.base.retained, 0), n0 = rows.reduce((a, c) => a + c.base.n, 0);
  const x1 = rows.reduce((a, c) => a + c.compare.retained, 0), n1 = rows.reduce((a, c) => a + c.compare.n, 0);
  if (n0 === 0 || n1 === 0) return undefined;
  const d = newcombeDifference(x1, n1, x0, n0);
  const z = twoProportionZTest(x1, n1, x0, n0);
  const pts = d.difference * 100;
  const verb = Math.abs(pts) < 0.05 ? 'held at' : pts < 0 ? 'fell from' : 'rose from';
  const move = Math.abs(pts) < 0.05 ? `${pct(x1 / n1)}` : `${pct(x0 / n0)} to ${pct(x1 / n1)}`;
  const sig = e.changes.filter((c) => c.significant && c.change !== null);
  const within = sig.length
    ? `significant within states: ${sig.map((c) => `${labels[c.state] ?? c.state} ${signed(c.change! * 100)}`).join(', ')} points`
    : "no state's own retention changed significantly";
  return {
    kind: 'matters', lead: 'Does it matter', periods: `${e.base} → ${e.compare}`,
    text: `one-${grain} retention ${verb} ${move} (${signed(pts)} points, 95% interval ${signed(d.lower * 100)} to ${signed(d.upper * 100)}), ${z.p < 0.05 ? 'more than chance explains' : 'within what chance explains'} (${pText(z.p)}); ${within}.`,
  };
}

/** Why: the decomposition sentence without its head (the previous line gives the total). */
export function whyLine(e: ExplainOutput): StoryLine {
  const s = e.sentence;
  const colon = s.indexOf(': ');
  const pts = e.overall.change === null ? null : e.overall.change * 100;
  const text = colon > 0 && pts !== null ? `of the ${signed(pts)} points, ${s.slice(colon + 2)}` : s;
  return { kind: 'why', lead: 'Why', periods: `${e.base} → ${e.compare}`, text };
}

/** What comes next: active users now and at the horizon if the fitted flows hold, with their band (the states' bands summed when the projection has none for the active users). */
export function nextLine(p: ProjectOutput, i: StoryInput): StoryLine | undefined {
  const last = i.periods[i.periods.length - 1];
  const end = p.projection[p.horizon];
  const now = p.projection[0];
  if (!end || !now) return undefined;
  const active = p.states.filter((s) => i.activeStates.includes(s));
  const sum = (f: (s: string) => number) => active.reduce((a, s) => a + f(s), 0);
  const key = periodKeyOfDate(last, i.scheme);
  const endLabel = key === undefined ? `+${p.horizon}` : periodLabel(key + p.horizon, i.scheme);
  const fit = p.source.kind === 'events' ? ` of the last ${plural(p.source.fit.transitions, i.grain)}` : '';
  // the band of the active users themselves where the projection has it (as the projection chart reads),
  // else the states' bands added up (wider than the band of their sum)
  const outer = end.bands?.active?.outer;
  const band = outer ? ` (band ${int(outer[0])}–${int(outer[1])})` : end.bands ? ` (band ${int(sum((s) => end.bands!.counts[s][0]))}–${int(sum((s) => end.bands!.counts[s][1]))})` : '';
  return {
    kind: 'next', lead: 'What comes next', periods: `${last} → ${endLabel}`,
    text: `if the flows${fit} hold, active users go from ${int(sum((s) => now.counts[s]))} to about ${int(sum((s) => end.counts[s]))}${band} in ${plural(p.horizon, i.grain)}.`,
  };
}

/**
 * The story's lines, at most five: what moved, whether it matters, why, what comes next. With one
 * period only, one line says there is nothing to compare yet.
 */
export function storyLines(i: StoryInput): StoryLine[] {
  const labels = Object.fromEntries(i.states.map((s) => [s.name, s.label]));
  if (i.periods.length <= 1 || i.flows.transitions.length === 0) {
    const only = i.periods[0] ?? '';
    return [{ kind: 'only', lead: 'One period', periods: only, text: `${plural(i.users, 'user')} in the only ${i.grain} of data; a change needs two ${noun(2, i.grain)} or more.` }];
  }
  const out: StoryLine[] = [];
  if (i.comparison) out.push(movedLine(i, i.comparison.base, i.comparison.compare));
  else {
    const t = i.flows.transitions[i.flows.transitions.length - 1];
    out.push(movedLine(i, t.from, t.to));
  }
  if (i.explained) {
    const m = mattersLine(i.explained, labels, i.grain);
    if (m) out.push(m);
    out.push(whyLine(i.explained));
  }
  if (i.projection) {
    const n = nextLine(i.projection, i);
    if (n) out.push(n);
  }
  return out.slice(0, 5);
}

/**
 * The terms the story and page use, each with one line: the states (label, name and definition), and
 * quick ratio, percentage points, significance, the mix and rate parts and the band where a line uses them.
 */
export function storyTerms(lines: readonly StoryLine[], states: readonly StateInfo[], grain: string, bandPercentiles?: readonly number[]): Term[] {
  const text = lines.map(lineText).join(' ');
  const terms: Term[] = states.map((s) => ({ term: s.label === s.name ? s.name : `${s.name} (${s.label})`, meaning: `${s.definition}.` }));
  if (/quick ratio/.test(text)) terms.push({ term: 'quick ratio', meaning: `users who arrived or came back for each user who went quiet; above 1 the active audience grows.` });
  if (/retention/.test(text)) terms.push({ term: `one-${grain} retention`, meaning: `the share of users active in one ${grain} who are active in the next.` });
  if (/points/.test(text)) terms.push({ term: 'points', meaning: 'percentage points: the difference of two percentages (from 50% to 47% is −3 points).' });
  if (/chance|significant/.test(text)) terms.push({ term: 'significant', meaning: 'larger than chance would often give: p below 0.05 in a two-proportion z-test; within states, after the Benjamini–Hochberg correction for testing several at once.' });
  if (/shift toward|own retention|shift between/.test(text)) terms.push({ term: 'shift, own retention', meaning: "Kitagawa's split of a change: how much came from the mix of users moving between states (the shift) and how much from each state's own retention." });
  if (/band/.test(text) && bandPercentiles) terms.push({ term: 'band', meaning: `the ${bandPercentiles[0]}th to ${bandPercentiles[1]}th percentiles of the active users in sampled futures (the same band as the projection chart's).` });
  return terms;
}
