/**
 * The survival job: Kaplan–Meier curves of the periods from first active to first dormant (right-
 * censored at the end of the data), by group, with the log-rank test across groups. Pure.
 */
import { TidemarkError } from '../errors.js';
import type { DurationRow } from '../flows/types.js';
import { kaplanMeierByGroup } from './kaplanMeier.js';
import { logRank } from './logRank.js';

export interface SurvivalOutput {
  measure: string;
  groupedBy: string;
  groups: { group: string; users: number; events: number; median: number | null; points: { t: number; survival: number; atRisk: number; events: number; censored: number; se: number; lower: number; upper: number }[] }[];
  logRank: { chiSquare: number; df: number; pValue: number; excluded: string[] } | null;
  note?: string;
}

/** Merge consecutive cohort labels into blocks of `size` (labelled by the block's first cohort). */
export function mergeCohorts(rows: readonly DurationRow[], size: number): DurationRow[] {
  if (!(Number.isInteger(size) && size >= 1)) throw new TidemarkError('INPUT_INVALID', `cohorts are merged in blocks of a whole number ≥ 1, not ${size}`, { key: 'size' });
  const labels = [...new Set(rows.map((r) => r.group))].sort();
  const blockOf = new Map(labels.map((l, i) => [l, labels[i - (i % size)]]));
  const m = new Map<string, DurationRow>();
  for (const r of rows) {
    const group = blockOf.get(r.group) as string;
    const k = `${group}|${r.duration}|${r.observed}`;
    const row = m.get(k) ?? { ...r, group, users: 0 };
    row.users += r.users;
    m.set(k, row);
  }
  return [...m.values()];
}

/** Groups the log-rank test compares at most (a test across more says little and costs groups³). */
export const MAX_LOGRANK_GROUPS = 100;

export function survivalCurves(rows: readonly DurationRow[], groupedBy: string, measure = 'periods from first active to first dormant'): SurvivalOutput {
  const curves = kaplanMeierByGroup(rows);
  let lr: SurvivalOutput['logRank'] = null;
  let note: string | undefined;
  if (curves.length > MAX_LOGRANK_GROUPS) {
    note = `log-rank test not run across ${curves.length} groups (its cost grows with the cube of the groups; at most ${MAX_LOGRANK_GROUPS}): pool cohorts with --merge, or compare fewer groups`;
  } else if (curves.length >= 2) {
    try {
      const r = logRank(rows);
      lr = { chiSquare: r.chiSquare, df: r.df, pValue: r.p, excluded: r.excluded };
    } catch (e) {
      if (!(e instanceof TidemarkError && e.code === 'NOT_ENOUGH_DATA')) throw e;
      note = `log-rank test not possible: ${e.message}`;
    }
  }
  return {
    measure,
    groupedBy,
    groups: curves.map(({ group, curve }) => ({
      group,
      users: curve.users,
      events: curve.events,
      median: curve.median,
      points: curve.points.map((p) => ({ t: p.t, survival: p.survival, atRisk: p.atRisk, events: p.events, censored: p.censored, se: p.se, lower: p.lower, upper: p.upper })),
    })),
    logRank: lr,
    note,
  };
}
