import { describe, expect, it } from 'vitest';
import { backtest, bandScore, intervalScore, widen, widthFactors, type BacktestCell } from '../../src/markov/backtest.js';
import { centreShift, conformalQuantile, pooledRecords, recalibratedBands, sideScores, signedError, usedRecords, weightedMedian, type BandScoreRecord } from '../../src/markov/recalibrate.js';
import { simulatedChain } from './chains.js';
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
    // the model's bands (no recalibration: `calibrate: false`, and `modelCoverage` of the default run);
    // the recalibrated bands narrow them toward their nominal share (checked below)
    const p = [[0, 1, 0, 0, 0], [0, 0, 0, 1, 0], [0, 1, 0, 0, 0], [0, 0, 0, 0, 1], [0, 0, 1, 0, 0]];
    const tables = exactTables([p], [40, 100, 20, 30, 10], fresh);
    const r = backtest(tables, { horizon: 2, minFit: 3, samples: 10, calibrate: false });
    expect(r.recalibration).toBeNull();
    for (const row of r.rows) {
      expect(row.coverage).toBe(1);
      expect(row.modelCoverage).toBe(1);
      expect(row.recalibrated).toBe(0);
      expectClose(row.mae, 0, 1e-12);
    }
    for (const row of backtest(tables, { horizon: 2, minFit: 3, samples: 10 }).rows) expect(row.modelCoverage).toBe(1);
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
    expectRefusal(() => backtest(tables, { horizonWeights: [] }), 'INPUT_INVALID', /horizonWeights must be/);
    expectRefusal(() => backtest(tables, { horizonWeights: [0, 1] }), 'INPUT_INVALID', /horizonWeights must be/);
    expectRefusal(() => backtest(tables, { horizonWeights: [1, -0.5] }), 'INPUT_INVALID', /horizonWeights must be/);
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

describe('recalibrated bands (split conformal, from earlier origins only)', () => {
  it('bandScore and widen: each side in units of its own half-width (hand values)', () => {
    // band [0.2, 0.5] around the median 0.3: the lower side is 0.1 wide, the upper 0.2
    expect(bandScore(0.3, 0.3, 0.2, 0.5)).toBe(0);
    expectClose(bandScore(0.25, 0.3, 0.2, 0.5), 0.5, 1e-12);
    expectClose(bandScore(0.7, 0.3, 0.2, 0.5), 2, 1e-12);
    // a side of width 0 (as for a state empty in most paths) takes the other side's width
    expectClose(bandScore(0.31, 0.3, 0.1, 0.3), 0.05, 1e-12);
    expectClose(widen(0.3, 0.1, 0.3, 2), [-0.1, 0.7], 1e-12);
    // both 0: the fallback sides when given, else an outcome off the median scores 10⁶
    expectClose(bandScore(0.5, 0.3, 0.3, 0.3, [0.1, 0.2]), 1, 1e-12);
    expect(bandScore(0.5, 0.3, 0.3, 0.3)).toBe(1e6);
    expect(bandScore(0.3, 0.3, 0.3, 0.3)).toBe(0);
    expectClose(widen(0.3, 0.2, 0.5, 2), [0.1, 0.7], 1e-12);
    expectClose(widen(0.3, 0.2, 0.5, 0.5), [0.25, 0.4], 1e-12);
    // both bands: the inner one kept inside the outer one
    expectClose(recalibratedBands(0.3, [0.25, 0.35, 0.2, 0.4], 1, 1.5, 0.53), [0.25, 0.35, 0.15, 0.45], 1e-12);
    expectClose(recalibratedBands(0.3, [0.25, 0.35, 0.2, 0.4], 3, 1, 0.53), [0.2, 0.4, 0.2, 0.4], 1e-12);
    // an inner band of width 0 takes the outer band's sides times the ratio
    expectClose(recalibratedBands(0.3, [0.3, 0.3, 0.2, 0.4], 1, 1, 0.5), [0.25, 0.35, 0.2, 0.4], 1e-12);
  });

  it('sideScores, signedError and the asymmetric band: each side by its own factor, the band moved (hand values)', () => {
    // band [0.2, 0.5] around 0.3: lower side 0.1, upper side 0.2; x = 0.4 is 1 lower side above m (−1) and half an upper side (0.5)
    expectClose(sideScores(0.4, 0.3, 0.2, 0.5), [-1, 0.5], 1e-12);
    expectClose(sideScores(0.25, 0.3, 0.2, 0.5), [0.5, -0.25], 1e-12);
    expect(sideScores(0.3, 0.3, 0.2, 0.5)).toEqual([0, 0]);
    // outer band [0.2, 0.6]: half-width 0.2, x 0.1 above the median → 0.5
    expectClose(signedError(0.4, 0.3, 0.2, 0.6), 0.5, 1e-12);
    expect(signedError(0.4, 0.3, 0.3, 0.3)).toBe(0);
    // lower side ×2, upper ×0.5: [0.3 − 0.2, 0.3 + 0.1]; moved by 0.05
    expectClose(widen(0.3, 0.2, 0.5, [2, 0.5]), [0.1, 0.4], 1e-12);
    expectClose(widen(0.3, 0.2, 0.5, [2, 0.5], undefined, 0.05), [0.15, 0.45], 1e-12);
    // a negative factor puts the bound past the median; crossing bounds meet at their midpoint
    expectClose(widen(0.3, 0.2, 0.5, [-1, 1]), [0.4, 0.5], 1e-12);
    expectClose(widen(0.3, 0.2, 0.5, [-2, -0.5]), [0.35, 0.35], 1e-12);
    // both bands moved by 0.1, sides scaled: outer [0.3 + 0.1 − 1.5·0.1, 0.3 + 0.1 + 2·0.1]
    expectClose(recalibratedBands(0.3, [0.25, 0.35, 0.2, 0.4], [1, 1], [1.5, 2], 0.53, 0.1), [0.35, 0.45, 0.25, 0.6], 1e-12);
  });

  it('widthFactors takes the ⌈(n + 1)·(1 + level)/2⌉-th smallest signed score of each side; centreShift the median error of the state (hand values)', () => {
    // The finite-sample quantile of split conformal prediction (common practice; e.g. Lei, G'Sell,
    // Rinaldo, Tibshirani & Wasserman 2018, JASA 113, §2.2, from memory), each side at (1 + level)/2 as
    // in the asymmetric variant of Romano, Patterson & Candès 2019 (NeurIPS), Theorem 2.
    // 8 origins × 5 cells; lower-side scores 0.1…4.0 in order, upper-side the reverse; origin o known at period 10 + o.
    const sc: BandScoreRecord[] = Array.from({ length: 40 }, (_, i) => ({ origin: Math.floor(i / 5), known: 10 + Math.floor(i / 5), state: i % 5, error: (i % 5) - 2 + Math.floor(i / 5) / 10, inner: [(i + 1) / 10, (40 - i) / 10], outer: [(i + 1) / 20, (40 - i) / 20] }));
    const all = usedRecords(sc, 100, 8, 100);
    expect(all).toHaveLength(40);
    const f = widthFactors(all, 30, 0.5, 0.8)!;
    // inner: level 0.75 → ⌈41·0.75⌉ = 31st smallest of 0.1…4.0 = 3.1 (both sides); outer: level 0.9 → ⌈36.9⌉ = 37th of 0.05…2.0 = 1.85
    expect(f.scores).toBe(40);
    expectClose([...f.inner, ...f.outer], [3.1, 3.1, 1.85, 1.85], 1e-12);
    // at period 15 only origins 0…5 are known (30 records): ⌈31·0.75⌉ = 24th, ⌈31·0.9⌉ = 28th smallest
    const at15 = usedRecords(sc, 15, 8, 100);
    expect(at15).toHaveLength(30);
    const g = widthFactors(at15, 30, 0.5, 0.8)!;
    // lower sides 0.1…3.0 and 0.05…1.5, upper sides 1.1…4.0 and 0.55…2.0
    expectClose([...g.inner, ...g.outer], [2.4, 3.4, 1.4, 1.9], 1e-12);
    // fewer than 30: none
    expect(widthFactors(usedRecords(sc, 14, 8, 100), 30, 0.5, 0.8)).toBeNull();
    // only origins before 7 count, the latest 2 (5, 6)
    expect(usedRecords(sc, 100, 7, 2).map((x) => x.origin)).toEqual([5, 5, 5, 5, 5, 6, 6, 6, 6, 6]);
    // capped at 10
    expect(widthFactors(all.map((x) => ({ ...x, outer: [x.outer[0] * 100, 1] })), 30, 0.5, 0.8)!.outer[0]).toBe(10);
    // state 0's errors over origins 0…7: −2, −1.9, …, −1.3 → median (−1.7 − 1.6)/2; state 2: 0 … 0.7 → 0.35
    expectClose(centreShift(all, 0, 6), -1.65, 1e-12);
    expectClose(centreShift(all, 2, 6), 0.35, 1e-12);
    // fewer origins of the state than asked: no correction
    expect(centreShift(all, 2, 9)).toBe(0);
  });

  it('weightedMedian and conformalQuantile: the weighted forms, equal to the unweighted ones with unit weights (hand values)', () => {
    // weighted median (common practice; from memory): values sorted 1, 2, 3, 10 with weights 1, 1, 0.5,
    // 0.5 have cumulative weights 1, 2, 2.5, 3; half the total is 1.5, first reached at 2
    expect(weightedMedian([3, 1, 2, 10], [0.5, 1, 1, 0.5])).toBe(2);
    // unit weights: the usual median, the midpoint of the middle two for an even count
    expect(weightedMedian([4, 1, 3, 2], [1, 1, 1, 1])).toBe(2.5);
    expect(weightedMedian([5, 1, 3], [1, 1, 1])).toBe(3);
    // cumulative weight exactly half at 2 (weights 0.5, 0.5, 1): midpoint of 2 and 3
    expect(weightedMedian([1, 2, 3], [0.5, 0.5, 1])).toBe(2.5);
    // a heavy value pulls it: 1, 2, 3 with weights 0.5, 0.5, 2 → 3
    expect(weightedMedian([1, 2, 3], [0.5, 0.5, 2])).toBe(3);
    // The weighted conformal quantile (Tibshirani, Barber, Candès & Ramdas 2019, NeurIPS, §2, from memory):
    // the level-quantile of Σ wᵢ δ(vᵢ) + w_new δ(+∞), normalised. Scores 1…4 with weights 1, 1, 0.5, 0.5
    // and w_new = 1: total 4, level 0.6 needs cumulative weight 2.4 → 1, 2, 2.5 reached at 3
    expect(conformalQuantile([4, 2, 3, 1], [0.5, 1, 0.5, 1], 0.6, 1)).toBe(3);
    // level 0.95 needs 3.8 > 3 (the point at +∞ holds it): the largest score, 4
    expect(conformalQuantile([4, 2, 3, 1], [0.5, 1, 0.5, 1], 0.95, 1)).toBe(4);
    // unit weights: the ⌈(n + 1)·level⌉-th smallest (n = 9, level 0.75 → ⌈7.5⌉ = 8th)
    expect(conformalQuantile([9, 8, 7, 6, 5, 4, 3, 2, 1], Array(9).fill(1), 0.75)).toBe(8);
  });

  it('pooledRecords takes each neighbouring horizon\'s latest known records with the weight of its distance (hand values)', () => {
    // three horizons; origin o's records at horizon h known at period 10 + o + h, one state, error = h
    const byH: BandScoreRecord[][] = [1, 2, 3].map((h) => Array.from({ length: 6 }, (_, o) => ({ origin: o, known: 10 + o + h, state: 0, error: h, inner: [0, 0], outer: [0, 0] })));
    // at period 15, horizon 2 (weights [1, 0.5]): horizon 1 knows origins 0…4, horizon 2 origins 0…3, horizon 3 origins 0…2
    const p = pooledRecords(byH, 2, 15, 6, 100, [1, 0.5]);
    expect(p.own.map((x) => x.origin)).toEqual([0, 1, 2, 3]);
    expect(p.used.map((x) => `${x.error}:${x.origin}`)).toEqual(['1:0', '1:1', '1:2', '1:3', '1:4', '2:0', '2:1', '2:2', '2:3', '3:0', '3:1', '3:2']);
    expect(p.weight).toEqual([0.5, 0.5, 0.5, 0.5, 0.5, 1, 1, 1, 1, 0.5, 0.5, 0.5]);
    // horizon 1 has no horizon 0; the latest 2 origins of each horizon; before origin 3 only
    expect(pooledRecords(byH, 1, 100, 6, 2, [1, 0.5]).used.map((x) => `${x.error}:${x.origin}`)).toEqual(['1:4', '1:5', '2:4', '2:5']);
    expect(pooledRecords(byH, 3, 100, 3, 100, [1, 0.5]).used.map((x) => `${x.error}:${x.origin}`)).toEqual(['2:0', '2:1', '2:2', '3:0', '3:1', '3:2']);
    // weights [1]: the horizon alone, as usedRecords
    expect(pooledRecords(byH, 2, 15, 6, 100, [1]).used).toEqual(usedRecords(byH[1], 15, 6, 100));
    // centreShift over the pooled records: errors 1 (×5, weight 0.5), 2 (×4, weight 1), 3 (×3, weight 0.5):
    // total weight 8, half 4; cumulative 2.5 after the 1s, 3.5 and 4.5 at the first two 2s → 2
    expect(centreShift(p.used, 0, 1, p.weight)).toBe(2);
  });

  const chain = () => simulatedChain({ periods: 40, walk: 0.05, noise: 0.05, arrivals: 600, arrivalSd: 60, start: [600, 6000, 900, 2500, 12000], seed: 41 });

  // A plain recomputation of the rule, written out here independently of recalibrate.ts: at an origin,
  // the cells at the same horizon h of the latest 15 earlier origins whose outcome was known (by default),
  // or (option horizonWeights [1, nb]) those at h, h − 1 and h + 1, weighted 1 at h and nb at h ± 1; each
  // state's band moved by the (weighted) median of that state's errors (actual − median, in outer
  // half-widths) once 6 such origins exist at h; the signed side scores of the moved bands; each side
  // scaled by the (weighted) conformal quantile of its scores — the first whose cumulative weight reaches
  // (1 + level)/2 of the total plus 1, with unit weights the ⌈(n + 1)·(1 + level)/2⌉-th smallest — once 30
  // exist at h (capped at 10).
  const ratio = 0.6744897501960817 / 1.2815515655446004; // standard normal quantiles z(0.75)/z(0.9) (tables)
  const sidesOf = (m: number, l: number, u: number, alt?: [number, number]): [number, number] => {
    let lo = Math.max(0, m - l), hi = Math.max(0, u - m);
    if (alt && lo <= 1e-12 && hi <= 1e-12) [lo, hi] = alt;
    if (lo <= 1e-12) lo = hi;
    if (hi <= 1e-12) hi = lo;
    return [lo, hi];
  };
  const altOf = (d: BacktestCell): [number, number] => [(d.median - d.model[2]) * ratio, (d.model[3] - d.median) * ratio];
  const errorOf = (d: BacktestCell) => { const w = (d.model[3] - d.model[2]) / 2; return w > 1e-12 ? (d.actual - d.median) / w : 0; };
  const latest = (cells: BacktestCell[], c: { origin: number; period: number; horizon: number }) => {
    const known = cells.filter((d) => d.horizon === c.horizon && d.origin < c.origin && d.period + d.horizon <= c.period);
    const last = Math.max(-1, ...known.map((d) => d.origin));
    return known.filter((d) => d.origin > last - 15);
  };
  // pooled over the horizon: horizon h's cells with weight 1, h ± 1's with weight nb when nb > 0 (none beyond the backtest's horizons)
  const pooled = (cells: BacktestCell[], c: { origin: number; period: number; horizon: number }, nb: number) =>
    (nb > 0 ? [c.horizon - 1, c.horizon, c.horizon + 1] : [c.horizon]).filter((h) => h >= 1).flatMap((h) => latest(cells, { ...c, horizon: h }).map((d) => ({ d, w: h === c.horizon ? 1 : nb })));
  // weighted median: sorted, the first value whose cumulative weight reaches half the total (the midpoint
  // with the next when exactly half); weighted conformal quantile: the first whose cumulative weight
  // reaches level·(total + 1), else the largest (a plain loop each)
  const wMedian = (v: { x: number; w: number }[]) => {
    const o = [...v].sort((a, b) => a.x - b.x), half = o.reduce((a, y) => a + y.w, 0) / 2;
    let cum = 0;
    for (let i = 0; i < o.length; i++) {
      cum += o[i].w;
      if (cum === half && i + 1 < o.length) return (o[i].x + o[i + 1].x) / 2;
      if (cum >= half) return o[i].x;
    }
    return NaN;
  };
  const wKth = (v: { x: number; w: number }[], level: number) => {
    const o = [...v].sort((a, b) => a.x - b.x), target = (1 + level) / 2 * (o.reduce((a, y) => a + y.w, 0) + 1);
    let cum = 0;
    for (const y of o) if ((cum += y.w) >= target) return Math.min(10, y.x);
    return Math.min(10, o[o.length - 1].x);
  };
  const shiftOf = (cells: BacktestCell[], c: { origin: number; period: number; horizon: number }, state: number, nb: number) => {
    if (latest(cells, c).filter((d) => d.state === state).length < 6) return 0;
    return wMedian(pooled(cells, c, nb).filter((y) => y.d.state === state).map((y) => ({ x: errorOf(y.d), w: y.w })));
  };
  /** Signed side scores of cell d against its own moved band (the shift from the cells before it). */
  const memo = new Map<number, WeakMap<BacktestCell, { inner: number[]; outer: number[] }>>();
  const scoresOf = (cells: BacktestCell[], d: BacktestCell, nb: number) => {
    const m = memo.get(nb) ?? memo.set(nb, new WeakMap()).get(nb)!;
    return m.get(d) ?? m.set(d, scoresOfCell(cells, d, nb)).get(d)!;
  };
  const scoresOfCell = (cells: BacktestCell[], d: BacktestCell, nb: number) => {
    const sh = shiftOf(cells, d, d.state, nb) * (d.model[3] - d.model[2]) / 2;
    const m = d.median + sh, x = d.actual - m;
    const one = (lo: number, hi: number) => (Math.abs(x) <= 1e-12 ? [0, 0] : [lo > 1e-12 ? -x / lo : x < 0 ? 1e6 : -1e6, hi > 1e-12 ? x / hi : x > 0 ? 1e6 : -1e6]);
    return { inner: one(...sidesOf(d.median, d.model[0], d.model[1], altOf(d))), outer: one(...sidesOf(d.median, d.model[2], d.model[3])) };
  };

  for (const [label, nb] of [['each horizon alone, the default', 0], ['pooled with horizons h ± 1 at 1/4, horizonWeights [1, 0.25]', 0.25]] as const) {
    const weights = nb > 0 ? { horizonWeights: [1, nb] } : {};
    it(`each origin's bands equal a plain recomputation from the model bands and outcomes known at that origin (${label})`, () => {
      const tables = chain();
      const bt = backtest(tables, { horizon: 4, window: 8, samples: 40, seed: 3, detail: true, ...weights });
      const cells = bt.cells as BacktestCell[];
      let scaled = 0, moved = 0;
      for (const c of cells) {
        const used = latest(cells, c);
        const sh = shiftOf(cells, c, c.state, nb) * (c.model[3] - c.model[2]) / 2;
        if (sh !== 0) moved++;
        const m = c.median + sh;
        const [il, iu] = sidesOf(c.median, c.model[0], c.model[1], altOf(c)), [ol, ou] = sidesOf(c.median, c.model[2], c.model[3]);
        if (used.length < 30) {
          expectClose(c.band, c.model.map((v) => v + sh), 1e-12);
          continue;
        }
        scaled++;
        const sc = pooled(cells, c, nb).map((y) => ({ ...scoresOf(cells, y.d, nb), w: y.w }));
        const fi = [wKth(sc.map((x) => ({ x: x.inner[0], w: x.w })), 0.5), wKth(sc.map((x) => ({ x: x.inner[1], w: x.w })), 0.5)];
        const fo = [wKth(sc.map((x) => ({ x: x.outer[0], w: x.w })), 0.8), wKth(sc.map((x) => ({ x: x.outer[1], w: x.w })), 0.8)];
        let lo = m - fo[0] * ol, hi = m + fo[1] * ou;
        if (lo > hi) lo = hi = (lo + hi) / 2;
        // the inner band kept inside the outer one
        const a = Math.min(Math.max(m - fi[0] * il, lo), hi), b = Math.max(Math.min(m + fi[1] * iu, hi), lo);
        expectClose(c.band, a <= b ? [a, b, lo, hi] : [(a + b) / 2, (a + b) / 2, lo, hi], 1e-12);
      }
      expect(scaled).toBeGreaterThan(cells.length / 3);
      expect(moved).toBeGreaterThan(cells.length / 3);
      expect(bt.rows.reduce((a, r) => a + r.recalibrated, 0)).toBe(new Set(cells.filter((c, i) => cells.findIndex((d) => d.origin === c.origin && d.horizon === c.horizon) === i && cells.some((d) => d.origin === c.origin && d.horizon === c.horizon && d.band.some((v, k) => v !== d.model[k]))).map((c) => `${c.origin}:${c.horizon}`)).size);
    });

    it(`no look-ahead: changing every period after T leaves the bands of every origin up to T as they were (${label})`, () => {
      const a = chain();
      const T = 25;
      const b = structuredClone(a);
      b.stateCounts = b.stateCounts.map((x, t) => (t > T ? x.slice().reverse() : x));
      b.transitions = b.transitions.map((tr, k) => (k + 1 > T ? { ...tr, counts: tr.counts.map((row, i) => row.map((_, j) => tr.counts[j][i])), fresh: tr.fresh * 3 } : tr));
      const o = { horizon: 4, window: 8, samples: 40, seed: 3, detail: true, ...weights };
      const ca = (backtest(a, o).cells as BacktestCell[]).filter((c) => c.period <= T);
      const cb = (backtest(b, o).cells as BacktestCell[]).filter((c) => c.period <= T);
      expect(ca.length).toBeGreaterThan(40);
      expect(cb.map((c) => [c.origin, c.horizon, c.state, ...c.band])).toEqual(ca.map((c) => [c.origin, c.horizon, c.state, ...c.band]));
      expect(ca.some((c) => c.band.some((v, k) => v !== c.model[k]))).toBe(true);
    });

    it(`the projection's factors and centre corrections use the latest origins of all scored (the recalibration output; ${label})`, () => {
      const tables = chain();
      const bt = backtest(tables, { horizon: 3, window: 8, samples: 40, seed: 3, detail: true, ...weights });
      const cells = bt.cells as BacktestCell[];
      const r = bt.recalibration!;
      expect(r.minScores).toBe(30);
      expect(r.scoreOrigins).toBe(15);
      expect(r.minShiftOrigins).toBe(6);
      expect(r.horizonWeights).toEqual(nb > 0 ? [1, nb] : [1]);
      for (const x of r.horizons) {
        const c = { origin: Infinity, period: Infinity, horizon: x.horizon };
        const used = latest(cells, c);
        expect(x.scores).toBe(used.length);
        const sc = pooled(cells, c, nb).map((y) => ({ ...scoresOf(cells, y.d, nb), w: y.w }));
        expectClose(x.inner!, [wKth(sc.map((y) => ({ x: y.inner[0], w: y.w })), 0.5), wKth(sc.map((y) => ({ x: y.inner[1], w: y.w })), 0.5)], 1e-12);
        expectClose(x.outer!, [wKth(sc.map((y) => ({ x: y.outer[0], w: y.w })), 0.8), wKth(sc.map((y) => ({ x: y.outer[1], w: y.w })), 0.8)], 1e-12);
        expect(x.shift).not.toBeNull();
        x.shift!.forEach((v, s) => expectClose(v, shiftOf(cells, c, s, nb), 1e-12));
      }
    });
  }
});
