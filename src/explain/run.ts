/**
 * The explain job: why overall retention moved between two periods. Status-split retention with
 * intervals and tests, the Kitagawa mix-versus-rate decomposition by prior state (and by tenure band,
 * and by an attribute when the waist has one), and one plain sentence. Pure: no I/O.
 */
import { TidemarkError, showValue } from '../errors.js';
import { periodHint } from '../periods/suggest.js';
import type { RetentionCell, WaistTables } from '../flows/types.js';
import type { KitagawaResult } from './kitagawa.js';
import { decomposeRetention, retentionChanges, type RetentionChange } from './retention.js';
import { decompositionSentence } from './sentence.js';

export interface ExplainOptions {
  /** Label of the base period (the period retained into); default the one before `compare`. */
  base?: string;
  /** Label of the compared period; default the latest. */
  compare?: string;
  /** 'one-week', 'one-day' or 'one-month'. */
  grainWord: string;
  minCell: number;
  /** False discovery rate for the significance flags; default 0.05. */
  q?: number;
  /** Plural nouns for the states in sentences (the waist's state labels); default the base states' own. */
  stateLabels?: Readonly<Record<string, string>>;
}

export interface GroupRow {
  group: string;
  nBase: number;
  nCompare: number;
  weightBase: number;
  weightCompare: number;
  rateBase: number | null;
  rateCompare: number | null;
  rateEffect: number | null;
  mixEffect: number | null;
}

export interface Decomposition {
  overall: { base: number | null; compare: number | null; change: number | null };
  rateEffect: number | null;
  mixEffect: number | null;
  simpson: boolean;
  groups: GroupRow[];
  sentence: string;
}

export interface ExplainOutput {
  base: string;
  compare: string;
  /** Retention into P: the share of users in an active state in the period before P who are active in P. */
  definition: string;
  overall: Decomposition['overall'];
  rateEffect: number | null;
  mixEffect: number | null;
  simpson: boolean;
  sentence: string;
  byState: (Omit<GroupRow, 'group'> & { state: string })[];
  /** Change of each state's retention, with Newcombe interval, z-test and BH-adjusted p. */
  changes: RetentionChange[];
  byTenure: Decomposition;
  tenureChanges: RetentionChange[];
  bySegment?: Decomposition & { by: string; changes: RetentionChange[]; caution: string };
}

/**
 * Sum cells over one dimension: keep 'state' (summing segments; segment becomes '') or keep
 * 'segment' (summing states; state becomes 'all').
 */
export function collapseCells(cells: readonly RetentionCell[], keep: 'state' | 'segment'): RetentionCell[] {
  const m = new Map<string, RetentionCell>();
  for (const c of cells) {
    const state = keep === 'state' ? c.state : 'all';
    const segment = keep === 'segment' ? c.segment : '';
    const k = `${c.to}|${state}|${segment}`;
    const row = m.get(k) ?? { to: c.to, state, segment, n: 0, retained: 0 };
    row.n += c.n;
    row.retained += c.retained;
    m.set(k, row);
  }
  return [...m.values()];
}

function decomposition(r: KitagawaResult, sentence: string): Decomposition {
  return {
    overall: { base: r.base, compare: r.compare, change: r.change },
    rateEffect: r.rateEffect,
    mixEffect: r.mixEffect,
    simpson: r.simpson,
    groups: r.groups.map((g) => ({
      group: g.key, nBase: g.totalBase, nCompare: g.totalCompare, weightBase: g.weightBase, weightCompare: g.weightCompare,
      rateBase: g.rateBase, rateCompare: g.rateCompare, rateEffect: g.rateEffect, mixEffect: g.mixEffect,
    })),
    sentence,
  };
}

function checkPeriod(label: string, periods: string[], key: 'base' | 'compare'): void {
  if (!periods.includes(label)) {
    throw new TidemarkError('RANGE_INVALID', `${showValue(label)} is not a period retained into`, { key }, periodHint(label, periods));
  }
}

/**
 * The plural noun of a tenure band for sentences, from its label (flows/tenure.ts `bandLabels`) and
 * the grain: '0' → 'users in their first week', '1-3' → 'users 1–3 weeks in', '12+' → 'users 12+
 * weeks in', '1' → 'users 1 week in'.
 */
export function tenureLabel(band: string, grain: string): string {
  if (band === '0') return `users in their first ${grain}`;
  const one = band === '1';
  return `users ${band.replace('-', '–')} ${one ? grain : `${grain}s`} in`;
}

/**
 * Explain the change of retention from `base` to `compare`.
 * @throws TidemarkError NOT_ENOUGH_DATA with fewer than two transitions; RANGE_INVALID for an unknown period (with "did you mean").
 */
export function explainRetention(w: WaistTables, o: ExplainOptions): ExplainOutput {
  const into = w.transitions.map((t) => t.to);
  if (into.length < 2 && !(o.base && o.compare)) {
    throw new TidemarkError('NOT_ENOUGH_DATA', `explaining a change needs two periods retained into; the data have ${into.length}`, {}, 'Use a longer event log');
  }
  const compare = o.compare ?? into[into.length - 1];
  checkPeriod(compare, into, 'compare');
  const base = o.base ?? into[into.indexOf(compare) - 1];
  if (base === undefined) throw new TidemarkError('RANGE_INVALID', `no period before ${compare} to compare with`, { key: 'base' }, 'Name the base period');
  checkPeriod(base, into, 'base');
  const byStateCells = collapseCells(w.tenureCells, 'state');
  const opts = { base, compare };
  const main = decomposeRetention(byStateCells, { ...opts, by: 'state' });
  const sentence = decompositionSentence(main, { grain: o.grainWord, labels: o.stateLabels });
  const tenure = decomposeRetention(w.tenureCells, { ...opts, by: 'segment' });
  const labelsTenure = Object.fromEntries(tenure.groups.map((g) => [g.key, tenureLabel(g.key, o.grainWord.replace(/^one-/, ''))]));
  const out: ExplainOutput = {
    base,
    compare,
    definition: `Retention into P is the share of users in an active state (${w.activeStates.join(', ')}) in the period before P who are active in P.`,
    overall: { base: main.base, compare: main.compare, change: main.change },
    rateEffect: main.rateEffect,
    mixEffect: main.mixEffect,
    simpson: main.simpson,
    sentence,
    byState: main.groups.map((g) => ({
      state: g.key, nBase: g.totalBase, nCompare: g.totalCompare, weightBase: g.weightBase, weightCompare: g.weightCompare,
      rateBase: g.rateBase, rateCompare: g.rateCompare, rateEffect: g.rateEffect, mixEffect: g.mixEffect,
    })),
    changes: retentionChanges(byStateCells, { ...opts, minN: o.minCell, q: o.q }),
    byTenure: decomposition(tenure, decompositionSentence(tenure, { grain: o.grainWord, labels: labelsTenure })),
    tenureChanges: retentionChanges(w.tenureCells, { ...opts, minN: o.minCell, q: o.q }),
  };
  if (w.segmentCells) {
    const cells = w.segmentCells.cells;
    const seg = decomposeRetention(cells, { ...opts, by: 'segment' });
    // a value from the data enters the sentence escaped and shortened; a per-person column's never does
    const labels = Object.fromEntries(seg.groups.map((g) => [g.key, `${showValue(g.key, 40)} users`]));
    const unnamedGroups = Boolean(w.segmentCells.perPerson);
    out.bySegment = {
      by: w.segmentCells.by,
      ...decomposition(seg, decompositionSentence(seg, { grain: o.grainWord, labels, behaviouralGroups: true, unnamedGroups })),
      changes: retentionChanges(collapseCells(cells, 'segment'), { ...opts, minN: o.minCell, q: o.q }),
      caution: 'Groups split by an attribute or behaviour show which groups go with staying; that is a correlation, not a cause. Test a change with an experiment before acting on it.',
    };
  }
  return out;
}
