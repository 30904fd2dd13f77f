/** Test helpers: nested closeness, typed-error expectations, and makerspace fixtures. */
import { expect } from 'vitest';
import { TidemarkError, type ErrorCode } from '../../src/errors.js';
import type { WaistTables } from '../../src/flows/types.js';

type Nested = number | null | Nested[];

/** Every number of `actual` within `tol` of `expected` (same shape; nulls must match). */
export function expectClose(actual: Nested, expected: Nested, tol = 1e-9, path = ''): void {
  if (Array.isArray(expected)) {
    expect(Array.isArray(actual), `${path} is an array`).toBe(true);
    const a = actual as Nested[];
    expect(a.length, `${path} length`).toBe(expected.length);
    expected.forEach((e, i) => expectClose(a[i], e, tol, `${path}[${i}]`));
  } else if (expected === null) {
    expect(actual, path).toBeNull();
  } else {
    expect(typeof actual, path).toBe('number');
    expect(Math.abs((actual as number) - expected), `${path}: ${String(actual)} vs ${expected}`).toBeLessThanOrEqual(tol);
  }
}

/** Runs `fn`, expects a TidemarkError with `code` whose message matches every pattern; returns it. */
export function expectRefusal(fn: () => unknown, code: ErrorCode, ...patterns: (string | RegExp)[]): TidemarkError {
  let caught: unknown;
  try {
    fn();
  } catch (e) {
    caught = e;
  }
  expect(caught, 'expected a TidemarkError').toBeInstanceOf(TidemarkError);
  const err = caught as TidemarkError;
  expect(err.code).toBe(code);
  for (const p of patterns) expect(err.message).toMatch(p);
  expect(err.message).not.toMatch(/\n/);
  return err;
}

/** The default lifecycle states of the makerspace booking app's analysis. */
export const STATES = ['fresh', 'engaged', 'returned', 'lapsing', 'dormant'];

/** Weekly period labels (Mondays) from 2026-01-05. */
export function weeks(n: number): string[] {
  return Array.from({ length: n }, (_, k) => new Date(Date.UTC(2026, 0, 5 + 7 * k)).toISOString().slice(0, 10));
}

/**
 * Waist tables whose flows are exactly the expected flows of `matrices[t]` (fractional counts):
 * counts_t[i][j] = x_t[i]·P_t[i][j], x_{t+1} = column sums + fresh[t] in the fresh column.
 * `matrices` may hold one matrix (used every period) or one per transition.
 */
export function exactTables(matrices: number[][][], start: number[], fresh: number[], states = STATES): WaistTables {
  const periods = weeks(fresh.length + 1);
  const stateCounts = [start.slice()];
  const transitions = fresh.map((f, t) => {
    const p = matrices[Math.min(t, matrices.length - 1)];
    const x = stateCounts[t];
    const counts = x.map((xi, i) => p[i].map((pij) => xi * pij));
    stateCounts.push(states.map((_, j) => counts.reduce((s, row) => s + row[j], 0) + (j === 0 ? f : 0)));
    return { from: periods[t], to: periods[t + 1], counts, fresh: f };
  });
  return { states, activeStates: states.slice(0, 3), arrivalState: states[0], exitState: states[states.length - 1], periods, warmup: 0, stateCounts, transitions, tenureCells: [], cohorts: [], durations: [] };
}

/** A lifecycle-shaped chain for the makerspace fixtures (rows: fresh, engaged, returned, lapsing, dormant). */
export const MAKERSPACE_P = [
  [0, 0.55, 0, 0.3, 0.15],
  [0, 0.7, 0, 0.2, 0.1],
  [0, 0.6, 0, 0.25, 0.15],
  [0, 0, 0.3, 0.2, 0.5],
  [0, 0, 0.1, 0, 0.9],
];
