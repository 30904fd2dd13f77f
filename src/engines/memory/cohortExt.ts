/**
 * Builds an extended cohort row ({@link CohortRowExt}) from each member's active ages — the helper an
 * in-memory engine calls per cohort so that no per-member rows cross the waist.
 *
 * For each member and age a, next(a) is the member's first active age ≥ a. A member counts in
 * window(a, b) exactly when next(a) ≤ b, so a histogram of next(a) − a per a, summed cumulatively,
 * gives windowActive; lastActiveAge is the histogram of each member's largest active age.
 * Cost: O(A) per member plus O(A²) per cohort.
 */
import { TidemarkError } from '../../errors.js';
import type { CohortRowExt } from '../../explain/cohorts.js';

/**
 * The cohort row with `active`, `lastActiveAge` and `windowActive` for ages 0 … lastAge.
 *
 * @param members each member's active ages (any order, repeats allowed); each must include 0
 * @throws {TidemarkError} INPUT_INVALID when lastAge is not an integer ≥ 0, or a member's ages are not
 *   integers in 0 … lastAge or lack age 0.
 * @example cohortRowFromUsers('2026-01-05', 2, [[0, 1], [0, 2], [0]])
 *   // { cohort: '2026-01-05', size: 3, active: [3, 1, 1], lastActiveAge: [1, 1, 1], windowActive: [[3, 3, 3], [1, 2], [1]] }
 */
export function cohortRowFromUsers(cohort: string, lastAge: number, members: Iterable<readonly number[]>): CohortRowExt {
  if (!(Number.isInteger(lastAge) && lastAge >= 0)) throw new TidemarkError('INPUT_INVALID', `lastAge must be an integer ≥ 0, got ${lastAge}`, { key: 'lastAge' });
  const A = lastAge;
  const active = new Array<number>(A + 1).fill(0);
  const lastActiveAge = new Array<number>(A + 1).fill(0);
  const gap = Array.from({ length: A + 1 }, (_, a) => new Array<number>(A - a + 1).fill(0));
  const flags = new Array<boolean>(A + 1);
  let size = 0;
  let m = 0;
  for (const ages of members) {
    flags.fill(false);
    for (const age of ages) {
      if (!(Number.isInteger(age) && age >= 0 && age <= A)) {
        throw new TidemarkError('INPUT_INVALID', `cohort '${cohort}': member ${m} has active age ${age} outside 0…${A}`, { key: `members[${m}]` });
      }
      flags[age] = true;
    }
    if (!flags[0]) throw new TidemarkError('INPUT_INVALID', `cohort '${cohort}': member ${m} is not active at age 0`, { key: `members[${m}]` });
    size++;
    let next = -1;
    for (let a = A; a >= 0; a--) {
      if (flags[a]) {
        active[a]++;
        if (next < 0) lastActiveAge[a]++;
        next = a;
      }
      if (next >= 0) gap[a][next - a]++;
    }
    m++;
  }
  const windowActive = gap.map((row) => {
    let running = 0;
    return row.map((v) => (running += v));
  });
  return { cohort, size, active, lastActiveAge, windowActive };
}
