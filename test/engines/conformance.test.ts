/**
 * Same counts everywhere: the DuckDB and PostgreSQL engines' waists equal the memory engine's
 * (waistFromResult), table for table and count for count, manifest included (but the engine's name),
 * on seeded random logs of the makerspace app and on every rules file in rules/. The logs cover the
 * grains, zones with daylight-saving changes (IANA tz database: America/Chicago 2026-03-08 and
 * 2026-11-01, Europe/Berlin 2026-03-29 and 2026-10-25, Pacific/Auckland 2026-04-05 and 2026-09-27,
 * Australia/Lord_Howe's half-hour change), week starts, key events, minEvents, lapse limits, warm-up,
 * tenure bands, split states, --by (with ties at one instant, so the tie-break is exercised), --from/--to, and bad
 * rows counted with skipBadRows. The memory engine is the reference semantics (README).
 */
import { readdirSync } from 'node:fs';
import { join } from 'node:path';
import fc from 'fast-check';
import { DateTime, FixedOffsetZone } from 'luxon';
import { stringify } from 'yaml';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { TidemarkError } from '../../src/errors.js';
import type { RangeOptions } from '../../src/engines/types.js';
import { loadRulesFile, parseRules } from '../../src/rules/load.js';
import type { Rules } from '../../src/rules/schema.js';
import { simulateMakerspace } from '../../src/demo/makerspace.js';
import { tempDir } from '../core/helpers.js';
import { comparable, duckdbRun, EVENTS, memoryWaist, pgReachable, postgresRun, ruleVariantArbs, withoutLines, type EngineRun } from './sqlEngines.js';

const t = tempDir();
afterAll(() => t.done());

/** Plan values: code-point order differs from code-unit order between '😀' (U+1F600) and '｡' (U+FF61). */
const PLANS = ['hobby', 'pro', 'studio', '', 'Ωmega', '😀 lab', '｡dot'];
const STARTS = ['2026-01-20', '2026-02-25', '2026-03-20', '2026-09-18', '2026-10-10', '2026-12-20'].map((d) => Date.parse(`${d}T00:00:00Z`));
const WINDOW = 70 * 86_400_000;
const OFFSETS = [540, -300, 330, 0, -210, 825];
/** Sub-state names of our own for the split states of the random rules. */
const SPLIT_NAMES: Record<string, [string, string]> = { engaged: ['steady', 'keen'], returned: ['back_light', 'back_busy'] };
type Style = 'z' | 'offset' | 'local' | 'epochS' | 'epochMs' | 'basic' | 'spaced';

function stamp(ms: number, style: Style, zone: string, offset: number, millis: boolean): string {
  const dt = DateTime.fromMillis(ms, { zone: 'UTC' });
  switch (style) {
    case 'z': return dt.toISO({ suppressMilliseconds: !millis })!;
    case 'offset': return dt.setZone(FixedOffsetZone.instance(offset)).toISO({ suppressMilliseconds: !millis })!;
    case 'local': return dt.setZone(zone).toFormat(millis ? "yyyy-MM-dd'T'HH:mm:ss.SSS" : "yyyy-MM-dd HH:mm:ss");
    case 'epochS': return String(Math.floor(ms / 1000));
    case 'epochMs': return String(ms);
    case 'basic': return dt.setZone(FixedOffsetZone.instance(offset)).toFormat("yyyyMMdd'T'HHmmssZZZ");
    case 'spaced': return ` ${dt.toISO()} `;
  }
}

interface Case {
  rules: Rules;
  rows: string[][];
  range: RangeOptions;
  skip: boolean;
}

const caseArb: fc.Arbitrary<Case> = fc
  .record(ruleVariantArbs())
  .chain((r) =>
    fc.record({
      r: fc.constant(r),
      start: fc.constantFrom(...STARTS),
      raw: fc.array(
        fc.record({
          user: fc.constantFrom('m1', 'm2', 'm3', 'm4', 'm5', 'm6', 'm7'),
          at: fc.integer({ min: 0, max: WINDOW }),
          event: fc.constantFrom(...EVENTS),
          style: fc.constantFrom<Style>('z', 'z', 'offset', 'local', 'epochS', 'epochMs', 'basic', 'spaced'),
          offset: fc.constantFrom(...OFFSETS),
          millis: fc.boolean(),
          repeat: fc.constantFrom(1, 1, 2, 3),
          plans: fc.array(fc.constantFrom(...PLANS), { minLength: 3, maxLength: 3 }),
          snap: fc.constantFrom<number | null>(null, null, null, -1, 0, 1),
        }),
        { minLength: 1, maxLength: 60 },
      ),
      bad: fc.array(fc.constantFrom(['  ', 'x'], ['m1', 'soon'], ['m2', '2026-02-30T10:00:00Z'], ['m3', 'EVENT'], ['m4', '1e5']), { maxLength: 3 }),
      by: fc.boolean(),
      from: fc.option(fc.integer({ min: 0, max: 60 }), { nil: undefined }),
      to: fc.option(fc.integer({ min: 10, max: 80 }), { nil: undefined }),
    }),
  )
  .map(({ r, start, raw, bad, by, from, to }) => {
    const doc: Record<string, unknown> = { grain: r.grain, weekStart: r.weekStart, timezone: r.timezone, lapseLimit: r.lapseLimit, warmup: r.warmup,
      tenureBands: [0, ...[...r.bands].sort((a, b) => a - b)], activity: { minEvents: r.minEvents, ...(r.keyEvents ? { keyEvents: r.keyEvents } : {}) } };
    if (r.splits) doc.splits = r.splits.map((state) => ({ state, atLeast: r.minEvents + r.splitAt, names: SPLIT_NAMES[state] }));
    const rules = parseRules(stringify(doc));
    const anchor = r.keyEvents ? r.keyEvents[0] : 'booking';
    const rows: string[][] = Array.from({ length: r.minEvents }, () => ['m0', stamp(start + WINDOW / 2, 'z', r.timezone, 0, false), anchor, 'pro']);
    for (const e of raw) {
      let ms = start + e.at;
      if (e.snap !== null) ms = DateTime.fromMillis(ms, { zone: r.timezone }).startOf('day').toMillis() + e.snap;
      for (let k = 0; k < e.repeat; k++) rows.push([e.user, stamp(ms, e.style, r.timezone, e.offset, e.millis || ms % 1000 !== 0), e.event, e.plans[k]]);
    }
    for (const [user, ts] of bad) rows.push([user, ts === 'EVENT' ? stamp(start, 'z', r.timezone, 0, false) : ts, ts === 'EVENT' ? '' : 'booking', 'pro']);
    const day = (n: number | undefined) => (n === undefined ? undefined : DateTime.fromMillis(start + n * 86_400_000, { zone: 'UTC' }).toISODate()!);
    const range: RangeOptions = { by: by ? 'plan' : undefined, from: day(from), to: day(to) };
    if (range.from && range.to && range.from > range.to) range.to = undefined;
    return { rules, rows, range, skip: bad.length > 0 };
  });

const csvField = (v: string) => (/[",\n\r]/.test(v) ? `"${v.replace(/"/g, '""')}"` : v);
let n = 0;
function write(rows: string[][]): string {
  return t.file(`log${n++}.csv`, ['user_id,timestamp,event,plan', ...rows.map((r) => r.map(csvField).join(','))].join('\n') + '\n');
}

/** Runs both engines; either both refuse with the same error, or their waists are equal. */
async function same(engine: EngineRun, file: string, rules: Rules, range: RangeOptions, skip: boolean, what: string, lines = true): Promise<'equal' | 'refused'> {
  let want: unknown, wantErr: TidemarkError | undefined;
  try {
    want = comparable(await memoryWaist(file, rules, range, skip));
  } catch (e) {
    if (!(e instanceof TidemarkError)) throw e;
    wantErr = e;
  }
  if (wantErr) {
    const got = await engine(file, rules, range, skip).then(() => undefined, (e: unknown) => e);
    expect(got, what).toBeInstanceOf(TidemarkError);
    expect((got as TidemarkError).code, what).toBe(wantErr.code);
    if (wantErr.code !== 'EVENTS_BAD_ROW') expect((got as TidemarkError).message, what).toBe(wantErr.message);
    return 'refused';
  }
  // a table loaded from the file has no lines (no header): its rows and every count still equal
  const got = comparable(await engine(file, rules, range, skip));
  if (lines) expect(got, what).toEqual(want);
  else expect(withoutLines(got), what).toEqual(withoutLines(want));
  return 'equal';
}

/** `lines`: whether the engine reads the very file (and so counts its lines); postgres reads a table loaded from it. */
const engines: { name: string; run: EngineRun; available: () => Promise<boolean>; lines: boolean }[] = [
  { name: 'duckdb', run: duckdbRun, available: async () => true, lines: true },
  { name: 'postgres', run: postgresRun, available: pgReachable, lines: false },
];

for (const engine of engines) {
  describe(`${engine.name} engine: the memory engine's waist, to the count`, () => {
    let up = false;
    beforeAll(async () => {
      up = await engine.available();
      if (!up) {
        if (process.env.CI === 'true') throw new Error(`no ${engine.name} server reachable (PGHOST…): .ci/run starts one`);
        console.warn(`notice: no ${engine.name} server reachable (set PGHOST, PGPORT, PGUSER or TIDEMARK_PG_URL); its conformance tests are skipped`);
      }
    });

    it('on seeded random logs (grains, zones with DST, week starts, key events, minEvents, lapse limits, warm-up, tenure bands, split states, --by, --from/--to, bad rows)', async (ctx) => {
      if (!up) return ctx.skip();
      const seen = { equal: 0, refused: 0 };
      await fc.assert(
        fc.asyncProperty(caseArb, async (c) => {
          const file = write(c.rows);
          seen[await same(engine.run, file, c.rules, c.range, c.skip, `${file} ${JSON.stringify(c.range)}`, engine.lines)]++;
        }),
        { seed: 20261208, numRuns: engine.name === 'duckdb' ? 60 : 40 },
      );
      expect(seen.equal).toBeGreaterThan(seen.refused);
    }, 600_000); // dozens of database runs: a bound on a hang on a busy machine, not a timing

    it('on a simulated makerspace log, for every rules file in rules/, with and without --by', async (ctx) => {
      if (!up) return ctx.skip();
      const rows: string[][] = [];
      let i = 0;
      simulateMakerspace(7, (e) => {
        if (i++ % 20 === 0) rows.push([e.user_id, e.timestamp, e.event, e.plan]);
      });
      const file = write(rows);
      const dir = join(import.meta.dirname, '../../rules');
      const files = readdirSync(dir).filter((f) => f.endsWith('.yaml'));
      expect(files.length).toBeGreaterThanOrEqual(3);
      for (const f of files) {
        const rules = loadRulesFile(join(dir, f));
        for (const by of [undefined, 'plan']) expect(await same(engine.run, file, rules, { by }, false, `${f} by ${by}`, engine.lines)).toBe('equal');
      }
      // the shipped weekly rules with both splittable states split (sub-state names of our own)
      const weekly = loadRulesFile(join(dir, 'weekly.yaml'));
      const split = { ...weekly, splits: [{ state: 'engaged', atLeast: 3, names: SPLIT_NAMES.engaged }, { state: 'returned', atLeast: 2, names: SPLIT_NAMES.returned }] };
      for (const by of [undefined, 'plan']) expect(await same(engine.run, file, split, { by }, false, `weekly with splits by ${by}`, engine.lines)).toBe('equal');
    }, 600_000);
  });
}
