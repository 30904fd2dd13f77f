/**
 * The DuckDB engine's one read of the per-active-period step (`tm_lifepass`, compile.ts
 * CompileInput.lifePass: GROUPING SETS over tm_life, each later step reading the counts of its set)
 * against the path it replaces, where tm_life is stored as a table and every step counts its rows
 * (`lifePass: false`): the whole waist, manifest and row accounting included, on seeded random logs
 * with every rules variant — grains, zones with daylight-saving changes (IANA tz database:
 * America/Chicago 2026-03-08 and 2026-11-01, Europe/Berlin 2026-03-29 and 2026-10-25,
 * Pacific/Auckland 2026-04-05 and 2026-09-27, Australia/Lord_Howe's half-hour change), week starts,
 * key events, minEvents, lapse limits, warm-up, tenure bands, split states, --from/--to. The logs
 * span up to 200 days, so at the day grain some cohorts are older than the window counts' oldest
 * age and some are not. Common practice: a rewrite of a query is checked against the query it
 * rewrites, on data that reaches every branch. The memory engine is compared with both paths in
 * conformance.test.ts.
 */
import fc from 'fast-check';
import { stringify } from 'yaml';
import { afterAll, describe, expect, it } from 'vitest';
import { runDuckdb } from '../../src/engines/duckdb/run.js';
import type { RangeOptions } from '../../src/engines/types.js';
import { parseRules } from '../../src/rules/load.js';
import { compile } from '../../src/sql/compile.js';
import { DIALECT } from '../../src/sql/dialects.js';
import { tempDir } from '../core/helpers.js';
import { comparable, EVENTS, ruleVariantArbs } from './sqlEngines.js';

const t = tempDir();
afterAll(() => t.done());

const SPLIT_NAMES: Record<string, [string, string]> = { engaged: ['steady', 'keen'], returned: ['back_light', 'back_busy'] };
const START = Date.UTC(2026, 0, 20);
const DAY = 86_400_000;

const caseArb = fc.record({
  ...ruleVariantArbs(),
  days: fc.constantFrom(40, 90, 200),
  rows: fc.array(fc.record({ user: fc.integer({ min: 0, max: 11 }), at: fc.integer({ min: 0, max: 1000 }), event: fc.constantFrom(...EVENTS), repeat: fc.constantFrom(1, 1, 2, 3) }), { minLength: 20, maxLength: 150 }),
  // --from and --to as percentages of the log's span
  from: fc.option(fc.integer({ min: 0, max: 50 }), { nil: undefined }),
  to: fc.option(fc.integer({ min: 50, max: 120 }), { nil: undefined }),
});

let n = 0;

describe('duckdb engine: tm_life read once (tm_lifepass) gives the waist of tm_life stored', () => {
  it('on seeded random logs with every rules variant', async () => {
    let compared = 0;
    await fc.assert(
      fc.asyncProperty(caseArb, async (c) => {
        const doc: Record<string, unknown> = { grain: c.grain, weekStart: c.weekStart, timezone: c.timezone, lapseLimit: c.lapseLimit, warmup: c.warmup,
          tenureBands: [0, ...[...c.bands].sort((a, b) => a - b)], activity: { minEvents: c.minEvents, ...(c.keyEvents ? { keyEvents: c.keyEvents } : {}) } };
        if (c.splits) doc.splits = c.splits.map((state) => ({ state, atLeast: c.minEvents + c.splitAt, names: SPLIT_NAMES[state] }));
        const rules = parseRules(stringify(doc));
        // one member active mid-log with enough key events, so that most logs have a period to analyse
        const anchor = c.keyEvents ? c.keyEvents[0] : 'booking';
        const lines = ['user_id,timestamp,event,plan', ...Array.from({ length: c.minEvents }, () => `m0,${new Date(START + (c.days / 2) * DAY).toISOString()},${anchor},pro`)];
        for (const r of c.rows) {
          const ms = START + Math.floor((r.at / 1000) * c.days * DAY);
          for (let k = 0; k < r.repeat; k++) lines.push(`m${r.user},${new Date(ms + k * 60_000).toISOString()},${r.event},pro`);
        }
        const file = t.file(`life${n++}.csv`, `${lines.join('\n')}\n`);
        const day = (pc: number | undefined) => (pc === undefined ? undefined : new Date(START + Math.floor((pc / 100) * c.days) * DAY).toISOString().slice(0, 10));
        const range: RangeOptions = { from: day(c.from), to: day(c.to) };
        if (range.from && range.to && range.from > range.to) range.to = undefined;
        const run = (lifePass: boolean) => runDuckdb({ files: [file] }, rules, range, { lifePass }).then(comparable, (e: unknown) => ({ error: String(e) }));
        const [stored, once] = [await run(false), await run(true)];
        expect(once, `${file} ${JSON.stringify(range)} ${JSON.stringify(doc)}`).toEqual(stored);
        if (!('error' in (stored as object))) compared++;
      }),
      { seed: 20261202, numRuns: 60 },
    );
    expect(compared).toBeGreaterThan(40);
  }, 600_000); // dozens of database runs: a bound on a hang on a busy machine, not a timing

  it('is compiled without --by only, and only when asked for', () => {
    const rules = parseRules('grain: week\nlapseLimit: 2\n');
    const source = (by: boolean) => ({ select: 'SELECT 1', has: { tsText: true, tsNum: false, tsInstant: false, tsLocal: false, preReason: false, event: true, by }, attributes: ['plan'] });
    const names = (c: ReturnType<typeof compile>) => c.ctes.map((x) => x.name);
    const plain = compile({ dialect: DIALECT.duckdb, rules, source: source(false), lifePass: true });
    expect(plain.lifePass).toBe(true);
    expect(names(plain)).toContain('tm_lifepass');
    const by = compile({ dialect: DIALECT.duckdb, rules, source: source(true), lifePass: true });
    expect(by.lifePass).toBe(false);
    expect(names(by)).not.toContain('tm_lifepass');
    const off = compile({ dialect: DIALECT.postgres, rules, source: source(false) });
    expect(off.lifePass).toBe(false);
    expect(names(off)).not.toContain('tm_lifepass');
  });
});
