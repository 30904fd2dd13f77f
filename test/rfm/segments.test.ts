/**
 * RFM scoring and flows. Quintile coding (the top fifth scores 5, the bottom fifth 1) is the common
 * practice of RFM (Hughes, Strategic Database Marketing, 1994 — from memory); with ties, the mid-rank
 * percentile. Seeded random logs are checked against plain loops over the raw events, and the fitted
 * chain against the validator of `project --matrix`.
 */
import { describe, expect, it } from 'vitest';
import { quintileScores, rfmSegments, segmentOf, SEGMENTS } from '../../src/rfm/segments.js';
import { observedRange, userTimelines } from '../../src/lifecycle/timelines.js';
import { validateModel } from '../../src/markov/validate.js';
import { randomEvents, readRaw, weekOf, weeklyRules, type RawEvent } from '../lifecycle/randomEvents.js';

describe('quintileScores', () => {
  it('ten distinct values: two per quintile, 1 to 5 (quintile coding)', () => {
    expect(Array.from(quintileScores([5, 1, 9, 3, 7, 2, 10, 4, 8, 6]))).toEqual([3, 1, 5, 2, 4, 1, 5, 2, 4, 3]);
  });
  it('ties share a score by the mid-rank percentile (below + equal / 2) / n', () => {
    // 0: (0 + 3/2)/4 = 0.375 → 2; 7: (3 + 1/2)/4 = 0.875 → 5
    expect(Array.from(quintileScores([0, 0, 0, 7]))).toEqual([2, 2, 2, 5]);
    expect(Array.from(quintileScores([4]))).toEqual([3]);
    expect(Array.from(quintileScores([]))).toEqual([]);
  });
  it('matches a score computed from the definition on random values', () => {
    const v = Array.from({ length: 97 }, (_, i) => (i * 7919) % 13);
    const s = quintileScores(v);
    v.forEach((x, i) => {
      const below = v.filter((y) => y < x).length, equal = v.filter((y) => y === x).length;
      expect(s[i]).toBe(Math.min(5, 1 + Math.floor((5 * (below + equal / 2)) / v.length)));
    });
  });
});

describe('rfmSegments against plain loops (seeded random logs)', () => {
  it.each([51, 52])('seed %i, window 4, with a value column', async (seed) => {
    const raw = randomEvents(seed, 120, 12);
    const keys = ['booking_made', 'checked_in', 'class_enrolled'];
    const log = await readRaw(raw, weeklyRules({ activity: { keyEvents: keys } }));
    const window = 4;
    const r = rfmSegments(log, userTimelines(log, 1), observedRange(log, undefined, true), { window, valueColumn: 'amount' });
    const weeks = Math.max(...raw.map((e) => weekOf(e.ms))) + 1;
    const byUser = new Map<string, RawEvent[]>();
    for (const e of raw) byUser.set(e.user, [...(byUser.get(e.user) ?? []), e]);
    const score = (v: number[]) => v.map((x) => Math.min(5, 1 + Math.floor((5 * (v.filter((y) => y < x).length + v.filter((y) => y === x).length / 2)) / v.length)));
    const prev = new Map<string, string>();
    const firstWeek = Math.min(...raw.filter((e) => keys.includes(e.event)).map((e) => weekOf(e.ms)));
    for (let t = firstWeek; t < weeks; t++) {
      const scored: { user: string; rec: number; freq: number; val: number }[] = [];
      const outside: string[] = [];
      for (const [user, evs] of byUser) {
        const active = [...new Set(evs.filter((e) => keys.includes(e.event)).map((e) => weekOf(e.ms)))];
        if (!active.length || Math.min(...active) > t) continue;
        const inWindow = active.filter((w) => w <= t && w > t - window);
        if (!inWindow.length) {
          outside.push(user);
          continue;
        }
        const win = evs.filter((e) => weekOf(e.ms) <= t && weekOf(e.ms) > t - window);
        scored.push({ user, rec: t - Math.max(...inWindow), freq: win.filter((e) => keys.includes(e.event)).length, val: win.reduce((a, e) => a + Number(e.amount), 0) });
      }
      const rs = score(scored.map((s) => -s.rec)), fs = score(scored.map((s) => s.freq)), vs = score(scored.map((s) => s.val));
      const seg = new Map<string, string>(outside.map((u) => [u, 'outside-window']));
      scored.forEach((s, i) => seg.set(s.user, segmentOf(rs[i], Math.ceil((fs[i] + vs[i]) / 2))));
      const counts = Object.fromEntries(SEGMENTS.map((x) => [x, 0]));
      for (const v of seg.values()) counts[v]++;
      const p = r.periods[t - firstWeek];
      expect(p.scored).toBe(scored.length);
      expect(p.counts).toEqual(counts);
      if (t > firstWeek) {
        const tr = r.transitions[t - firstWeek - 1];
        const m = SEGMENTS.map(() => SEGMENTS.map(() => 0));
        let arrivals = 0;
        for (const [u, s] of seg) {
          if (prev.has(u)) m[SEGMENTS.indexOf(prev.get(u) as never)][SEGMENTS.indexOf(s as never)]++;
          else arrivals++;
        }
        expect(tr.counts).toEqual(m);
        expect(Object.values(tr.arrivals).reduce((a, b) => a + b, 0)).toBe(arrivals);
      }
      prev.clear();
      for (const [u, s] of seg) prev.set(u, s);
    }
    // the chain is one that project --matrix accepts
    const model = validateModel(JSON.parse(JSON.stringify(r.model)));
    expect(model.states).toEqual([...SEGMENTS]);
    model.matrix.forEach((row) => expect(row.reduce((a, b) => a + b, 0)).toBeCloseTo(1, 12));
  });

  it('refuses a value column that holds text, naming the line', async () => {
    const raw = randomEvents(53, 10, 4);
    raw[3] = { ...raw[3], amount: 'twelve' };
    const log = await readRaw(raw, weeklyRules());
    expect(() => rfmSegments(log, userTimelines(log, 1), observedRange(log, undefined, true), { window: 2, valueColumn: 'amount' })).toThrow(/'twelve' is not a number/);
    try {
      rfmSegments(log, userTimelines(log, 1), observedRange(log, undefined, true), { window: 2, valueColumn: 'amount' });
    } catch (e) {
      expect((e as { where: { line: number } }).where.line).toBe(5);
    }
  });
});
