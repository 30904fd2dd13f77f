/**
 * Property tests (fast-check, seeded): random small booking logs of the makerspace app under varied
 * rules, checked against the luxon reference (reference.ts) and against the invariants of the flows
 * tables stated in the specification.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { DateTime, FixedOffsetZone } from 'luxon';
import { summariseFlows } from '../../src/flows/summary.js';
import { filesSource } from '../../src/engines/types.js';
import { classifyWith, ENGINES } from './engines.js';
import type { RangeOptions } from '../../src/engines/types.js';
import { refClassify, refFlowsOf, refLabel, refRows, STATES, type RefEvent, type RefRules } from './reference.js';
import { eventsCsv, eventsNdjson, rulesOf, tempDir } from './helpers.js';

const ZONES = ['UTC', 'America/Chicago', 'Asia/Kolkata', 'Pacific/Auckland', 'Asia/Tokyo'];
const WEEKDAYS = ['monday', 'tuesday', 'wednesday', 'thursday', 'friday', 'saturday', 'sunday'];
const EVENTS = ['booking', 'tool_reservation', 'login', 'cancel'];
/** Window starts chosen so the ~10-week windows cross the America/Chicago and Pacific/Auckland DST
 * changes (IANA tz database: 2026-03-08, 2026-11-01; 2026-04-05, 2026-09-27), month ends and the
 * 2026-W53 year end (ISO 8601). */
const WINDOW_STARTS = ['2026-01-20', '2026-02-25', '2026-03-28', '2026-08-30', '2026-10-10', '2026-11-25'].map((d) =>
  DateTime.fromISO(`${d}T00:00:00Z`).toMillis(),
);
const WINDOW_MS = 70 * 86_400_000;
const OFFSETS = [540, -300, 330, 0, -210, 825]; // minutes: +09:00, −05:00, +05:30, +00:00, −03:30, +13:45

type Style = 'z' | 'offset' | 'local' | 'epochS' | 'epochMs';

/** Writes an instant in a timestamp style; `local` is wall-clock time in the rules zone, no offset. */
function writeTimestamp(ms: number, style: Style, zone: string, offset: number, millis: boolean): string {
  const dt = DateTime.fromMillis(ms, { zone: 'UTC' });
  switch (style) {
    case 'z':
      return dt.toISO({ suppressMilliseconds: !millis })!;
    case 'offset':
      return dt.setZone(FixedOffsetZone.instance(offset)).toISO({ suppressMilliseconds: !millis })!;
    case 'local':
      return dt.setZone(zone).toFormat(millis ? "yyyy-MM-dd'T'HH:mm:ss.SSS" : "yyyy-MM-dd'T'HH:mm:ss");
    case 'epochS':
      return String(Math.floor(ms / 1000));
    case 'epochMs':
      return String(ms);
  }
}

interface Case {
  rules: RefRules;
  events: RefEvent[];
  format: 'csv' | 'ndjson';
}

const rulesArb: fc.Arbitrary<RefRules> = fc.record({
  grain: fc.constantFrom('day' as const, 'week' as const, 'month' as const),
  weekStart: fc.constantFrom(...WEEKDAYS),
  timezone: fc.constantFrom(...ZONES),
  keyEvents: fc.option(fc.subarray(EVENTS, { minLength: 1 }), { nil: undefined }),
  minEvents: fc.integer({ min: 1, max: 3 }),
  lapseLimit: fc.integer({ min: 0, max: 3 }),
});

const caseArb: fc.Arbitrary<Case> = rulesArb.chain((rules) =>
  fc
    .record({
      start: fc.constantFrom(...WINDOW_STARTS),
      shift: fc.integer({ min: 0, max: 6 * 86_400_000 }),
      raw: fc.array(
        fc.record({
          user: fc.constantFrom('m1', 'm2', 'm3', 'm4', 'm5', 'm6'),
          at: fc.integer({ min: 0, max: WINDOW_MS }),
          event: fc.constantFrom(...EVENTS),
          style: fc.constantFrom<Style>('z', 'offset', 'local', 'epochS', 'epochMs'),
          offset: fc.constantFrom(...OFFSETS),
          millis: fc.boolean(),
          // a few events arrive in bursts at one instant, so minEvents > 1 is reached
          repeat: fc.constantFrom(1, 1, 1, 2, 3),
          // some events sit on a local midnight of the rules zone, or 1 ms / 1 s either side of it
          // (every period edge is a local midnight)
          snap: fc.constantFrom<number | null>(null, null, null, -1000, -1, 0, 1, 999),
        }),
        { minLength: 0, maxLength: 40 },
      ),
      anchorAt: fc.integer({ min: 0, max: WINDOW_MS }),
      format: fc.constantFrom('csv' as const, 'ndjson' as const),
    })
    .map(({ start, shift, raw, anchorAt, format }) => {
      const zone = rules.timezone!;
      const base = start + shift;
      // one member (m0) always active somewhere, so every log has at least one classified member
      const anchorEvent = rules.keyEvents ? rules.keyEvents[0] : 'booking';
      const events: RefEvent[] = Array.from({ length: rules.minEvents ?? 1 }, () => ({
        user: 'm0',
        timestamp: writeTimestamp(base + anchorAt, 'z', zone, 0, false),
        event: anchorEvent,
      }));
      for (const r of raw) {
        let ms = base + r.at;
        if (r.snap !== null) ms = DateTime.fromMillis(ms, { zone }).startOf('day').toMillis() + r.snap;
        // epoch seconds and whole-second styles cannot carry the 1 ms steps; keep those on whole seconds
        const millis = r.millis || ms % 1000 !== 0;
        for (let k = 0; k < r.repeat; k += 1)
          events.push({ user: r.user, timestamp: writeTimestamp(ms, r.style, zone, r.offset, millis), event: r.event });
      }
      return { rules, events, format };
    }),
);

const PARAMS = { seed: 20260308, numRuns: 120 };
/** The engine under test (conformance: each describe runs once per engine of ENGINES). */
let current = ENGINES[0];
/** Each property runs up to a few hundred engine calls, each with a temp file. */
const PROP_TIMEOUT = 120_000;

async function engineRun(c: Case, range: RangeOptions = {}, events: readonly RefEvent[] = c.events, engine = current) {
  const t = tempDir();
  try {
    const f = c.format === 'csv' ? t.file('bookings.csv', eventsCsv(events)) : t.file('bookings.ndjson', eventsNdjson(events));
    return await classifyWith(engine, filesSource([f]), rulesOf(c.rules), range);
  } finally {
    t.done();
  }
}

/** Describes a case in a failure message. */
const show = (c: Case) => `${JSON.stringify(c.rules)} ${c.format}\n${c.events.map((e) => `${e.user},${e.timestamp},${e.event}`).join('\n')}`;

/** Deterministic shuffle (Fisher–Yates driven by a seed from fast-check). */
function shuffled<T>(xs: readonly T[], seed: number): T[] {
  const out = [...xs];
  let s = seed >>> 0 || 1;
  for (let i = out.length - 1; i > 0; i -= 1) {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0; // LCG constants of Numerical Recipes (common practice)
    const j = s % (i + 1);
    [out[i], out[j]] = [out[j], out[i]];
  }
  return out;
}

describe.each(ENGINES)('%s engine: engine against the reference', (engine) => {
  beforeAll(() => {
    current = engine;
  });
  it('(a) classification, periods, state counts and transitions equal the reference exactly', async () => {
    await fc.assert(
      fc.asyncProperty(caseArb, async (c) => {
        const ref = refClassify(c.events, c.rules);
        const { rows, result } = await engineRun(c);
        const w = result.waist;
        expect(w.states, show(c)).toEqual([...STATES]);
        expect(w.periods, show(c)).toEqual(ref.periods);
        expect(rows, show(c)).toEqual(refRows(ref));
        expect(w.stateCounts, show(c)).toEqual(ref.stateCounts);
        expect(w.transitions, show(c)).toEqual(ref.transitions);
        expect(result.users, show(c)).toBe(ref.users);
      }),
      PARAMS,
    );
  }, PROP_TIMEOUT);

  it('(a) rates, status-split retention and growth of summariseFlows equal the reference', async () => {
    await fc.assert(
      fc.asyncProperty(caseArb, async (c) => {
        const ref = refClassify(c.events, c.rules);
        const { result } = await engineRun(c);
        const s = summariseFlows(result.waist);
        expect(s.transitions.length).toBe(ref.transitions.length);
        s.transitions.forEach((t, i) => {
          const want = refFlowsOf(ref, ref.transitions[i]);
          expect(t.rates, show(c)).toEqual(want.rates);
          expect(t.retention, show(c)).toEqual(want.retention);
          const { residual, ...growth } = t.growth;
          expect(residual, show(c)).toBe(0);
          if (want.growth.quickRatio === null) {
            expect(growth.quickRatio === null || growth.quickRatio === Infinity, show(c)).toBe(true);
            expect({ ...growth, quickRatio: null }, show(c)).toEqual(want.growth);
          } else {
            expect(growth, show(c)).toEqual(want.growth);
          }
        });
      }),
      PARAMS,
    );
  }, PROP_TIMEOUT);
});

describe.each(ENGINES)('%s engine: invariants of the flows tables', (engine) => {
  beforeAll(() => {
    current = engine;
  });
  it('(b) shuffling the rows of the file changes nothing', async () => {
    await fc.assert(
      fc.asyncProperty(caseArb, fc.integer(), async (c, seed) => {
        const a = await engineRun(c);
        const b = await engineRun(c, {}, shuffled(c.events, seed));
        expect(b.rows, show(c)).toEqual(a.rows);
        expect(b.result.waist.periods).toEqual(a.result.waist.periods);
        expect(b.result.waist.stateCounts).toEqual(a.result.waist.stateCounts);
        expect(b.result.waist.transitions).toEqual(a.result.waist.transitions);
      }),
      { seed: 42, numRuns: 60 },
    );
  }, PROP_TIMEOUT);

  it('(c) every member present at t−1 is counted exactly once in the pair (t−1, t)', async () => {
    await fc.assert(
      fc.asyncProperty(caseArb, async (c) => {
        const { rows, result } = await engineRun(c);
        const w = result.waist;
        for (const t of w.transitions) {
          const before = new Set(rows.filter((r) => r.period === t.from).map((r) => r.user));
          const after = rows.filter((r) => r.period === t.to);
          const total = t.counts.flat().reduce((a, b) => a + b, 0);
          expect(total, `${t.from}→${t.to}\n${show(c)}`).toBe(before.size);
          // the members present at t but not at t−1 are exactly the fresh ones
          expect(after.length - before.size, `${t.from}→${t.to}`).toBe(t.fresh);
          expect(after.filter((r) => !before.has(r.user)).every((r) => r.state === 'fresh')).toBe(true);
          // column sums are the state counts at t, less the fresh entrants
          const p = w.periods.indexOf(t.to);
          const cols = w.states.map((_, j) => t.counts.reduce((a, row) => a + row[j], 0));
          const expected = w.stateCounts[p].map((n, j) => (w.states[j] === 'fresh' ? n - t.fresh : n));
          expect(cols).toEqual(expected);
        }
      }),
      PARAMS,
    );
  }, PROP_TIMEOUT);

  it('(c) only transitions the definitions allow appear', async () => {
    // fresh/engaged/returned → engaged or lapsing/dormant; lapsing → lapsing, dormant, returned;
    // dormant → dormant, returned; nothing but a first active period is fresh; lapsing → dormant
    // only, never the reverse without a return
    const allowed: Record<string, string[]> = {
      fresh: ['engaged', 'lapsing', 'dormant'],
      engaged: ['engaged', 'lapsing', 'dormant'],
      returned: ['engaged', 'lapsing', 'dormant'],
      lapsing: ['lapsing', 'dormant', 'returned'],
      dormant: ['dormant', 'returned'],
    };
    await fc.assert(
      fc.asyncProperty(caseArb, async (c) => {
        const { result } = await engineRun(c);
        const st = result.waist.states;
        for (const t of result.waist.transitions)
          t.counts.forEach((row, i) =>
            row.forEach((n, j) => {
              if (n > 0) expect(allowed[st[i]], `${st[i]}→${st[j]} at ${t.to}\n${show(c)}`).toContain(st[j]);
            }),
          );
      }),
      PARAMS,
    );
  }, PROP_TIMEOUT);

  it('(d) every rate row sums to 1, and is null exactly when its row count is 0', async () => {
    await fc.assert(
      fc.asyncProperty(caseArb, async (c) => {
        const { result } = await engineRun(c);
        for (const t of summariseFlows(result.waist).transitions)
          t.rates.forEach((row, i) => {
            const n = t.counts[i].reduce((a, b) => a + b, 0);
            if (n === 0) expect(row).toBeNull();
            else {
              expect(row).not.toBeNull();
              expect(Math.abs(row!.reduce((a, b) => a + b, 0) - 1)).toBeLessThan(1e-12);
              row!.forEach((r) => expect(r).toBeGreaterThanOrEqual(0));
            }
          });
      }),
      PARAMS,
    );
  }, PROP_TIMEOUT);

  it('(e) growth accounting: active(t) = active(t−1) − newlyInactive + fresh + returned', async () => {
    await fc.assert(
      fc.asyncProperty(caseArb, async (c) => {
        const { rows, result } = await engineRun(c);
        const activeIn = (p: string) => rows.filter((r) => r.period === p && ['fresh', 'engaged', 'returned'].includes(r.state)).length;
        for (const t of summariseFlows(result.waist).transitions) {
          const g = t.growth;
          expect(g.residual).toBe(0);
          expect(g.activeAfter).toBe(g.activeBefore - g.newlyInactive + g.fresh + g.returned);
          expect(g.activeBefore).toBe(activeIn(t.from));
          expect(g.activeAfter).toBe(activeIn(t.to));
          expect(g.fresh).toBe(t.fresh);
          if (g.newlyInactive > 0) expect(g.quickRatio).toBeCloseTo((g.fresh + g.returned) / g.newlyInactive, 12);
        }
      }),
      PARAMS,
    );
  }, PROP_TIMEOUT);
});

describe.each(ENGINES)('%s engine: range options', (engine) => {
  beforeAll(() => {
    current = engine;
  });
  it('(f) warm-up w drops exactly the first w transitions and nothing else', async () => {
    await fc.assert(
      fc.asyncProperty(caseArb, fc.integer({ min: 0, max: 4 }), fc.boolean(), async (c, warmup, viaRules) => {
        // a warm-up as long as the range leaves nothing to analyse (refused; tested in cli.test.ts)
        fc.pre(warmup < refClassify(c.events, c.rules).periods.length);
        const plain = await engineRun(c, { warmup: 0 });
        const warm = viaRules ? await engineRun({ ...c, rules: { ...c.rules, warmup } }) : await engineRun(c, { warmup });
        const w0 = plain.result.waist;
        const w = warm.result.waist;
        expect(w.warmup).toBe(warmup);
        expect(w.periods).toEqual(w0.periods);
        expect(w.stateCounts).toEqual(w0.stateCounts);
        expect(warm.rows).toEqual(plain.rows);
        expect(w.transitions, show(c)).toEqual(w0.transitions.slice(warmup));
        expect(w.transitions).toEqual(refClassify(c.events, c.rules, { warmup }).transitions);
      }),
      { seed: 7, numRuns: 80 },
    );
  }, PROP_TIMEOUT);

  it('(g) --from narrows the output but keeps the states earlier history gives', async () => {
    await fc.assert(
      fc.asyncProperty(caseArb, fc.nat(), fc.nat(), async (c, pick, inside) => {
        const full = refClassify(c.events, c.rules);
        fc.pre(full.periods.length >= 2);
        const k = 1 + (pick % (full.periods.length - 1));
        const label = full.periods[k];
        const span = c.rules.grain === 'day' ? 1 : c.rules.grain === 'week' ? 7 : 28;
        const from = DateTime.fromISO(label).plus({ days: inside % span }).toISODate()!;
        const ref = refClassify(c.events, c.rules, { from });
        expect(ref.periods).toEqual(full.periods.slice(k));
        const { rows, result } = await engineRun(c, { from });
        expect(result.waist.periods, `--from ${from}\n${show(c)}`).toEqual(ref.periods);
        expect(rows, `--from ${from}\n${show(c)}`).toEqual(refRows(ref));
        expect(result.waist.stateCounts).toEqual(ref.stateCounts);
        expect(result.waist.transitions, `--from ${from}\n${show(c)}`).toEqual(ref.transitions);
        // the narrowed rows are the full rows from `label` on: no one is re-made fresh at --from
        expect(rows).toEqual(refRows(full).filter((r) => r.period >= label));
      }),
      { seed: 11, numRuns: 80 },
    );
  }, PROP_TIMEOUT);

  it('(g) --to ignores later events: the same as a log cut at the end of that period', async () => {
    await fc.assert(
      fc.asyncProperty(caseArb, fc.nat(), fc.nat(), async (c, pick, inside) => {
        const full = refClassify(c.events, c.rules);
        // end on a period that holds a used event, so the range end is the same under either reading
        const keys = c.rules.keyEvents;
        const usedLabels = [...new Set(c.events.filter((e) => !keys || keys.includes(e.event)).map((e) => refLabel(e.timestamp, c.rules)))].sort();
        expect(usedLabels[0]).toBe(full.periods[0]);
        const label = usedLabels[pick % usedLabels.length];
        const span = c.rules.grain === 'day' ? 1 : c.rules.grain === 'week' ? 7 : 28;
        const to = DateTime.fromISO(label).plus({ days: inside % span }).toISODate()!;
        const ref = refClassify(c.events, c.rules, { to });
        const { rows, result } = await engineRun(c, { to });
        expect(result.waist.periods, `--to ${to}\n${show(c)}`).toEqual(ref.periods);
        expect(rows, `--to ${to}\n${show(c)}`).toEqual(refRows(ref));
        expect(result.waist.transitions).toEqual(ref.transitions);
        const r = result.rows;
        expect(r.read).toBe(r.used + r.notKeyEvent + r.afterRange + Object.values(r.rejected).reduce((a, b) => a + (b ?? 0), 0));
      }),
      { seed: 13, numRuns: 80 },
    );
  }, PROP_TIMEOUT);
});
