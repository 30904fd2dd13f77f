/**
 * The rules comparison against independent computations: the join of two classification streams on
 * hand-made streams; on seeded random logs, the changes against a cross-tabulation of the per-user
 * reference (test/core/reference.ts) under each rule set, the pooled retention and the latest mix
 * against plain loops over the reference states, and the long-run mix against ml-matrix (the
 * eigenvector of Pᵀ for eigenvalue 1, P fitted here by plain loops).
 */
import fc from 'fast-check';
import { EigenvalueDecomposition, Matrix } from 'ml-matrix';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ChangeCounter, StoredClassification } from '../../src/compare/changes.js';
import { checkComparable, diffRules, rulesChanges } from '../../src/compare/run.js';
import { createEngine } from '../../src/engines/index.js';
import { filesSource } from '../../src/engines/types.js';
import { TidemarkError } from '../../src/errors.js';
import { refClassify, type RefEvent, type RefResult, type RefRules } from '../core/reference.js';
import { eventsCsv, rulesOf, tempDir } from '../core/helpers.js';

describe('ChangeCounter: joining two sorted classification streams', () => {
  it('counts pairs by (A, B) state, and user-periods under one side only, worked by hand', () => {
    const a = new StoredClassification();
    // A: ada 03-02 fresh, 03-09 engaged; bo 03-09 fresh; dee 03-02 fresh (dee is under A only)
    for (const [u, p, s] of [['ada', '2026-03-02', 'fresh'], ['ada', '2026-03-09', 'engaged'], ['bo', '2026-03-09', 'fresh'], ['dee', '2026-03-02', 'fresh']]) a.row(u, p, s);
    const b = new ChangeCounter(a);
    // B: aaron (B only), ada 03-09 lapsing only (03-02 under A only), bo 03-09 fresh and 03-16 lapsing (B only), cy (B only)
    for (const [u, p, s] of [['aaron', '2026-03-02', 'fresh'], ['ada', '2026-03-09', 'lapsing'], ['bo', '2026-03-09', 'fresh'], ['bo', '2026-03-16', 'lapsing'], ['cy', '2026-03-16', 'fresh']]) b.row(u, p, s);
    expect(b.result(['fresh', 'engaged', 'returned', 'lapsing', 'dormant'], ['fresh', 'engaged', 'returned', 'lapsing', 'dormant'])).toEqual({
      changes: [{ from: 'fresh', to: 'fresh', count: 1 }, { from: 'engaged', to: 'lapsing', count: 1 }],
      compared: 2,
      changed: 1,
      onlyA: [{ state: 'fresh', count: 2 }],
      onlyB: [{ state: 'fresh', count: 2 }, { state: 'lapsing', count: 1 }],
    });
  });

  it('periods before 1970 and after 2100 pack and order correctly', () => {
    const a = new StoredClassification();
    a.row('m', '1900-01-01', 'fresh');
    a.row('m', '2199-12-30', 'dormant');
    const b = new ChangeCounter(a);
    b.row('m', '1900-01-01', 'fresh');
    b.row('m', '2199-12-30', 'lapsing');
    expect(b.result([], [])).toMatchObject({ changes: [{ from: 'fresh', to: 'fresh', count: 1 }, { from: 'dormant', to: 'lapsing', count: 1 }], onlyA: [], onlyB: [] });
  });

  it('a stream out of user order is an error, not a wrong count', () => {
    const a = new StoredClassification();
    a.row('b', '2026-03-02', 'fresh');
    expect(() => a.row('a', '2026-03-02', 'fresh')).toThrow(/not sorted/);
  });
});

describe('checkComparable and rulesChanges', () => {
  const r = (extra: Record<string, unknown>) => ({ file: 'b.yaml', rules: rulesOf({ grain: 'week', lapseLimit: 2, ...extra } as RefRules) });
  it('refuses another grain or week start, naming B\'s file and the key', () => {
    const e = (() => {
      try {
        checkComparable(r({}), r({ grain: 'day' }));
      } catch (x) {
        return x as TidemarkError;
      }
    })();
    expect(e).toBeInstanceOf(TidemarkError);
    expect([e?.code, e?.where]).toEqual(['INPUT_INVALID', { file: 'b.yaml', key: 'grain' }]);
    expect(() => checkComparable(r({}), r({ weekStart: 'sunday' }))).toThrow(/weekStart monday against sunday/);
    expect(() => checkComparable(r({}), r({ lapseLimit: 3, timezone: 'Europe/Berlin' }))).not.toThrow();
  });
  it('lists the keys that differ', () => {
    expect(rulesChanges(r({}).rules, r({ lapseLimit: 3 }).rules)).toEqual([{ key: 'lapseLimit', a: 2, b: 3 }]);
    expect(rulesChanges(r({}).rules, r({}).rules)).toEqual([]);
  });
});

// ---------------------------------------------------------------------------------------------
// Seeded random logs against the reference

const ACTIVE_BASE = ['fresh', 'engaged', 'returned'];
const activeNames = (r: RefRules) => ACTIVE_BASE.flatMap((s) => r.splits?.find((x) => x.state === s)?.names ?? [s]);

/** Cross-tabulation of two reference classifications, joined on user and period label. */
function refChanges(a: RefResult, b: RefResult) {
  const pairs = new Map<string, number>();
  const onlyA = new Map<string, number>();
  const onlyB = new Map<string, number>();
  const add = (m: Map<string, number>, k: string) => m.set(k, (m.get(k) ?? 0) + 1);
  const cell = (r: RefResult, user: string, label: string) => {
    const i = r.periods.indexOf(label);
    return i < 0 ? null : r.states.get(user)?.[i] ?? null;
  };
  const users = new Set([...a.states.keys(), ...b.states.keys()]);
  const labels = [...new Set([...a.periods, ...b.periods])];
  for (const u of users) {
    for (const l of labels) {
      const sa = cell(a, u, l), sb = cell(b, u, l);
      if (sa && sb) add(pairs, `${sa}>${sb}`);
      else if (sa) add(onlyA, sa);
      else if (sb) add(onlyB, sb);
    }
  }
  return { pairs, onlyA, onlyB };
}

/** Pooled status-split retention and the latest mix, by plain loops over the reference states. */
function refHeadlines(r: RefResult, rules: RefRules) {
  const active = activeNames(rules);
  const retention = active.map((s) => {
    let n = 0, retained = 0;
    for (const row of r.states.values()) {
      for (let p = 1; p < r.periods.length; p++) {
        if (row[p - 1] !== s) continue;
        n++;
        if (row[p] !== null && active.includes(row[p] as string)) retained++;
      }
    }
    return { state: s, n, retained, rate: n === 0 ? null : retained / n };
  });
  const last = r.periods.length - 1;
  const counts = r.stateList.map((s) => [...r.states.values()].filter((row) => row[last] === s).length);
  const total = counts.reduce((x, y) => x + y, 0);
  return { retention, mix: r.stateList.map((s, i) => ({ state: s, users: counts[i], share: total === 0 ? null : counts[i] / total })) };
}

/** The stationary mix of the chain fitted by plain loops (pooled counts, rows normalised), over the states seen, with ml-matrix. */
function refLongRun(r: RefResult): Record<string, number> {
  const S = r.stateList;
  const counts = S.map(() => S.map(() => 0));
  for (const row of r.states.values()) for (let p = 1; p < r.periods.length; p++) if (row[p - 1] && row[p]) counts[S.indexOf(row[p - 1] as string)][S.indexOf(row[p] as string)]++;
  const last = r.periods.length - 1;
  const seen = S.map((s, i) => counts[i].some((v) => v > 0) || counts.some((row) => row[i] > 0) || [...r.states.values()].some((row) => row[last] === s) || (s === 'fresh' && r.transitions.some((t) => t.fresh > 0)));
  const keep = S.map((_, i) => i).filter((i) => seen[i]);
  const P = keep.map((i) => {
    const n = keep.reduce((a, j) => a + counts[i][j], 0);
    return keep.map((j) => (n === 0 ? (i === j ? 1 : 0) : counts[i][j] / n));
  });
  const evd = new EigenvalueDecomposition(new Matrix(P).transpose());
  const l = evd.realEigenvalues;
  let k = 0;
  l.forEach((x, i) => {
    if (Math.abs(x - 1) < Math.abs(l[k] - 1)) k = i;
  });
  const v = evd.eigenvectorMatrix.getColumn(k);
  const sum = v.reduce((a, b) => a + b, 0);
  return Object.fromEntries(S.map((s, i) => [s, keep.includes(i) ? v[keep.indexOf(i)] / sum : 0]));
}

const ruleArb: fc.Arbitrary<RefRules> = fc.record({
  grain: fc.constant('week' as const),
  lapseLimit: fc.integer({ min: 0, max: 3 }),
  minEvents: fc.constantFrom(1, 1, 2),
  keyEvents: fc.constantFrom(undefined, ['booking']),
  splits: fc.constantFrom(undefined, [{ state: 'returned' as const, atLeast: 3, names: ['back', 'back_keen'] as [string, string] }]),
}).map((r) => Object.fromEntries(Object.entries(r).filter(([, v]) => v !== undefined)) as unknown as RefRules);

const START = Date.UTC(2026, 2, 2);
const eventsArb = fc.array(
  fc.record({ user: fc.constantFrom('m1', 'm2', 'm3', 'm4', 'm5', 'm6', 'm7', 'm8'), at: fc.integer({ min: 0, max: 10 * 7 * 86_400_000 - 1 }), event: fc.constantFrom('booking', 'checked_in'), repeat: fc.constantFrom(1, 1, 2) }),
  { minLength: 1, maxLength: 70 },
).map((raw) => {
  // m0 books in the first and the last week, so both rule sets see the same span
  const out: RefEvent[] = [0, 1, 9 * 7, 9 * 7 + 1].map((d) => ({ user: 'm0', timestamp: new Date(START + d * 86_400_000).toISOString(), event: 'booking' }));
  for (const r of raw) for (let k = 0; k < r.repeat; k++) out.push({ user: r.user, timestamp: new Date(START + r.at).toISOString(), event: r.event });
  return out;
});

let t: ReturnType<typeof tempDir>;
beforeAll(() => {
  t = tempDir();
});
afterAll(() => t.done());

describe('rules diff against the per-user reference on seeded random logs', () => {
  it('changes, present-under-one counts, pooled retention, latest mix and long-run mix', async () => {
    let compared = 0;
    await fc.assert(
      fc.asyncProperty(ruleArb, ruleArb, eventsArb, async (ra, rb, events) => {
        const f = t.file('bookings.csv', eventsCsv(events));
        const { diff } = await diffRules(createEngine('memory'), filesSource([f]), { file: 'a.yaml', rules: rulesOf(ra) }, { file: 'b.yaml', rules: rulesOf(rb) }, {}, { includePartial: true });
        const a = refClassify(events, ra), b = refClassify(events, rb);
        const want = refChanges(a, b);
        const show = `${JSON.stringify(ra)} / ${JSON.stringify(rb)}\n${eventsCsv(events)}`;
        expect(Object.fromEntries(diff.changes.map((c) => [`${c.from}>${c.to}`, c.count])), show).toEqual(Object.fromEntries(want.pairs));
        expect(Object.fromEntries(diff.onlyA.map((c) => [c.state, c.count])), show).toEqual(Object.fromEntries(want.onlyA));
        expect(Object.fromEntries(diff.onlyB.map((c) => [c.state, c.count])), show).toEqual(Object.fromEntries(want.onlyB));
        expect(diff.compared).toBe([...want.pairs.values()].reduce((x, y) => x + y, 0));
        expect(diff.changed).toBe([...want.pairs].filter(([k]) => k.split('>')[0] !== k.split('>')[1]).reduce((x, [, n]) => x + n, 0));
        compared += diff.compared;
        for (const [h, r, rules] of [[diff.headlines.a, a, ra], [diff.headlines.b, b, rb]] as const) {
          const plain = refHeadlines(r, rules);
          expect(h.retention, show).toEqual(plain.retention);
          expect(h.latestMix.states, show).toEqual(plain.mix);
          expect(h.latestMix.period).toBe(r.periods[r.periods.length - 1]);
          if (h.longRun.shares) {
            const long = refLongRun(r);
            for (const s of h.longRun.shares) expect(s.share, `${s.state}\n${show}`).toBeCloseTo(long[s.state], 6);
          }
        }
      }),
      { seed: 20261212, numRuns: 80 },
    );
    expect(compared).toBeGreaterThan(0);
  }, 120_000);
});
