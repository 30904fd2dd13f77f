/**
 * The waist tables beyond the transition counts — retention cells by tenure band and by attribute,
 * time-to-dormant durations, and the per-cohort survivors that `curve` fits — checked against plain
 * per-user computations over `classify`'s output and the raw events, on a seeded random log.
 */
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { cohortSurvivors } from '../../src/curve/survivors.js';
import type { WaistTables } from '../../src/flows/types.js';
import { mulberry32 } from '../../src/numerics/random.js';
import { parseRules } from '../../src/rules/load.js';
import { tempDir } from '../report/fixtures.js';
import { ENGINES, classifyWith } from './engines.js';
import { filesSource } from '../../src/engines/types.js';

describe.each(ENGINES)('%s engine', (engine) => {

  const ACTIVE = new Set(['fresh', 'engaged', 'returned']);
  const BANDS = [0, 1, 4];
  const bandOf = (t: number) => (t >= 4 ? '4+' : t >= 1 ? '1-3' : '0');
  const LAPSE = 1;
  let waist: WaistTables;
  let periods: string[];
  let users: Map<string, { states: Map<string, string>; plan: Map<string, { at: string; plan: string }> }>;

  beforeAll(async () => {
    const dir = tempDir('tidemark-extras-');
    const rng = mulberry32(2024);
    const lines = ['user_id,timestamp,event,plan'];
    const plans = ['hobby', 'studio', 'pro'];
    for (let m = 0; m < 400; m++) {
      const start = Math.floor(rng() * 12);
      for (let w = start; w < 16; w++) {
        if (w !== start && rng() > 0.5) continue;
        const n = 1 + Math.floor(rng() * 3);
        for (let k = 0; k < n; k++) {
          const at = new Date(Date.UTC(2026, 0, 5) + w * 7 * 86_400_000 + Math.floor(rng() * 7 * 86_400_000)).toISOString();
          lines.push(`m${m},${at},booking_made,${plans[Math.floor(rng() * 3)]}`);
        }
      }
    }
    const f = join(dir, 'events.csv');
    writeFileSync(f, lines.join('\n'));
    const rules = parseRules(`grain: week\nlapseLimit: ${LAPSE}\ntenureBands: [${BANDS.join(', ')}]\n`);
    const { rows, result } = await classifyWith(engine, filesSource([f]), rules, { by: 'plan' });
    waist = result.waist;
    periods = waist.periods;
    users = new Map();
    for (const r of rows) {
      let u = users.get(r.user);
      if (!u) users.set(r.user, (u = { states: new Map(), plan: new Map() }));
      u.states.set(r.period, r.state);
    }
    // the plan of a user in a period: the value on their latest event in it
    const weekOf = (iso: string) => periods.filter((p) => p <= iso.slice(0, 10)).pop()!;
    for (const line of lines.slice(1)) {
      const [user, at, , plan] = line.split(',');
      const p = weekOf(at);
      const u = users.get(user)!;
      const cur = u.plan.get(p);
      if (!cur || at >= cur.at) u.plan.set(p, { at, plan });
    }
  });

  function firstPeriod(u: { states: Map<string, string> }): number {
    return periods.findIndex((p) => u.states.has(p));
  }

  describe('waist extras against per-user computation', () => {
    it('tenure cells: users in each active state and tenure band at t−1, and how many are active at t', () => {
      const expected = new Map<string, { n: number; retained: number }>();
      for (const u of users.values()) {
        const first = firstPeriod(u);
        for (let t = first + 1; t < periods.length; t++) {
          const prev = u.states.get(periods[t - 1])!;
          if (!ACTIVE.has(prev)) continue;
          const k = `${periods[t]}|${prev}|${bandOf(t - 1 - first)}`;
          const c = expected.get(k) ?? { n: 0, retained: 0 };
          c.n++;
          if (ACTIVE.has(u.states.get(periods[t])!)) c.retained++;
          expected.set(k, c);
        }
      }
      const got = new Map(waist.tenureCells.map((c) => [`${c.to}|${c.state}|${c.segment}`, { n: c.n, retained: c.retained }]));
      expect(expected.size).toBeGreaterThan(30);
      expect(got).toEqual(expected);
    });

    it('segment cells: the same split by the plan on the user\'s latest event in the earlier period', () => {
      const expected = new Map<string, { n: number; retained: number }>();
      for (const u of users.values()) {
        for (let t = firstPeriod(u) + 1; t < periods.length; t++) {
          const prev = u.states.get(periods[t - 1])!;
          if (!ACTIVE.has(prev)) continue;
          const k = `${periods[t]}|${prev}|${u.plan.get(periods[t - 1])!.plan}`;
          const c = expected.get(k) ?? { n: 0, retained: 0 };
          c.n++;
          if (ACTIVE.has(u.states.get(periods[t])!)) c.retained++;
          expected.set(k, c);
        }
      }
      const got = new Map(waist.segmentCells!.cells.map((c) => [`${c.to}|${c.state}|${c.segment}`, { n: c.n, retained: c.retained }]));
      expect(expected.size).toBeGreaterThan(30);
      expect(got).toEqual(expected);
    });

    it('segment flows: state counts and transitions of each plan (the plan in the user\'s first active period), adding up to the unsplit tables', () => {
      const STATES = waist.states;
      const expected = new Map<string, { stateCounts: number[][]; transitions: number[][][] }>();
      for (const u of users.values()) {
        const first = firstPeriod(u);
        const seg = u.plan.get(periods[first])!.plan;
        let e = expected.get(seg);
        if (!e) expected.set(seg, (e = { stateCounts: periods.map(() => STATES.map(() => 0)), transitions: periods.slice(1).map(() => STATES.map(() => STATES.map(() => 0))) }));
        for (let t = first; t < periods.length; t++) {
          const s = STATES.indexOf(u.states.get(periods[t])!);
          e.stateCounts[t][s]++;
          if (t > first) e.transitions[t - 1][STATES.indexOf(u.states.get(periods[t - 1])!)][s]++;
        }
      }
      const got = waist.segmentTransitions!;
      expect(got.by).toBe('plan');
      expect(new Map(got.segments.map((g) => [g.segment, { stateCounts: g.stateCounts, transitions: g.transitions.map((t) => t.counts) }]))).toEqual(expected);
      for (const g of got.segments) g.transitions.forEach((t, k) => expect(t.fresh).toBe(g.stateCounts[k + 1][0]));
      // the segments partition the users: their tables add up to the unsplit ones
      waist.stateCounts.forEach((row, t) => row.forEach((v, s) => expect(got.segments.reduce((a, g) => a + g.stateCounts[t][s], 0)).toBe(v)));
      waist.transitions.forEach((tr, k) => {
        expect(got.segments.reduce((a, g) => a + g.transitions[k].fresh, 0)).toBe(tr.fresh);
        tr.counts.forEach((row, i) => row.forEach((v, j) => expect(got.segments.reduce((a, g) => a + g.transitions[k].counts[i][j], 0)).toBe(v)));
      });
    });

    it('durations: periods from first active to first dormant, censored at the end, by cohort', () => {
      const expected = new Map<string, number>();
      for (const u of users.values()) {
        const first = firstPeriod(u);
        const d = periods.findIndex((p, i) => i > first && u.states.get(p) === 'dormant');
        const key = d >= 0 ? `${periods[first]}|${d - first}|1` : `${periods[first]}|${periods.length - 1 - first}|0`;
        expected.set(key, (expected.get(key) ?? 0) + 1);
      }
      const got = new Map(waist.durations.map((r) => [`${r.group}|${r.duration}|${r.observed}`, r.users]));
      expect([...expected.keys()].some((k) => k.endsWith('|1'))).toBe(true);
      expect([...expected.keys()].some((k) => k.endsWith('|0'))).toBe(true);
      expect(got).toEqual(expected);
    });

    it('curve survivors: members who have not begun the quiet run that first made them dormant', () => {
      expect(waist.cohorts.length).toBeGreaterThan(5);
      for (const { cohort, survivors } of cohortSurvivors(waist, LAPSE)) {
        const members = [...users.values()].filter((u) => periods[firstPeriod(u)] === cohort);
        const k = periods.indexOf(cohort);
        // observable ages: 0 … (last age − lapseLimit)
        expect(survivors.length).toBe(Math.max(0, periods.length - 1 - k - LAPSE + 1));
        survivors.forEach((n, age) => {
          const lost = members.filter((u) => {
            const d = periods.findIndex((p, i) => i > k && u.states.get(p) === 'dormant');
            return d >= 0 && d - LAPSE - k <= age;
          }).length;
          expect(n, `${cohort} age ${age}`).toBe(members.length - lost);
        });
      }
    });
  });
});
