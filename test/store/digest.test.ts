/**
 * The digest (src/store/digest.ts) on a worked example built by hand: six weekly periods whose last
 * transition is set so that the answers can be read off the table, and retention counts whose test
 * statistic is a published check value (56/70 against 48/80: z = 2.650171951258532, p =
 * 0.008045081368196585, scipy 1.17.1 chi2_contingency without continuity correction, as
 * test/stats/ztest.test.ts and test/fixtures/published-values.md give it), adjusted by the
 * Benjamini–Hochberg (1995) step-up rule worked by hand for three tests.
 */
import { describe, expect, it } from 'vitest';
import type { RetentionCell, TransitionCounts, WaistTables } from '../../src/flows/types.js';
import { parseRules } from '../../src/rules/load.js';
import { DIGEST_LINES, digestLines, digestOf, type Digest } from '../../src/store/digest.js';
import { makeManifest } from '../../src/waist/build.js';
import type { Waist } from '../../src/waist/types.js';

const STATES = ['fresh', 'engaged', 'returned', 'lapsing', 'dormant'];
const PERIODS = ['2026-03-02', '2026-03-09', '2026-03-16', '2026-03-23', '2026-03-30', '2026-04-06'];
const ix = (s: string) => STATES.indexOf(s);

/** A transition with the given moves (from, to, users) and arrivals. */
function transition(k: number, moves: [string, string, number][], fresh: number): TransitionCounts {
  const counts = STATES.map(() => STATES.map(() => 0));
  for (const [a, b, n] of moves) counts[ix(a)][ix(b)] = n;
  return { from: PERIODS[k - 1], to: PERIODS[k], counts, fresh };
}

function example(complete = true): Waist {
  const rules = parseRules('grain: week\nlapseLimit: 2\nminCell: 5\n', 'rules.yaml');
  // the four weeks before the last: engaged → lapsing 10, 12, 8, 10 (average 10); returned → engaged
  // 20 each; fresh → engaged 30 each; engaged → engaged 40 each; dormant → dormant 100, 200, 300, 400
  const before = [10, 12, 8, 10].map((x, i) => transition(i + 1, [['engaged', 'lapsing', x], ['returned', 'engaged', 20], ['fresh', 'engaged', 30], ['engaged', 'engaged', 40], ['dormant', 'dormant', 100 * (i + 1)]], 9));
  // the last week: engaged → lapsing 25 (+15), returned → engaged 5 (−15), fresh → engaged 22 (−8),
  // dormant → dormant 900 (+650, left out: staying gone only piles up), engaged → engaged 40 (no change),
  // lapsing → returned 7 (+7)
  const last = transition(5, [['engaged', 'lapsing', 25], ['returned', 'engaged', 5], ['fresh', 'engaged', 22], ['dormant', 'dormant', 900], ['engaged', 'engaged', 40], ['lapsing', 'returned', 7]], 12);
  const cell = (to: string, state: string, n: number, retained: number): RetentionCell => ({ to, state, segment: '0', n, retained });
  const tenureCells = [
    cell(PERIODS[4], 'fresh', 80, 48), cell(PERIODS[5], 'fresh', 70, 56),
    cell(PERIODS[4], 'engaged', 100, 50), cell(PERIODS[5], 'engaged', 100, 50),
    cell(PERIODS[4], 'returned', 20, 10), cell(PERIODS[5], 'returned', 20, 10),
  ];
  // the last week's counts follow from its transition: fresh 12, engaged 5 + 22 + 40, returned 7, lapsing 25, dormant 900
  const stateCounts = PERIODS.map((_, p) => (p === 5 ? [12, 67, 7, 25, 900] : [0, 0, 0, 0, 0]));
  const tables: WaistTables = {
    states: STATES, activeStates: STATES.slice(0, 3), arrivalState: 'fresh', exitState: 'dormant', periods: PERIODS, warmup: 0,
    stateCounts, transitions: [...before, last], tenureCells, cohorts: [], durations: [],
  };
  const manifest = makeManifest({
    rules, warmup: 0, periods: PERIODS, engine: 'memory',
    rows: { read: 0, used: 0, notKeyEvent: 0, afterRange: 0, partial: 0, rejected: {}, lines: { read: 0, header: 0, blank: 0, records: 0, rejected: 0 } },
    rowsInLastPeriod: 0, lastPeriod: { label: PERIODS[5], coverage: complete ? 1 : 0.4, complete }, users: 0, events: [], attributes: [], by: null, byPerPerson: false, warnings: [],
  });
  return { manifest, tables };
}

describe('digestOf, worked by hand', () => {
  const d = digestOf(example());
  it('counts the latest week: active, arrivals, returns, gone quiet (growth accounting of its transition)', () => {
    expect(d).toMatchObject({ grain: 'week', period: '2026-04-06', previous: '2026-03-30', active: 86, arrivals: 12, returns: 7, wentQuiet: 25, averageOver: 4 });
  });
  it('finds the moves that grew and shrank most against the previous four weeks\' average, leaving staying dormant out', () => {
    expect(d.grew).toEqual({ from: 'engaged', to: 'lapsing', users: 25, average: 10, change: 15, relative: 1.5 });
    expect(d.shrank).toEqual({ from: 'returned', to: 'engaged', users: 5, average: 20, change: -15, relative: -0.75 });
  });
  it('reports the retention change that stays significant after Benjamini–Hochberg, with its adjusted p', () => {
    expect(d.retention.tested).toBe(3);
    expect(d.retention.significant).toHaveLength(1);
    const c = d.retention.significant[0];
    expect(c.state).toBe('fresh');
    expect(c.label).toBe('newcomers');
    expect(c.change).toBeCloseTo(0.2, 12);
    expect(c.p).toBeCloseTo(0.008045081368196585, 14);
    // BH, m = 3, p sorted (0.008045…, 1, 1): adjusted p(1) = min(3·p(1)/1, 3·1/2, 3·1/3) = 3·0.008045…
    expect(c.pAdjusted).toBeCloseTo(3 * 0.008045081368196585, 14);
  });
  it('reads as four lines', () => {
    expect(digestLines(d)).toEqual([
      'Week of 2026-04-06: 86 active users (12 new, 7 returned); 25 went quiet.',
      'Grew most against the previous 4 weeks: engaged → lapsing, 25 users (average 10, +150%).',
      'Shrank most: returned → engaged, 5 users (average 20, −75%).',
      'Retention of newcomers rose 20.0 points, 60.0% → 80.0% (adjusted p = 0.024).',
    ]);
  });
  it('says when the latest week is incomplete', () => {
    expect(digestLines(digestOf(example(false)))[0]).toBe('Week of 2026-04-06 (incomplete: the data stop 40% into it): 86 active users (12 new, 7 returned); 25 went quiet.');
  });
});

describe('digestLines', () => {
  const base: Digest = {
    grain: 'week', period: '2026-04-06', previous: '2026-03-30', complete: true, coverage: 1, active: 1, arrivals: 1, returns: 0, wentQuiet: 0,
    averageOver: 1, grew: null, shrank: null, retention: { tested: 0, q: 0.05, significant: [] },
  };
  it('a first week says there is nothing to compare with', () => {
    expect(digestLines({ ...base, previous: null, averageOver: 0 })).toEqual(['Week of 2026-04-06: 1 active users (1 new, 0 returned); 0 went quiet.', 'The first week stored: nothing earlier to compare with.']);
  });
  it('never exceeds eight lines, however many changes are significant', () => {
    const change = (state: string) => ({ state, label: state, base: { n: 10, retained: 5, rate: 0.5 }, compare: { n: 10, retained: 9, rate: 0.9 }, change: 0.4, lower: 0.1, upper: 0.6, p: 0.01, pAdjusted: 0.02 });
    const lines = digestLines({ ...base, retention: { tested: 9, q: 0.05, significant: ['a', 'b', 'c', 'd', 'e', 'f', 'g', 'h', 'i'].map(change) } });
    expect(lines).toHaveLength(DIGEST_LINES);
    expect(lines[DIGEST_LINES - 1]).toBe('… and 5 more significant retention changes (--format json lists them).');
  });
});
