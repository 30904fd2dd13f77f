import { describe, expect, it } from 'vitest';
import { backtest, intervalScore } from '../../src/markov/backtest.js';
import { MAKERSPACE_P, exactTables, expectClose, expectRefusal } from './helpers.js';

const start = [40, 100, 20, 30, 50];
const fresh = Array.from({ length: 12 }, () => 40);

describe('backtest', () => {
  it('on tables generated exactly by one chain, the projection error is 0 and the naive error is not', () => {
    // The mix is still moving (a young member base, every state populated so no fitted row is empty),
    // so "mix stays as at origin" is wrong while the fitted chain is exact.
    const tables = exactTables([MAKERSPACE_P], start, fresh);
    const r = backtest(tables, { horizon: 3, minFit: 2, samples: 20 });
    expect(r.rows.map((x) => x.horizon)).toEqual([1, 2, 3]);
    for (const row of r.rows) {
      expectClose(row.mae, 0, 1e-12);
      expect(row.naiveMae).toBeGreaterThan(0.005);
    }
    expect(r.rows[2].naiveMae).toBeGreaterThan(r.rows[0].naiveMae);
  });

  it('counts origins: 12 transitions, minFit 2 → origins after transitions 2…11; fewer at longer horizons', () => {
    const r = backtest(exactTables([MAKERSPACE_P], start, fresh), { horizon: 3, minFit: 2, samples: 10 });
    // Origins are periods 2…11 (periods 0…12 exist); horizon h needs period origin + h ≤ 12.
    expect(r.origins).toEqual(exactTables([MAKERSPACE_P], start, fresh).periods.slice(2, 12));
    expect(r.rows.map((x) => x.origins)).toEqual([10, 9, 8]);
  });

  it('deterministic moves give zero-width bands that cover every actual share', () => {
    const p = [[0, 1, 0, 0, 0], [0, 0, 0, 1, 0], [0, 1, 0, 0, 0], [0, 0, 0, 0, 1], [0, 0, 1, 0, 0]];
    const r = backtest(exactTables([p], [40, 100, 20, 30, 10], fresh), { horizon: 2, minFit: 3, samples: 10 });
    for (const row of r.rows) {
      expect(row.coverage).toBe(1);
      expectClose(row.mae, 0, 1e-12);
    }
  });

  it('after a change of regime, coverage drops and a short window recovers sooner than fitting on all', () => {
    // Weeks 0–7: MAKERSPACE_P; weeks 8–11: engaged members lapse far more often.
    const shifted = MAKERSPACE_P.map((row) => row.slice());
    shifted[1] = [0, 0.3, 0, 0.5, 0.2];
    const matrices = [...Array.from({ length: 8 }, () => MAKERSPACE_P), shifted];
    const tables = exactTables(matrices, [40, 10000, 500, 800, 1500], fresh.map(() => 400));
    const all = backtest(tables, { horizon: 1, minFit: 2, samples: 50 });
    const short = backtest(tables, { horizon: 1, minFit: 2, window: 2, samples: 50 });
    expect(all.rows[0].mae).toBeGreaterThan(0.001);
    expect(short.rows[0].mae).toBeLessThan(all.rows[0].mae);
    expect(all.rows[0].coverage).toBeLessThan(1);
  });

  it('pools each origin’s counts as a plain sum would (checked by an independent loop, all origins and a window)', () => {
    // regime change at week 6, so every origin's fit differs; the one-step point forecast is
    // x·P̂ + mean fresh, P̂ the row-normalised sum of the counts in the fit window
    const shifted = MAKERSPACE_P.map((row) => row.slice());
    shifted[1] = [0, 0.3, 0, 0.5, 0.2];
    const tables = exactTables([...Array.from({ length: 6 }, () => MAKERSPACE_P), shifted], [40, 900, 50, 80, 150], [40, 55, 30, 70, 40, 45, 60, 35, 50, 40, 65, 30]);
    for (const window of [undefined, 3]) {
      let sum = 0, n = 0;
      for (let k = 1; k < tables.transitions.length - 1; k++) {
        const lo = window === undefined ? 0 : Math.max(0, k + 1 - window);
        const S = tables.states.length;
        const pooled = Array.from({ length: S }, () => new Array<number>(S).fill(0));
        let fresh = 0;
        for (let t = lo; t <= k; t++) {
          for (let i = 0; i < S; i++) for (let j = 0; j < S; j++) pooled[i][j] += tables.transitions[t].counts[i][j];
          fresh += tables.transitions[t].fresh;
        }
        const x = tables.stateCounts[k + 1];
        const next = Array.from({ length: S }, (_, j) => x.reduce((a, xi, i) => a + xi * pooled[i][j] / pooled[i].reduce((u, v) => u + v, 0), 0) + (j === 0 ? fresh / (k + 1 - lo) : 0));
        const total = next.reduce((a, b) => a + b, 0);
        const actual = tables.stateCounts[k + 2];
        const actualTotal = actual.reduce((a, b) => a + b, 0);
        sum += next.reduce((a, v, j) => a + Math.abs(v / total - actual[j] / actualTotal), 0) / S;
        n++;
      }
      const r = backtest(tables, { horizon: 1, minFit: 2, window, samples: 2, inflowMethod: 'mean' });
      expect(r.rows[0].origins).toBe(n);
      expectClose(r.rows[0].mae, sum / n, 1e-12);
    }
  });

  it('maxOrigins scores only the latest origins', () => {
    const tables = exactTables([MAKERSPACE_P], start, fresh);
    const all = backtest(tables, { horizon: 3, minFit: 2, samples: 10 });
    const latest = backtest(tables, { horizon: 3, minFit: 2, samples: 10, maxOrigins: 4 });
    expect(latest.origins).toEqual(all.origins.slice(-4));
    expect(latest.rows.map((x) => x.origins)).toEqual([4, 3, 2]);
    expectRefusal(() => backtest(tables, { maxOrigins: 0 }), 'INPUT_INVALID', /maxOrigins/);
  });

  it('same seed, same result', () => {
    const tables = exactTables([MAKERSPACE_P], start, fresh);
    expect(backtest(tables, { samples: 15, seed: 9 })).toEqual(backtest(tables, { samples: 15, seed: 9 }));
  });

  it('refuses too little data as NOT_ENOUGH_DATA, with the counts in the message', () => {
    const tables = exactTables([MAKERSPACE_P], start, [40, 40, 40]);
    expectRefusal(() => backtest(tables, { minFit: 3 }), 'NOT_ENOUGH_DATA', /needs 3 transitions before an origin.*have 3 transitions/);
  });

  it('refuses bad options', () => {
    const tables = exactTables([MAKERSPACE_P], start, fresh);
    expectRefusal(() => backtest(tables, { horizon: 0 }), 'INPUT_INVALID', /horizon/);
    expectRefusal(() => backtest(tables, { minFit: 4, window: 2 }), 'INPUT_INVALID', /window must be a whole number from 4/);
    expectRefusal(() => backtest(tables, { band: [90, 10] }), 'INPUT_INVALID', /band must be/);
  });
});

describe('backtest scores (interval score, baselines)', () => {
  it('intervalScore follows Gneiting & Raftery (2007, §6.2): width plus 2/α times the miss (hand values)', () => {
    expect(intervalScore(1, 3, 2, 0.2)).toBe(2); // inside: the width
    expect(intervalScore(1, 3, 4, 0.2)).toBeCloseTo(2 + 10 * 1, 12); // above by 1
    expect(intervalScore(1, 3, 0.5, 0.5)).toBeCloseTo(2 + 4 * 0.5, 12); // below by 0.5, α = 0.5
  });

  it('no-change and seasonal-naive baselines match a plain loop at one period ahead (normal intervals, FPP3 §5.5)', () => {
    // arrivals with a 4-period cycle, so that the mix has a season of 4
    const cyc = Array.from({ length: 16 }, (_, t) => [30, 90, 50, 70][t % 4]);
    const tables = exactTables([MAKERSPACE_P], [40, 100, 20, 30, 50], cyc);
    const r = backtest(tables, { horizon: 1, minFit: 4, window: 4, samples: 20, season: 4 });
    const share = tables.stateCounts.map((x) => x.map((v) => v / x.reduce((a, b) => a + b, 0)));
    const z = 1.2815515655446004; // Φ⁻¹(0.9), the 80% interval
    let mae = 0, naive = 0, seasonal = 0, sCells = 0, cells = 0;
    const rms = (v: number[]) => Math.sqrt(v.reduce((a, x) => a + x * x, 0) / v.length);
    for (let k = 3; k < tables.transitions.length - 1; k++) {
      const p = k + 1, first = Math.max(0, k + 1 - 4);
      for (let s = 0; s < 5; s++) {
        const a = share[p + 1][s];
        const sdN = rms(Array.from({ length: p - first }, (_, i) => share[first + 1 + i][s] - share[first + i][s]));
        naive += intervalScore(share[p][s] - z * sdN, share[p][s] + z * sdN, a, 0.2);
        cells++;
        const from = Math.max(first, 4);
        if (p - from + 1 >= 2) {
          const sdS = rms(Array.from({ length: p - from + 1 }, (_, i) => share[from + i][s] - share[from + i - 4][s]));
          const f = share[p + 1 - 4][s];
          seasonal += intervalScore(f - z * sdS, f + z * sdS, a, 0.2);
          mae += Math.abs(f - a);
          sCells++;
        }
      }
    }
    expect(r.rows[0].intervalScore.noChange.outer).toBeCloseTo(naive / cells, 12);
    expect(r.rows[0].seasonalMae).toBeCloseTo(mae / sCells, 12);
    expect(r.rows[0].intervalScore.seasonalNaive!.outer).toBeCloseTo(seasonal / sCells, 12);
    expect(r.season).toBe(4);
    expect(r.seasonalNote).toBeUndefined();
  });

  it('without a season of history the seasonal baseline is left out, and the output says why', () => {
    const r = backtest(exactTables([MAKERSPACE_P], start, fresh), { horizon: 2, minFit: 2, samples: 10, season: 52 });
    expect(r.rows.every((x) => x.seasonalMae === null && x.intervalScore.seasonalNaive === null)).toBe(true);
    expect(r.seasonalNote).toMatch(/needs 54 periods of history before an origin/);
  });
});
