/**
 * Log-rank test of equal survival across k ≥ 2 groups (Mantel 1966; Peto & Peto 1972), from
 * aggregated durations.
 *
 * At each distinct event time t, with nⱼ at risk and dⱼ events in group j, n = Σnⱼ, d = Σdⱼ:
 *   Eⱼ += d·nⱼ/n,   Vⱼₗ += d(n − d)/(n − 1) · (nⱼ/n)(δⱼₗ − nₗ/n)   (hypergeometric variance; n > 1).
 * The statistic is X² = uᵀ V⁻¹ u with u = O − E over the first k − 1 groups (V restricted likewise),
 * solved by Gaussian elimination; under the null X² ~ χ²(k − 1). For k = 2 it is (O₁ − E₁)²/V₁₁.
 * See Collett, Modelling Survival Data in Medical Research, 3rd ed., ch. 2.
 *
 * A group never at risk at an event time together with another group contributes nothing (Vⱼⱼ = 0);
 * it is left out of the statistic and listed in `excluded`, and df counts the groups used.
 * Policy: see `riskTable.ts` (fewer than two usable groups, or no events ⇒ NOT_ENOUGH_DATA).
 */
import { TidemarkError } from '../errors.js';
import type { DurationRow } from '../flows/types.js';
import { chiSquareSf } from '../stats/chisq.js';
import { solve } from '../numerics/linalg.js';
import { checkDurationRows } from './riskTable.js';

export interface LogRankGroup {
  group: string;
  users: number;
  /** Observed events O. */
  observed: number;
  /** Expected events E under equal survival. */
  expected: number;
  /** Diagonal of the variance–covariance matrix, Var(O − E). */
  variance: number;
}

export interface LogRankResult {
  /** Groups used in the statistic, in the order they first appear. */
  groups: LogRankGroup[];
  /** Groups left out because they have no variance (never at risk at an event time). */
  excluded: string[];
  chiSquare: number;
  df: number;
  p: number;
}

/**
 * Log-rank test across the groups of `rows` (by `group` label).
 *
 * @throws {TidemarkError} INPUT_INVALID for a bad row; NOT_ENOUGH_DATA when fewer than two groups
 *   have users or variance, when there is no event, or when the covariance matrix is singular.
 * @example logRank(freireich) // { chiSquare: 16.7929…, df: 1, p: 4.1688…e-5, groups: [{ group: '6-MP', observed: 9, expected: 19.2505… }, …] }
 */
export function logRank(rows: readonly DurationRow[]): LogRankResult {
  checkDurationRows(rows);
  const labels: string[] = [];
  const index = new Map<string, number>();
  for (const r of rows) {
    if (r.users > 0 && !index.has(r.group)) {
      index.set(r.group, labels.length);
      labels.push(r.group);
    }
  }
  const k = labels.length;
  if (k < 2) throw new TidemarkError('NOT_ENOUGH_DATA', `logRank: needs at least two groups with users, got ${k}`);

  // Per time: events and leavers (events + censored) per group.
  const times = new Map<number, { events: number[]; leaving: number[] }>();
  const atRisk = new Array<number>(k).fill(0);
  for (const r of rows) {
    if (r.users === 0) continue;
    const j = index.get(r.group)!;
    atRisk[j] += r.users;
    const cell = times.get(r.duration) ?? { events: new Array<number>(k).fill(0), leaving: new Array<number>(k).fill(0) };
    if (r.observed === 1) cell.events[j] += r.users;
    cell.leaving[j] += r.users;
    times.set(r.duration, cell);
  }
  const users = [...atRisk];
  const O = new Array<number>(k).fill(0);
  const E = new Array<number>(k).fill(0);
  const V = Array.from({ length: k }, () => new Array<number>(k).fill(0));
  for (const t of [...times.keys()].sort((a, b) => a - b)) {
    const { events, leaving } = times.get(t)!;
    const d = events.reduce((s, v) => s + v, 0);
    const n = atRisk.reduce((s, v) => s + v, 0);
    if (d > 0) {
      for (let j = 0; j < k; j++) {
        O[j] += events[j];
        E[j] += (d * atRisk[j]) / n;
      }
      if (n > 1) {
        const f = (d * (n - d)) / (n - 1);
        for (let j = 0; j < k; j++) {
          for (let l = 0; l < k; l++) V[j][l] += f * (atRisk[j] / n) * ((j === l ? 1 : 0) - atRisk[l] / n);
        }
      }
    }
    for (let j = 0; j < k; j++) atRisk[j] -= leaving[j];
  }
  if (O.every((o) => o === 0)) throw new TidemarkError('NOT_ENOUGH_DATA', 'logRank: no events, so survival cannot be compared');

  const used = labels.map((_, j) => j).filter((j) => V[j][j] > 0);
  const excluded = labels.filter((_, j) => !(V[j][j] > 0));
  if (used.length < 2) throw new TidemarkError('NOT_ENOUGH_DATA', 'logRank: fewer than two groups share the risk set at an event time');
  const head = used.slice(0, -1);
  const u = head.map((j) => O[j] - E[j]);
  const Vh = head.map((j) => head.map((l) => V[j][l]));
  let x: number[];
  try {
    x = solve(Vh, u);
  } catch (e) {
    if (e instanceof TidemarkError && e.code === 'MATRIX_INVALID') {
      throw new TidemarkError('NOT_ENOUGH_DATA', 'logRank: the covariance matrix of the groups is singular');
    }
    throw e;
  }
  const chiSquare = Math.max(0, u.reduce((s, v, i) => s + v * x[i], 0));
  const df = used.length - 1;
  return {
    groups: used.map((j) => ({ group: labels[j], users: users[j], observed: O[j], expected: E[j], variance: V[j][j] })),
    excluded,
    chiSquare,
    df,
    p: chiSquareSf(chiSquare, df),
  };
}
