import { describe, expect, it } from 'vitest';
import { backtest } from '../../src/markov/backtest.js';
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
