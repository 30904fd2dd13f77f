import type { DurationRow } from '../../src/flows/types.js';

/**
 * Freireich et al. (1963), Blood 21:699–716: remission times in weeks, 6-MP and placebo
 * (negative = censored), as listed in test/fixtures/published-values.md.
 */
export const SIX_MP = [6, 6, 6, -6, 7, -9, 10, -10, -11, 13, 16, -17, -19, -20, 22, 23, -25, -32, -32, -34, -35];
export const PLACEBO = [1, 1, 2, 2, 3, 4, 4, 5, 5, 8, 8, 8, 8, 11, 11, 12, 12, 15, 17, 22, 23];

export function rowsOf(group: string, times: readonly number[]): DurationRow[] {
  return times.map((v) => ({ group, duration: Math.abs(v), observed: v > 0 ? 1 : 0, users: 1 }));
}

export const FREIREICH: DurationRow[] = [...rowsOf('6-MP', SIX_MP), ...rowsOf('placebo', PLACEBO)];
