/** Cohort survivors for the shifted-beta-geometric fit, from the waist tables. Pure. */
import type { DurationRow, WaistTables } from '../flows/types.js';

/**
 * Survivors n₀ … n_{A−L} of each cohort, in the sense of a contractual setting with dormancy as the
 * loss: a member is lost at the first period of the inactive run that made them dormant for the
 * first time (first dormant age d − lapseLimit L). Survivors are exact up to age A − L: a member still
 * lapsing at the end of the data cannot have started that run earlier.
 */
export function cohortSurvivors(w: WaistTables, lapseLimit: number): { cohort: string; survivors: number[] }[] {
  const byCohort = new Map<string, DurationRow[]>();
  for (const r of w.durations) {
    const list = byCohort.get(r.group);
    if (list) list.push(r);
    else byCohort.set(r.group, [r]);
  }
  return w.cohorts.map((c) => {
    const rows = byCohort.get(c.cohort) ?? [];
    const last = c.active.length - 1 - lapseLimit;
    // members lost at each age (a row with d − L ≤ t is lost by age t), then a running sum: linear in the ages
    const lost = new Array<number>(Math.max(0, last + 1)).fill(0);
    for (const r of rows) {
      const age = Math.max(0, r.duration - lapseLimit);
      if (r.observed === 1 && age <= last) lost[age] += r.users;
    }
    let gone = 0;
    const survivors = lost.map((n) => c.size - (gone += n));
    return { cohort: c.cohort, survivors };
  });
}
