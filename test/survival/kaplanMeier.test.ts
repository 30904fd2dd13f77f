import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import type { DurationRow } from '../../src/flows/types.js';
import { kaplanMeier, kaplanMeierByGroup } from '../../src/survival/kaplanMeier.js';
import { mulberry32, randInt } from '../stats/prng.js';
import { FREIREICH, PLACEBO, SIX_MP, rowsOf } from './freireich.js';

describe('kaplanMeier — Freireich et al. (1963) 6-MP', () => {
  const km = kaplanMeier(rowsOf('6-MP', SIX_MP));

  it('matches the published table (t: at risk, events, S, Greenwood SE; published-values.md)', () => {
    const table: [number, number, number, number, number][] = [
      [6, 21, 3, 0.8571, 0.0764], [7, 17, 1, 0.8067, 0.0869], [10, 15, 1, 0.7529, 0.0963], [13, 12, 1, 0.6902, 0.1068],
      [16, 11, 1, 0.6275, 0.1141], [22, 7, 1, 0.5378, 0.1282], [23, 6, 1, 0.4482, 0.1346],
    ];
    expect(km.points.map((p) => p.t)).toEqual([0, ...table.map((r) => r[0])]);
    table.forEach(([t, atRisk, events, s, se], i) => {
      const p = km.points[i + 1];
      expect(p).toMatchObject({ t, atRisk, events });
      expect(p.survival).toBeCloseTo(s, 4);
      expect(p.se).toBeCloseTo(se, 4);
    });
    expect(km.points[0]).toMatchObject({ t: 0, survival: 1, atRisk: 21, events: 0, se: 0, lower: 1, upper: 1 });
  });

  it('has the log-log and plain 95% intervals of scipy 1.17.1', () => {
    // from scipy import stats; r = stats.ecdf(stats.CensoredData(uncensored=..., right=...))
    // r.sf.confidence_interval(0.95, method='log-log' | 'linear')  (both use Greenwood's variance)
    const loglog: [number, number, number][] = [
      [6, 0.6197179552659838, 0.951551747646997], [7, 0.5631465646222333, 0.9228090192028804], [10, 0.5031995107999564, 0.8893618351692655],
      [13, 0.43161022248618397, 0.8490659633494507], [16, 0.36751085598750205, 0.8049121894718412], [22, 0.26777893676713505, 0.7467907176353944],
      [23, 0.18805200595923235, 0.6801426284952414],
    ];
    const plain: [number, number][] = [
      [0.7074793118252003, 1.0], [0.6363326611369994, 0.977112717014261], [0.5640993266787881, 0.9417830262623881], [0.4808430981731827, 0.8995490586895621],
      [0.40390951219133764, 0.8509924485929758], [0.28648159112962135, 0.7891486609712187], [0.1843848638406128, 0.711973679576754],
    ];
    loglog.forEach(([t, lo, hi], i) => {
      const p = km.points[i + 1];
      expect(p.t).toBe(t);
      expect(p.lower).toBeCloseTo(lo, 12);
      expect(p.upper).toBeCloseTo(hi, 12);
      expect(p.plainLower).toBeCloseTo(plain[i][0], 12);
      expect(p.plainUpper).toBeCloseTo(plain[i][1], 12);
    });
  });

  it('counts censorings between points so that the next at-risk count follows', () => {
    for (let i = 0; i + 1 < km.points.length; i++) {
      const p = km.points[i];
      expect(km.points[i + 1].atRisk).toBe(p.atRisk - p.events - p.censored);
    }
    // After 23: censored at 25, 32, 32, 34, 35.
    expect(km.points.at(-1)!.censored).toBe(5);
  });

  it('medians: 23 weeks for 6-MP and 8 for placebo (Freireich et al. 1963, published-values.md)', () => {
    expect(km.median).toBe(23);
    expect(kaplanMeierByGroup(FREIREICH).map((g) => [g.group, g.curve.median])).toEqual([['6-MP', 23], ['placebo', 8]]);
  });

  it('placebo (no censoring) ends at 0 with a collapsed interval', () => {
    const last = kaplanMeier(rowsOf('placebo', PLACEBO)).points.at(-1)!;
    expect(last).toMatchObject({ t: 23, survival: 0, se: 0, lower: 0, upper: 0, atRisk: 1, events: 1 });
  });
});

describe('kaplanMeier — seeded random data against scipy 1.17.1', () => {
  // rng = np.random.default_rng(20261201); n = 40; life = ceil(rng.exponential(6.0, n));
  // cens = rng.integers(1, 16, n); dur = minimum(life, cens); obs = life <= cens
  const dur = [6, 1, 7, 10, 10, 2, 1, 1, 1, 7, 3, 2, 3, 3, 6, 5, 7, 3, 5, 2, 5, 6, 4, 9, 1, 6, 8, 1, 7, 1, 6, 5, 8, 7, 1, 1, 2, 2, 3, 1];
  const obs = [1, 1, 1, 0, 1, 1, 0, 0, 1, 0, 1, 1, 1, 1, 1, 1, 1, 1, 0, 1, 1, 0, 1, 1, 1, 1, 1, 0, 1, 1, 1, 1, 0, 0, 1, 0, 1, 1, 1, 0];
  // scipy: r.sf.evaluate(t), ci = r.sf.confidence_interval(0.95, method='log-log')
  const scipy: [number, number, number, number][] = [
    [1, 0.875, 0.7254070970835974, 0.9459710721071553], [2, 0.7291666666666667, 0.5533361699154855, 0.844864811396979],
    [3, 0.5833333333333334, 0.40487888344988276, 0.7251990226351779], [4, 0.5541666666666667, 0.3770812031137928, 0.6995846628128474],
    [5, 0.4666666666666667, 0.2970927559171305, 0.6196628383522651], [6, 0.3422222222222222, 0.19036140858504602, 0.49999921961594446],
    [7, 0.23955555555555552, 0.11034543645082237, 0.3959694398755743], [8, 0.19164444444444442, 0.07316605461627515, 0.3521252524003577],
    [9, 0.12776296296296294, 0.029707302170158333, 0.2999978731358598], [10, 0.06388148148148147, 0.005317321114247748, 0.23577592661938623],
  ];
  it('matches survival and log-log limits at every event time', () => {
    const rows: DurationRow[] = dur.map((d, i) => ({ group: 'a', duration: d, observed: obs[i] as 0 | 1, users: 1 }));
    const km = kaplanMeier(rows);
    expect(km.points.slice(1).map((p) => p.t)).toEqual(scipy.map((s) => s[0]));
    scipy.forEach(([, s, lo, hi], i) => {
      const p = km.points[i + 1];
      expect(p.survival).toBeCloseTo(s, 13);
      expect(p.lower).toBeCloseTo(lo, 12);
      expect(p.upper).toBeCloseTo(hi, 12);
    });
    expect(km.median).toBe(5);
  });
});

/** Naive per-individual product-limit estimate and Greenwood sum, written differently on purpose. */
function naiveKm(individuals: { t: number; died: boolean }[]): Map<number, { s: number; se: number }> {
  const out = new Map<number, { s: number; se: number }>();
  const deathTimes = [...new Set(individuals.filter((x) => x.died).map((x) => x.t))].sort((a, b) => a - b);
  let s = 1;
  let g = 0;
  for (const t of deathTimes) {
    const n = individuals.filter((x) => x.t >= t).length;
    const d = individuals.filter((x) => x.t === t && x.died).length;
    s = s * (n - d) / n;
    g = n > d ? g + d / (n * (n - d)) : g;
    out.set(t, { s, se: s === 0 ? 0 : s * Math.sqrt(g) });
  }
  return out;
}

describe('kaplanMeier — properties and an independent per-individual implementation (seeded)', () => {
  const rowsArb = fc.array(
    fc.record({ duration: fc.integer({ min: 0, max: 20 }), observed: fc.constantFrom<0 | 1>(0, 1), users: fc.integer({ min: 1, max: 6 }) }),
    { minLength: 1, maxLength: 40 },
  );

  it('aggregated rows give the same curve as the expanded individuals', () => {
    fc.assert(
      fc.property(rowsArb, (rs) => {
        const rows = rs.map((r) => ({ group: '', ...r }));
        const individuals = rows.flatMap((r) => Array.from({ length: r.users }, () => ({ t: r.duration, died: r.observed === 1 })));
        const naive = naiveKm(individuals);
        const km = kaplanMeier(rows);
        for (const p of km.points) {
          const ref = naive.get(p.t);
          if (!ref) continue; // the t = 0 point without an event
          expect(p.survival).toBeCloseTo(ref.s, 12);
          expect(p.se).toBeCloseTo(ref.se, 12);
        }
        expect(km.points.filter((p) => p.events > 0)).toHaveLength(naive.size);
      }),
      { seed: 1958, numRuns: 300 },
    );
  });

  it('is non-increasing, with intervals around the estimate', () => {
    fc.assert(
      fc.property(rowsArb, (rs) => {
        const km = kaplanMeier(rs.map((r) => ({ group: '', ...r })));
        km.points.forEach((p, i) => {
          if (i > 0) expect(p.survival).toBeLessThanOrEqual(km.points[i - 1].survival);
          expect(p.lower).toBeLessThanOrEqual(p.survival + 1e-15);
          expect(p.upper).toBeGreaterThanOrEqual(p.survival - 1e-15);
          expect(p.lower).toBeGreaterThanOrEqual(0);
          expect(p.upper).toBeLessThanOrEqual(1);
        });
      }),
      { seed: 1959, numRuns: 300 },
    );
  });

  it('without censoring equals the empirical survival (share with duration > t)', () => {
    const rand = mulberry32(2026);
    for (let trial = 0; trial < 30; trial++) {
      const times = Array.from({ length: randInt(rand, 1, 60) }, () => randInt(rand, 1, 15));
      const km = kaplanMeier(times.map((t) => ({ group: '', duration: t, observed: 1, users: 1 })));
      for (const p of km.points) expect(p.survival).toBeCloseTo(times.filter((t) => t > p.t).length / times.length, 13);
    }
  });
});

describe('kaplanMeier — edge cases', () => {
  it('throws NOT_ENOUGH_DATA for no users', () => {
    expect(() => kaplanMeier([])).toThrow(expect.objectContaining({ code: 'NOT_ENOUGH_DATA' }));
    expect(() => kaplanMeier([{ group: '', duration: 3, observed: 1, users: 0 }])).toThrow(expect.objectContaining({ code: 'NOT_ENOUGH_DATA' }));
  });

  it('all censored: one point at t = 0, survival 1, no median', () => {
    const km = kaplanMeier([{ group: '', duration: 3, observed: 0, users: 4 }, { group: '', duration: 5, observed: 0, users: 2 }]);
    expect(km.points).toEqual([{ t: 0, survival: 1, atRisk: 6, events: 0, censored: 6, se: 0, lower: 1, upper: 1, plainLower: 1, plainUpper: 1 }]);
    expect(km.median).toBeNull();
    expect(km.events).toBe(0);
  });

  it('one user who ends: survival drops to 0 at that time', () => {
    const km = kaplanMeier([{ group: '', duration: 2, observed: 1, users: 1 }]);
    expect(km.points.map((p) => [p.t, p.survival])).toEqual([[0, 1], [2, 0]]);
    expect(km.median).toBe(2);
  });

  it('events at t = 0 are carried by the t = 0 point', () => {
    const km = kaplanMeier([{ group: '', duration: 0, observed: 1, users: 1 }, { group: '', duration: 4, observed: 0, users: 3 }]);
    expect(km.points).toHaveLength(1);
    expect(km.points[0]).toMatchObject({ t: 0, survival: 0.75, events: 1, censored: 3 });
  });

  it('median at exactly 0.5: the midpoint of the flat stretch (SAS PROC LIFETEST; R survival quantile.survfit)', () => {
    // by hand: Ŝ(1) = 3/4, Ŝ(2) = 3/4 · 2/3 = 1/2 until t = 3, where Ŝ(3) = 1/4; midpoint of [2, 3) = 2.5,
    // the sample median of 1, 2, 3, 4
    const km = kaplanMeier([1, 2, 3, 4].map((t) => ({ group: '', duration: t, observed: 1 as const, users: 1 })));
    expect(km.points.find((p) => p.t === 2)?.survival).toBeCloseTo(0.5, 15);
    expect(km.median).toBe(2.5);
  });

  it('median at exactly 0.5 with censoring: the stretch runs to the next event time, not the censoring', () => {
    // by hand: 6 users; events at 1, 2, 4, 7; censored at 3 and 5. Ŝ(1) = 5/6, Ŝ(2) = 5/6 · 4/5 = 2/3,
    // Ŝ(4) = 2/3 · 2/3 = 4/9 (at risk at 4: users with t ≥ 4 = 3) — steps over 0.5, median 4
    const rows = [[1, 1], [2, 1], [3, 0], [4, 1], [5, 0], [7, 1]].map(([t, o]) => ({ group: '', duration: t, observed: o as 0 | 1, users: 1 }));
    expect(kaplanMeier(rows).median).toBe(4);
    // by hand: 4 users; events at 1 and 3, censored at 2 and 5. Ŝ(1) = 3/4, Ŝ(3) = 3/4 · 1/2 = 3/8: steps over, median 3
    const rows2 = [[1, 1], [2, 0], [3, 1], [5, 0]].map(([t, o]) => ({ group: '', duration: t, observed: o as 0 | 1, users: 1 }));
    expect(kaplanMeier(rows2).median).toBe(3);
    // by hand: 4 users; 2 end at 1, 1 is censored at 2, 1 ends at 4: Ŝ = 1/2 from 1 to 4, where the one
    // user at risk ends (Ŝ(4) = 0); median (1 + 4)/2 = 2.5
    const rows3 = [{ duration: 1, observed: 1, users: 2 }, { duration: 2, observed: 0, users: 1 }, { duration: 4, observed: 1, users: 1 }]
      .map((r) => ({ group: '', ...r, observed: r.observed as 0 | 1 }));
    expect(kaplanMeier(rows3).median).toBe(2.5);
  });

  it('a curve that stays at exactly 0.5 to the end: midpoint of its start and the last observed time (as R survival)', () => {
    // by hand: 4 users; 2 end at 3, 2 are censored at 9: Ŝ = 1/2 from 3 to the end of the data at 9
    const km = kaplanMeier([{ group: '', duration: 3, observed: 1, users: 2 }, { group: '', duration: 9, observed: 0, users: 2 }]);
    expect(km.median).toBe(6);
  });

  it('uncensored: the median equals the ordinary sample median (independent computation, seeded)', () => {
    // without censoring Ŝ(t) is the share of durations above t, so the midpoint rule gives the sample
    // median: the middle value, or the mean of the two middle values (common practice)
    fc.assert(
      fc.property(fc.array(fc.integer({ min: 0, max: 12 }), { minLength: 1, maxLength: 40 }), (ds) => {
        const sorted = [...ds].sort((a, b) => a - b);
        const n = sorted.length;
        const sampleMedian = n % 2 ? sorted[(n - 1) / 2] : (sorted[n / 2 - 1] + sorted[n / 2]) / 2;
        const km = kaplanMeier(ds.map((t) => ({ group: '', duration: t, observed: 1 as const, users: 1 })));
        expect(km.median).toBe(sampleMedian);
      }),
      { seed: 8, numRuns: 300 },
    );
  });

  it('rejects a bad row, naming it', () => {
    expect(() => kaplanMeier([{ group: '', duration: -1, observed: 1, users: 1 }])).toThrow(expect.objectContaining({ code: 'INPUT_INVALID', where: { key: 'rows[0].duration' } }));
    expect(() => kaplanMeierByGroup([{ group: 'x', duration: 1, observed: 2 as 1, users: 1 }])).toThrow(expect.objectContaining({ where: { key: 'rows[0].observed' } }));
  });
});
