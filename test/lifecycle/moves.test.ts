import { describe, expect, it } from 'vitest';
import { lifecycleMoves } from '../../src/lifecycle/moves.js';
import { walkedMoves } from './walk.js';

describe('lifecycleMoves', () => {
  it('lists exactly the moves the machine makes on every path (lapse limits 0 to 3, exhaustive)', () => {
    // quiet runs longer than lapseLimit + 2 periods add no new move, so lapseLimit + 4 periods cover them all
    for (const L of [0, 1, 2, 3]) {
      const walked = walkedMoves(L, L + 4);
      const m = lifecycleMoves({ lapseLimit: L });
      expect(new Set(m.list), `lapseLimit ${L}`).toEqual(walked.moves);
      expect(new Set(m.arrivals)).toEqual(walked.arrivals);
    }
  });

  it('matches the state table of the rules (lapseLimit 2), worked by hand from the README', () => {
    // fresh/engaged/returned: active → engaged, inactive → lapsing; lapsing: active → returned,
    // inactive → lapsing (quiet ≤ 2) or dormant; dormant: active → returned, inactive → dormant
    expect(lifecycleMoves({ lapseLimit: 2 }).list.sort()).toEqual([
      'dormant->dormant', 'dormant->returned', 'engaged->engaged', 'engaged->lapsing', 'fresh->engaged', 'fresh->lapsing',
      'lapsing->dormant', 'lapsing->lapsing', 'lapsing->returned', 'returned->engaged', 'returned->lapsing',
    ]);
  });

  it('with lapseLimit 1 a lapsing user cannot stay lapsing; with 0 nobody is ever lapsing', () => {
    const one = lifecycleMoves({ lapseLimit: 1 });
    expect(one.allows('lapsing', 'lapsing')).toBe(false);
    expect(one.allows('lapsing', 'dormant')).toBe(true);
    expect(one.why('lapsing', 'lapsing')).toBe('a lapsing user who is inactive the next period becomes dormant');
    const zero = lifecycleMoves({ lapseLimit: 0 });
    expect(zero.reachable).not.toContain('lapsing');
    expect(zero.allows('fresh', 'dormant')).toBe(true);
    expect(zero.why('lapsing', 'dormant')).toBe('no user is ever lapsing under these rules');
    expect(zero.why('fresh', 'lapsing')).toBe('no user is ever lapsing under these rules');
  });

  it('explains an impossible move and offers the possible one with the same activity', () => {
    const m = lifecycleMoves({ lapseLimit: 2 });
    expect(m.allows('lapsing', 'engaged')).toBe(false);
    expect(m.why('lapsing', 'engaged')).toBe('a lapsing user who is active the next period becomes returned');
    expect(m.instead('lapsing', 'engaged')).toBe('returned');
    expect(m.why('engaged', 'returned')).toBe('an engaged user who is active the next period becomes engaged');
    expect(m.instead('engaged', 'returned')).toBe('engaged');
    expect(m.why('dormant', 'lapsing')).toBe('a dormant user who is inactive the next period becomes dormant');
    expect(m.why('engaged', 'fresh')).toMatch(/only new users enter fresh/);
    expect(m.instead('engaged', 'fresh')).toBeUndefined();
    expect(m.why('lapsing', 'returned')).toBe('');
    // every suggestion is itself a possible move
    for (const a of ['fresh', 'engaged', 'returned', 'lapsing', 'dormant']) {
      for (const b of ['fresh', 'engaged', 'returned', 'lapsing', 'dormant']) {
        const alt = m.instead(a, b);
        if (alt !== undefined) expect(m.allows(a, alt), `${a}->${b} suggests ${a}->${alt}`).toBe(true);
      }
    }
  });
});
