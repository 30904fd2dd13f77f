import { describe, expect, it } from 'vitest';
import type { DurationRow } from '../../src/flows/types.js';
import { MAX_LOGRANK_GROUPS, survivalCurves } from '../../src/survival/run.js';

describe('survivalCurves', () => {
  it('draws every group but skips the log-rank test beyond 100 groups, saying why', () => {
    const rows = (groups: number): DurationRow[] =>
      Array.from({ length: groups }, (_, g) => [
        { group: `g${g}`, duration: 1 + (g % 4), observed: 1 as const, users: 3 },
        { group: `g${g}`, duration: 6, observed: 0 as const, users: 2 },
      ]).flat();
    const many = survivalCurves(rows(MAX_LOGRANK_GROUPS + 1), 'cohort');
    expect(many.groups).toHaveLength(MAX_LOGRANK_GROUPS + 1);
    expect(many.logRank).toBeNull();
    expect(many.note).toMatch(/log-rank test not run across 101 groups.*--merge/);
    const few = survivalCurves(rows(4), 'cohort');
    expect(few.logRank).not.toBeNull();
  });
});
