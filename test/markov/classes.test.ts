import { describe, expect, it } from 'vitest';
import { communicatingClasses } from '../../src/markov/classes.js';
import { MAKERSPACE_P } from './helpers.js';

describe('communicatingClasses', () => {
  it('drunkard\'s walk (Grinstead & Snell, Example 11.14): {0} and {4} closed, {1,2,3} transient', () => {
    const p = [
      [1, 0, 0, 0, 0],
      [0.5, 0, 0.5, 0, 0],
      [0, 0.5, 0, 0.5, 0],
      [0, 0, 0.5, 0, 0.5],
      [0, 0, 0, 0, 1],
    ];
    expect(communicatingClasses(p)).toEqual([
      { states: [0], closed: true, period: 1 },
      { states: [1, 2, 3], closed: false, period: 2 },
      { states: [4], closed: true, period: 1 },
    ]);
  });

  it('a 2-cycle with a transient feeder: the cycle is closed with period 2', () => {
    expect(communicatingClasses([[0, 1, 0], [1, 0, 0], [0.5, 0, 0.5]])).toEqual([
      { states: [0, 1], closed: true, period: 2 },
      { states: [2], closed: false, period: 1 },
    ]);
  });

  it('period is the gcd of cycle lengths: cycles of length 2 and 3 give 1; 3 and 6 give 3', () => {
    // 0→1→0 (2) and 0→1→2→0 (3): gcd 1.
    expect(communicatingClasses([[0, 1, 0], [0.5, 0, 0.5], [1, 0, 0]])[0].period).toBe(1);
    // 0→1→2→0 (3) and 0→1→2→3→4→5→0 (6): gcd 3.
    const p = [
      [0, 1, 0, 0, 0, 0],
      [0, 0, 1, 0, 0, 0],
      [0.5, 0, 0, 0.5, 0, 0],
      [0, 0, 0, 0, 1, 0],
      [0, 0, 0, 0, 0, 1],
      [1, 0, 0, 0, 0, 0],
    ];
    expect(communicatingClasses(p)).toEqual([{ states: [0, 1, 2, 3, 4, 5], closed: true, period: 3 }]);
  });

  it('a state without a self-loop that is never re-entered has period null', () => {
    const cls = communicatingClasses(MAKERSPACE_P);
    expect(cls[0]).toEqual({ states: [0], closed: false, period: null });
    expect(cls[1]).toEqual({ states: [1, 2, 3, 4], closed: true, period: 1 });
  });

  it('classes partition the states', () => {
    const cls = communicatingClasses(MAKERSPACE_P);
    expect(cls.flatMap((c) => c.states).sort()).toEqual([0, 1, 2, 3, 4]);
  });
});
