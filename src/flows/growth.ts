/**
 * Growth accounting over one transition (common practice in product analytics; no single source):
 *
 *   active(t) = active(t−1) − newlyInactive + fresh + returned
 *
 * where newlyInactive counts users active at t−1 and inactive at t, and returned counts users
 * inactive at t−1 and active at t. The quick ratio is (fresh + returned) / newlyInactive, null when
 * nobody became inactive. Example: 100 active, 20 go inactive, 15 fresh, 10 return → 105 active,
 * quick ratio 25/20 = 1.25.
 */
import type { TransitionCounts } from './types.js';

export interface GrowthAccount {
  activeBefore: number;
  newlyInactive: number;
  fresh: number;
  returned: number;
  activeAfter: number;
  /** activeAfter − (activeBefore − newlyInactive + fresh + returned); 0 when the tables are consistent. */
  residual: number;
  quickRatio: number | null;
}

/** Growth account of a transition; `active[s]` says whether states[s] is an active state. */
export function growthAccount(t: TransitionCounts, active: boolean[]): GrowthAccount {
  let activeBefore = 0, newlyInactive = 0, returned = 0, stayed = 0;
  const S = active.length;
  for (let i = 0; i < S; i++) {
    for (let j = 0; j < S; j++) {
      const c = t.counts[i][j];
      if (active[i]) activeBefore += c;
      if (active[i] && !active[j]) newlyInactive += c;
      if (!active[i] && active[j]) returned += c;
      if (active[i] && active[j]) stayed += c;
    }
  }
  const activeAfter = stayed + returned + t.fresh;
  return {
    activeBefore,
    newlyInactive,
    fresh: t.fresh,
    returned,
    activeAfter,
    residual: activeAfter - (activeBefore - newlyInactive + t.fresh + returned),
    quickRatio: newlyInactive === 0 ? null : (t.fresh + returned) / newlyInactive,
  };
}
