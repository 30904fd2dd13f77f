/**
 * The rules' bound messages write whole numbers with a formatter of their own (no ICU at start-up); it
 * must write what `Number.prototype.toLocaleString('en-US')` (the ECMA-402 reference, through node's
 * ICU) writes, for every whole number the bounds can hold (fast-check, seeded) and the edges.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { fmt } from '../../src/rules/schema.js';

describe('rules: thousands separators of the bound messages', () => {
  it('equal toLocaleString("en-US") on whole numbers (fast-check) and on the edges', () => {
    for (const n of [0, 1, -1, 999, 1000, -1000, 99_999, 100_000, 1_000_000, -1_000_000, Number.MAX_SAFE_INTEGER, Number.MIN_SAFE_INTEGER, 2 ** 31, 0.5, 1e21, Infinity, -Infinity, NaN]) {
      expect(fmt(n)).toBe(n.toLocaleString('en-US'));
    }
    fc.assert(fc.property(fc.maxSafeInteger(), (n) => fmt(n) === n.toLocaleString('en-US')), { seed: 3030, numRuns: 2000 });
  });
});
