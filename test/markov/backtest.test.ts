import { describe, expect, it } from 'vitest';
import { backtest, bandScore, intervalScore, widen, widthFactors, type BacktestCell } from '../../src/markov/backtest.js';
import { recalibratedBands } from '../../src/markov/recalibrate.js';
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

  it('widthFactors takes the ⌈(n + 1)·level⌉-th smallest score of the latest origins known at the origin (hand values)', () => {
    // The finite-sample quantile of split conformal prediction (common practice; e.g. Lei, G'Sell,
    // Rinaldo, Tibshirani & Wasserman 2018, JASA 113, §2.2, from memory). 8 origins × 5 cells, scores
    // 1…40 in order; origin o's outcome known at period 10 + o.
    // 8 origins × 5 cells, scores 0.1…4.0 in order (outer: the reverse); origin o's outcome known at period 10 + o
    const sc = Array.from({ length: 40 }, (_, i) => ({ origin: Math.floor(i / 5), known: 10 + Math.floor(i / 5), inner: (i + 1) / 10, outer: (41 - (i + 1)) / 10 }));
    const close = (r: ReturnType<typeof widthFactors>, inner: number, outer: number, scores: number) => {
      expect(r!.scores).toBe(scores);
      expectClose([r!.inner, r!.outer], [inner, outer], 1e-12);
    };
    // all 40 known: level 0.8 → ⌈41·0.8⌉ = 33rd smallest; level 0.5 → ⌈20.5⌉ = 21st
    close(widthFactors(sc, 100, 8, 30, 100, 0.5, 0.8), 2.1, 3.3, 40);
    // at period 15 only origins 0…5 are known (30 scores 0.1…3.0): ⌈15.5⌉ = 16th, ⌈24.8⌉ = 25th smallest of 1.1…4.0 → 3.5
    close(widthFactors(sc, 15, 8, 30, 100, 0.5, 0.8), 1.6, 3.5, 30);
    // fewer than 30 scores: none
    expect(widthFactors(sc, 14, 8, 30, 100, 0.5, 0.8)).toBeNull();
    // only origins before 7 count; the latest 2 of them (5, 6): scores 2.6…3.5, n = 10 → ⌈5.5⌉ = 6th → 3.1, ⌈8.8⌉ = 9th of 0.6…1.5 → 1.4
    close(widthFactors(sc, 100, 7, 10, 2, 0.5, 0.8), 3.1, 1.4, 10);
    // ⌈(n + 1)·level⌉ > n: the largest
    close(widthFactors(sc.slice(0, 5), 100, 8, 1, 100, 0.9, 0.9), 0.5, 4, 5);
    // factors are capped at 10 (a model 10 times too narrow)
    close(widthFactors(sc.map((x) => ({ ...x, inner: x.inner * 10, outer: x.outer * 10 })), 100, 8, 30, 100, 0.5, 0.8), 10, 10, 40);
  });

  const chain = () => simulatedChain({ periods: 40, walk: 0.05, noise: 0.05, arrivals: 600, arrivalSd: 60, start: [600, 6000, 900, 2500, 12000], seed: 41 });

  it('each origin\'s bands equal a plain recomputation from the model bands and outcomes known at that origin', () => {
    const tables = chain();
    const bt = backtest(tables, { horizon: 4, window: 8, samples: 40, seed: 3, detail: true });
    const cells = bt.cells as BacktestCell[];
    let recalibrated = 0;
    for (const c of cells) {
      // scores of earlier origins, same horizon, outcome at or before this origin's period
      const known = cells.filter((d) => d.horizon === c.horizon && d.origin < c.origin && d.period + d.horizon <= c.period);
      const last = Math.max(-1, ...known.map((d) => d.origin));
      const used = known.filter((d) => d.origin > last - 15);
      if (used.length < 30) {
        expect(c.band).toEqual(c.model);
        continue;
      }
      recalibrated++;
      // sides: a side of width 0 takes the other's; an inner band of width 0 the outer's times z(0.75)/z(0.9)
      const ratio = 0.6744897501960817 / 1.2815515655446004; // standard normal quantiles (tables)
      const sides = (d: BacktestCell, inner: boolean): [number, number] => {
        const m = d.median;
        let lo = inner ? m - d.model[0] : m - d.model[2], hi = inner ? d.model[1] - m : d.model[3] - m;
        if (inner && lo <= 1e-12 && hi <= 1e-12) [lo, hi] = [(m - d.model[2]) * ratio, (d.model[3] - m) * ratio];
        if (lo <= 1e-12) lo = hi;
        if (hi <= 1e-12) hi = lo;
        return [lo, hi];
      };
      const score = (d: BacktestCell, inner: boolean) => {
        const [lo, hi] = sides(d, inner);
        const w = d.actual > d.median ? hi : lo;
        return Math.abs(d.actual - d.median) <= 1e-12 ? 0 : w > 1e-12 ? Math.abs(d.actual - d.median) / w : 1e6;
      };
      const kth = (v: number[], level: number) => Math.min(10, v.sort((a, b) => a - b)[Math.min(v.length, Math.ceil((v.length + 1) * level)) - 1]);
      const fi = kth(used.map((d) => score(d, true)), 0.5);
      const fo = kth(used.map((d) => score(d, false)), 0.8);
      const m = c.median, [il, iu] = sides(c, true), [ol, ou] = sides(c, false);
      // the inner band kept inside the outer one
      expectClose(c.band, [Math.max(m - fi * il, m - fo * ol), Math.min(m + fi * iu, m + fo * ou), m - fo * ol, m + fo * ou], 1e-12);
    }
    expect(recalibrated).toBeGreaterThan(cells.length / 3);
    expect(bt.rows.reduce((a, r) => a + r.recalibrated, 0)).toBe(new Set(cells.filter((c, i) => cells.findIndex((d) => d.origin === c.origin && d.horizon === c.horizon) === i && c.band.some((v, k) => v !== c.model[k])).map((c) => `${c.origin}:${c.horizon}`)).size);
  });

  it('no look-ahead: changing every period after T leaves the bands of every origin up to T as they were', () => {
    const a = chain();
    const T = 25;
    const b = structuredClone(a);
    b.stateCounts = b.stateCounts.map((x, t) => (t > T ? x.slice().reverse() : x));
    b.transitions = b.transitions.map((tr, k) => (k + 1 > T ? { ...tr, counts: tr.counts.map((row, i) => row.map((_, j) => tr.counts[j][i])), fresh: tr.fresh * 3 } : tr));
    const o = { horizon: 4, window: 8, samples: 40, seed: 3, detail: true };
    const ca = (backtest(a, o).cells as BacktestCell[]).filter((c) => c.period <= T);
    const cb = (backtest(b, o).cells as BacktestCell[]).filter((c) => c.period <= T);
    expect(ca.length).toBeGreaterThan(40);
    expect(cb.map((c) => [c.origin, c.horizon, c.state, ...c.band])).toEqual(ca.map((c) => [c.origin, c.horizon, c.state, ...c.band]));
    expect(ca.some((c) => c.band.some((v, k) => v !== c.model[k]))).toBe(true);
  });

  it('the projection\'s factors use the latest origins of all scored (the recalibration output)', () => {
    const tables = chain();
    const bt = backtest(tables, { horizon: 3, window: 8, samples: 40, seed: 3, detail: true });
    const cells = bt.cells as BacktestCell[];
    const r = bt.recalibration!;
    expect(r.minScores).toBe(30);
    expect(r.scoreOrigins).toBe(15);
    for (const x of r.horizons) {
      const at = cells.filter((c) => c.horizon === x.horizon);
      const last = Math.max(...at.map((c) => c.origin));
      const used = at.filter((c) => c.origin > last - 15);
      expect(x.scores).toBe(used.length);
      const alt = (c: BacktestCell): [number, number] => [(c.median - c.model[2]) * 0.6744897501960817 / 1.2815515655446004, (c.model[3] - c.median) * 0.6744897501960817 / 1.2815515655446004];
      const f = widthFactors(at.map((c) => ({ origin: c.origin, known: c.period + c.horizon, inner: bandScore(c.actual, c.median, c.model[0], c.model[1], alt(c)), outer: bandScore(c.actual, c.median, c.model[2], c.model[3]) })), Infinity, Infinity, 30, 15, 0.5, 0.8)!;
      expect(x.inner).toBe(f.inner);
      expect(x.outer).toBe(f.outer);
    }
  });
});
