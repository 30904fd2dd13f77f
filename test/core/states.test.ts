/**
 * Hand-worked tiny logs of the makerspace booking app: every lifecycle state and every allowed
 * transition, with the expected states written out by hand from the specification's definitions
 * (fresh, engaged, returned, lapsing, dormant).
 *
 * Day grain in UTC unless said otherwise; day Dn is 2026-03-0n (2026-03-10 for D10).
 * State strings read one letter a period: F fresh, E engaged, R returned, L lapsing, D dormant,
 * '.' no state (before the user's first active period).
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { summariseFlows } from '../../src/flows/summary.js';
import type { RefEvent, RefRules } from './reference.js';
import { runEngine, statesByUser, useEngine } from './helpers.js';
import { ENGINES } from './engines.js';

describe.each(ENGINES)('%s engine', (engine) => {
  beforeAll(() => useEngine(engine));

  const LETTER: Record<string, string> = { F: 'fresh', E: 'engaged', R: 'returned', L: 'lapsing', D: 'dormant' };
  const STATES = ['fresh', 'engaged', 'returned', 'lapsing', 'dormant'];

  const day = (n: number) => `2026-03-${String(n).padStart(2, '0')}`;
  /** One event on day Dn at 10:00Z (optionally several). */
  function on(user: string, days: number[], event = 'booking', times = 1): RefEvent[] {
    return days.flatMap((d) => Array.from({ length: times }, (_, k) => ({ user, timestamp: `${day(d)}T10:${String(k).padStart(2, '0')}:00Z`, event })));
  }

  /** Expected rows from a letter string per user over `periods`. */
  function expectStates(rows: { user: string; period: string; state: string }[], periods: string[], expected: Record<string, string>) {
    const want: Record<string, Record<string, string>> = {};
    for (const [user, letters] of Object.entries(expected)) {
      const cells = letters.split(' ');
      expect(cells.length, `test data for ${user}`).toBe(periods.length);
      cells.forEach((c, p) => {
        if (c !== '.') (want[user] ??= {})[periods[p]] = LETTER[c];
      });
    }
    expect(statesByUser(rows)).toEqual(want);
  }

  /** counts matrix from a sparse list "from>to:n". */
  function matrix(...cells: string[]): number[][] {
    const m = STATES.map(() => STATES.map(() => 0));
    for (const c of cells) {
      const [, a, b, n] = /^(\w+)>(\w+):(\d+)$/.exec(c)!;
      m[STATES.indexOf(a)][STATES.indexOf(b)] = Number(n);
    }
    return m;
  }

  describe('lifecycle states, lapseLimit 2, day grain', () => {
    const rules: RefRules = { grain: 'day', lapseLimit: 2 };
    const events: RefEvent[] = [
      ...on('ada', [1, 2, 6, 7]), // fresh, engaged, two quiet days lapsing, third dormant, returns, engaged
      ...on('bo', [1, 3]), // fresh → lapsing → returned → lapsing … dormant
      ...on('cy', [4]), // a one-event member
      ...on('dee', [10]), // first active in the last period
      ...on('eli', [1, 2, 3, 4, 5, 6, 7, 8, 9, 10]), // books every day
    ];
    const periods = Array.from({ length: 10 }, (_, i) => day(i + 1));

    it('gives every member the hand-worked state in every period from their first active one', async () => {
      const { rows, result } = await runEngine(events, rules);
      expect(result.waist.periods).toEqual(periods);
      expect(result.waist.states).toEqual(STATES);
      expect(result.waist.activeStates).toEqual(['fresh', 'engaged', 'returned']);
      expectStates(rows, periods, {
        //    D1 D2 D3 D4 D5 D6 D7 D8 D9 D10
        ada: 'F E L L D R E L L D',
        bo: 'F L R L L D D D D D',
        cy: '. . . F L L D D D D',
        dee: '. . . . . . . . . F',
        eli: 'F E E E E E E E E E',
      });
      expect(result.users).toBe(5);
    });

    it('rows are sorted by user, then period', async () => {
      const { rows } = await runEngine([...events].reverse(), rules);
      const keys = rows.map((r) => `${r.user}|${r.period}`);
      expect(keys).toEqual([...keys].sort());
    });

    it('counts each pair of days by hand: D3→D4, D5→D6, D9→D10', async () => {
      const { result } = await runEngine(events, rules);
      const t = result.waist.transitions;
      expect(t.map((x) => `${x.from}>${x.to}`)).toEqual(periods.slice(1).map((p, i) => `${periods[i]}>${p}`));
      // D3→D4: ada lapsing→lapsing, bo returned→lapsing, eli engaged→engaged; cy enters fresh
      expect(t[2].counts).toEqual(matrix('lapsing>lapsing:1', 'returned>lapsing:1', 'engaged>engaged:1'));
      expect(t[2].fresh).toBe(1);
      // D5→D6: ada dormant→returned, bo lapsing→dormant, cy lapsing→lapsing, eli engaged→engaged
      expect(t[4].counts).toEqual(matrix('dormant>returned:1', 'lapsing>dormant:1', 'lapsing>lapsing:1', 'engaged>engaged:1'));
      expect(t[4].fresh).toBe(0);
      // D9→D10: ada lapsing→dormant, bo and cy dormant→dormant, eli engaged; dee is fresh, absent on D9
      expect(t[8].counts).toEqual(matrix('lapsing>dormant:1', 'dormant>dormant:2', 'engaged>engaged:1'));
      expect(t[8].fresh).toBe(1);
      // D1→D2 and D6→D7: fresh→engaged, fresh→lapsing, returned→engaged
      expect(t[0].counts).toEqual(matrix('fresh>engaged:2', 'fresh>lapsing:1'));
      expect(t[5].counts).toEqual(matrix('returned>engaged:1', 'dormant>dormant:1', 'lapsing>dormant:1', 'engaged>engaged:1'));
    });

    it('state counts per period match the table above', async () => {
      const { result } = await runEngine(events, rules);
      // D6: ada returned, bo dormant, cy lapsing, eli engaged
      expect(result.waist.stateCounts[5]).toEqual([0, 1, 1, 1, 1]);
      // D10: dee fresh, eli engaged, ada bo cy dormant
      expect(result.waist.stateCounts[9]).toEqual([1, 1, 0, 0, 3]);
    });

    it('summarises D3→D4 by hand: rates, status-split retention, growth account', async () => {
      const { result } = await runEngine(events, rules);
      const s = summariseFlows(result.waist).transitions[2];
      expect(s.from).toBe(day(3));
      expect(s.rates).toEqual([null, [0, 1, 0, 0, 0], [0, 0, 0, 1, 0], [0, 0, 0, 1, 0], null]);
      expect(s.retention.fresh).toEqual({ n: 0, retained: 0, rate: null });
      expect(s.retention.engaged).toEqual({ n: 1, retained: 1, rate: 1 });
      expect(s.retention.returned).toEqual({ n: 1, retained: 0, rate: 0 });
      // active D3: bo, eli; active D4: cy, eli; bo went quiet, cy is new: 2 = 2 − 1 + 1 + 0
      expect(s.growth).toEqual({ activeBefore: 2, newlyInactive: 1, fresh: 1, returned: 0, activeAfter: 2, residual: 0, quickRatio: 1 });
    });

    it('summarises D5→D6: a return from dormancy with nobody going quiet', async () => {
      const { result } = await runEngine(events, rules);
      const g = summariseFlows(result.waist).transitions[4].growth;
      // active D5: eli; active D6: ada (returned), eli
      expect(g).toMatchObject({ activeBefore: 1, newlyInactive: 0, fresh: 0, returned: 1, activeAfter: 2, residual: 0 });
      // (fresh + returned) / newlyInactive has no value when nobody went inactive
      expect(g.quickRatio === null || g.quickRatio === Infinity).toBe(true);
    });
  });

  describe('lapseLimit edge values', () => {
    it('lapseLimit 0: an inactive period is dormant at once', async () => {
      const events = [...on('ada', [1, 3]), ...on('eli', [1, 2, 3])];
      const { rows, result } = await runEngine(events, { grain: 'day', lapseLimit: 0 });
      expectStates(rows, [day(1), day(2), day(3)], { ada: 'F D R', eli: 'F E E' });
      expect(result.waist.transitions[0].counts).toEqual(matrix('fresh>dormant:1', 'fresh>engaged:1'));
      expect(result.waist.transitions[1].counts).toEqual(matrix('dormant>returned:1', 'engaged>engaged:1'));
    });

    it('lapseLimit 1: one quiet period lapsing, the second dormant', async () => {
      const events = [...on('ada', [1]), ...on('eli', [1, 2, 3, 4])];
      const { rows } = await runEngine(events, { grain: 'day', lapseLimit: 1 });
      expectStates(rows, [day(1), day(2), day(3), day(4)], { ada: 'F L D D', eli: 'F E E E' });
    });

    it('the quiet count restarts after a return', async () => {
      // lapseLimit 2: L L R L L D — the second run of quiet days is counted from its own start
      const events = [...on('ada', [1, 4]), ...on('eli', [1, 2, 3, 4, 5, 6, 7])];
      const { rows } = await runEngine(events, { grain: 'day', lapseLimit: 2 });
      expectStates(rows, Array.from({ length: 7 }, (_, i) => day(i + 1)), { ada: 'F L L R L L D', eli: 'F E E E E E E' });
    });

    it('a log with one member and one event: one period, fresh, no transitions', async () => {
      const { rows, result } = await runEngine(on('ada', [5]), { grain: 'day', lapseLimit: 2 });
      expect(result.waist.periods).toEqual([day(5)]);
      expect(rows).toEqual([{ user: 'ada', period: day(5), state: 'fresh' }]);
      expect(result.waist.transitions).toEqual([]);
    });
  });

  describe('what makes a member active', () => {
    it('minEvents 2: one booking in a period is not enough', async () => {
      const events = [
        ...on('ada', [1, 3], 'booking', 2), // two bookings on D1 and D3
        ...on('ada', [2]), // one on D2: inactive
        ...on('bo', [1, 2, 3]), // never two in a period: never active, no state at all
      ];
      const { rows, result } = await runEngine(events, { grain: 'day', lapseLimit: 2, minEvents: 2 });
      expect(result.waist.periods).toEqual([day(1), day(2), day(3)]);
      expectStates(rows, [day(1), day(2), day(3)], { ada: 'F L R' });
      expect(result.users).toBe(1);
    });

    it('minEvents 3 counts events across the period, not per timestamp', async () => {
      // week grain: three bookings on three different days of the week of 2026-03-02 make it active
      const events: RefEvent[] = [
        { user: 'ada', timestamp: '2026-03-02T09:00:00Z', event: 'booking' },
        { user: 'ada', timestamp: '2026-03-04T09:00:00Z', event: 'booking' },
        { user: 'ada', timestamp: '2026-03-08T21:00:00Z', event: 'booking' },
        { user: 'ada', timestamp: '2026-03-10T09:00:00Z', event: 'booking' },
        { user: 'ada', timestamp: '2026-03-11T09:00:00Z', event: 'booking' },
      ];
      const { rows } = await runEngine(events, { grain: 'week', lapseLimit: 1, minEvents: 3 });
      expectStates(rows, ['2026-03-02', '2026-03-09'], { ada: 'F L' });
    });

    it('a key event below minEvents is still a used event: it bounds the range', async () => {
      // spec: the range runs from the period of the earliest used event to the period of the latest;
      // bo's single booking on D4 is a used key event (not a non-key one), though it makes nobody active
      const events = [...on('ada', [1, 2], 'booking', 2), ...on('bo', [4])];
      const { rows, result } = await runEngine(events, { grain: 'day', lapseLimit: 2, minEvents: 2 });
      expect(result.rows.used).toBe(5);
      expect(result.waist.periods).toEqual([day(1), day(2), day(3), day(4)]);
      expectStates(rows, [day(1), day(2), day(3), day(4)], { ada: 'F E L L' });
    });

    it('all members inactive: the range stands, every table is empty of members', async () => {
      // spec: the range is set by used events; a state needs an active period, so nobody has one
      const events = [...on('ada', [1]), ...on('bo', [3])];
      const { rows, result } = await runEngine(events, { grain: 'day', lapseLimit: 1, minEvents: 2 });
      expect(result.waist.periods).toEqual([day(1), day(2), day(3)]);
      expect(rows).toEqual([]);
      expect(result.users).toBe(0);
      expect(result.waist.stateCounts).toEqual([0, 0, 0].map(() => [0, 0, 0, 0, 0]));
      for (const t of result.waist.transitions) {
        expect(t.counts.flat().every((n) => n === 0)).toBe(true);
        expect(t.fresh).toBe(0);
      }
      const s = summariseFlows(result.waist);
      for (const t of s.transitions) {
        expect(t.rates.every((r) => r === null)).toBe(true);
        expect(t.growth).toMatchObject({ activeBefore: 0, activeAfter: 0, residual: 0 });
      }
    });

    it('keyEvents: other events neither make a member active nor stretch the range', async () => {
      const rules: RefRules = { grain: 'day', lapseLimit: 2, keyEvents: ['booking', 'tool_reservation'] };
      const events: RefEvent[] = [
        { user: 'ada', timestamp: '2026-02-28T10:00:00Z', event: 'login' }, // before any key event
        ...on('ada', [1], 'booking'),
        ...on('ada', [2], 'login'),
        ...on('ada', [2], 'view_calendar'),
        ...on('ada', [3], 'tool_reservation'),
        ...on('bo', [1, 2, 3], 'login'), // only non-key events: no state
        ...on('cy', [2], 'booking'),
        ...on('ada', [5], 'login'), // after the last key event
      ];
      const { rows, result } = await runEngine(events, rules);
      expect(result.waist.periods).toEqual([day(1), day(2), day(3)]);
      expectStates(rows, [day(1), day(2), day(3)], { ada: 'F L R', cy: '. F L' });
      expect(result.rows.used).toBe(3);
      expect(result.rows.notKeyEvent).toBe(7);
      expect(result.users).toBe(2);
    });

    it('keyEvents with minEvents 2: only key events are counted toward the threshold', async () => {
      const rules: RefRules = { grain: 'day', lapseLimit: 2, keyEvents: ['booking'], minEvents: 2 };
      const events = [...on('ada', [1], 'booking', 2), ...on('ada', [2], 'booking'), ...on('ada', [2], 'login', 3), ...on('ada', [3], 'booking', 2)];
      const { rows } = await runEngine(events, rules);
      expectStates(rows, [day(1), day(2), day(3)], { ada: 'F L R' });
    });
  });

  describe('month and week grain by hand', () => {
    it('month grain: dormancy measured in months', async () => {
      const events: RefEvent[] = [
        { user: 'ada', timestamp: '2026-01-15T12:00:00Z', event: 'booking' },
        { user: 'ada', timestamp: '2026-05-02T12:00:00Z', event: 'booking' },
        { user: 'bo', timestamp: '2026-01-31T23:59:59Z', event: 'booking' },
        { user: 'bo', timestamp: '2026-02-01T00:00:00Z', event: 'booking' },
        { user: 'bo', timestamp: '2026-05-31T00:00:00Z', event: 'booking' },
      ];
      const { rows, result } = await runEngine(events, { grain: 'month', lapseLimit: 1 });
      const periods = ['2026-01-01', '2026-02-01', '2026-03-01', '2026-04-01', '2026-05-01'];
      expect(result.waist.periods).toEqual(periods);
      expectStates(rows, periods, { ada: 'F L D D R', bo: 'F E L D R' });
    });
  });

  describe('--from and --to by hand', () => {
    const rules: RefRules = { grain: 'day', lapseLimit: 1 };
    const events = [...on('ada', [1]), ...on('bo', [2, 9])];

    it('--from keeps earlier history: bo is dormant, not fresh, at --from', async () => {
      const { rows, result } = await runEngine(events, rules, { from: day(4) });
      expect(result.waist.periods).toEqual([4, 5, 6, 7, 8, 9].map(day));
      expectStates(rows, result.waist.periods, { ada: 'D D D D D D', bo: 'D D D D D R' });
      expect(result.waist.transitions.map((t) => t.from)).toEqual([4, 5, 6, 7, 8].map(day));
    });

    it('--from before the first event does not widen the range', async () => {
      const { result } = await runEngine(events, rules, { from: '2026-02-25' });
      expect(result.waist.periods[0]).toBe(day(1));
    });

    it('--to ignores later events and, like --from, only narrows: the range ends at the latest used event', async () => {
      // spec: "output range narrowed"; the range runs to the period of the latest used event, and with
      // --to 2026-03-05 the latest used event left is bo's on D2
      const { rows, result } = await runEngine(events, rules, { to: day(5) });
      expect(result.rows.afterRange).toBe(1);
      expect(result.waist.periods).toEqual([day(1), day(2)]);
      expectStates(rows, [day(1), day(2)], { ada: 'F L', bo: '. F' });
    });

    it('--to inside a period that holds events ends the range there', async () => {
      const weekly: RefRules = { grain: 'week', lapseLimit: 1 };
      const ev: RefEvent[] = [
        { user: 'ada', timestamp: '2026-03-02T10:00:00Z', event: 'booking' },
        { user: 'ada', timestamp: '2026-03-10T10:00:00Z', event: 'booking' }, // Tuesday of the week of 03-09
        { user: 'ada', timestamp: '2026-03-14T10:00:00Z', event: 'booking' }, // Saturday, same week, after --to's date but inside its period
        { user: 'ada', timestamp: '2026-03-16T10:00:00Z', event: 'booking' }, // next week: dropped
      ];
      const { rows, result } = await runEngine(ev, weekly, { to: '2026-03-11' });
      expect(result.waist.periods).toEqual(['2026-03-02', '2026-03-09']);
      expect(result.rows).toMatchObject({ used: 3, afterRange: 1 });
      expectStates(rows, result.waist.periods, { ada: 'F E' });
    });
  });
});
