/**
 * The waist as files: written and read back it is the same waist, and leaving out an incomplete last
 * period from a waist gives exactly the tables an engine counts on the data without that period (an
 * independent computation: the engine run again with --to). Random logs are seeded (fast-check).
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import fc from 'fast-check';
import { afterAll, describe, expect, it } from 'vitest';
import { createEngine } from '../../src/engines/index.js';
import { filesSource } from '../../src/engines/types.js';
import { analysisWaist } from '../../src/waist/derive.js';
import { readWaist } from '../../src/waist/read.js';
import { writeWaist } from '../../src/waist/write.js';
import { WAIST_VERSION } from '../../src/waist/manifest.js';
import { rulesOf, tempDir, expectTidemarkError } from '../core/helpers.js';
import type { RefRules } from '../core/reference.js';

const t = tempDir();
afterAll(() => t.done());

const DAY = 86_400_000;
const START = Date.UTC(2026, 0, 5); // a Monday
const PLANS = ['hobby', 'pro', 'studio', ''];

interface Log {
  rules: RefRules & { warmup?: number; tenureBands?: number[] };
  rows: { user: string; at: number; plan: string }[];
  by: boolean;
}

const logArb: fc.Arbitrary<Log> = fc.record({
  rules: fc.record({
    grain: fc.constantFrom('day' as const, 'week' as const),
    lapseLimit: fc.integer({ min: 0, max: 3 }),
    minEvents: fc.integer({ min: 1, max: 2 }),
    warmup: fc.integer({ min: 0, max: 2 }),
  }),
  rows: fc.array(fc.record({ user: fc.constantFrom(...Array.from({ length: 12 }, (_, i) => `member${i}`)), at: fc.integer({ min: 0, max: 90 * DAY }), plan: fc.constantFrom(...PLANS) }), { minLength: 5, maxLength: 120 }),
  by: fc.boolean(),
});

let n = 0;
function write(log: Log): string {
  const text = ['user_id,timestamp,event,plan', ...log.rows.map((r) => `${r.user},${new Date(START + r.at).toISOString()},booking,${r.plan}`)].join('\n');
  return t.file(`log${n++}.csv`, `${text}\n`);
}

async function waistOf(file: string, log: Log, to?: string) {
  const rules = rulesOf(log.rules);
  return (await createEngine('memory').run(filesSource([file]), rules, { by: log.by ? 'plan' : undefined, to })).waist;
}

describe('writeWaist → readWaist', () => {
  it('gives back the same waist, manifest and tables (random logs, seeded)', async () => {
    await fc.assert(
      fc.asyncProperty(logArb, async (log) => {
        const file = write(log);
        let w;
        try {
          w = await waistOf(file, log);
        } catch {
          return; // a warm-up longer than the log: refused, nothing to write
        }
        const dir = join(t.dir, `w${n++}`);
        writeWaist(w, dir);
        const back = readWaist(dir);
        expect(back.manifest).toEqual(w.manifest);
        expect(back.tables).toEqual(JSON.parse(JSON.stringify(w.tables)));
      }),
      { seed: 20261202, numRuns: 60 },
    );
  }, 60_000);
});

describe('analysisWaist: leaving out the last period', () => {
  it('equals the engine run on the data up to the period before (random logs, seeded)', async () => {
    let compared = 0;
    await fc.assert(
      fc.asyncProperty(logArb, async (log) => {
        const file = write(log);
        let full;
        try {
          full = await waistOf(file, log);
        } catch {
          return;
        }
        const P = full.tables.periods.length;
        if (P < 3 || full.manifest.rules.warmup >= P - 1) return;
        const incomplete = { ...full, manifest: { ...full.manifest, lastPeriod: { ...full.manifest.lastPeriod, complete: false } } };
        const derived = analysisWaist(incomplete);
        expect(derived.dropped?.label).toBe(full.tables.periods[P - 1]);
        const shorter = await waistOf(file, log, full.tables.periods[P - 2]);
        // the engine's range ends at the latest event: comparable only when period P − 2 has one
        if (shorter.tables.periods.length !== P - 1) return;
        const expected = analysisWaist(shorter, { includePartial: true }).waist;
        expect(derived.waist.tables).toEqual(expected.tables);
        expect(derived.waist.manifest.users).toBe(expected.manifest.users);
        expect(derived.waist.manifest.rows.used).toBe(expected.manifest.rows.used);
        compared++;
      }),
      { seed: 7, numRuns: 80 },
    );
    expect(compared).toBeGreaterThan(30);
  }, 60_000); // 160 engine runs: a bound on a hang on a busy machine, not a timing
});

describe('readWaist refuses', () => {
  async function sample() {
    const log: Log = { rules: { grain: 'week', lapseLimit: 1 }, by: true, rows: Array.from({ length: 40 }, (_, i) => ({ user: `member${i % 7}`, at: (i * 37 % 60) * DAY, plan: PLANS[i % 3] })) };
    const w = await waistOf(write(log), log);
    const dir = join(t.dir, `s${n++}`);
    writeWaist(w, dir);
    return dir;
  }
  const edit = (dir: string, file: string, f: (s: string) => string) => writeFileSync(join(dir, file), f(readFileSync(join(dir, file), 'utf8')));

  it('a future format version, naming the version and what to do', async () => {
    const dir = await sample();
    edit(dir, 'manifest.json', (s) => s.replace(`"version": ${WAIST_VERSION}`, '"version": 99'));
    const e = await expectTidemarkError(() => readWaist(dir), 'INPUT_INVALID');
    expect(e.oneLine()).toMatch(/version 99.*newer tidemark.*Upgrade/);
  });
  it('an unknown format name', async () => {
    const dir = await sample();
    edit(dir, 'manifest.json', (s) => s.replace('"tidemark-waist"', '"something-else"'));
    expect((await expectTidemarkError(() => readWaist(dir), 'INPUT_INVALID')).oneLine()).toMatch(/not a tidemark waist manifest/);
  });
  it('a count that breaks an identity, naming the table', async () => {
    const dir = await sample();
    edit(dir, 'transitions.csv', (s) => s.replace(/,(\d+)\n$/, (_m, d) => `,${Number(d) + 1}\n`));
    expect((await expectTidemarkError(() => readWaist(dir), 'INPUT_INVALID')).oneLine()).toMatch(/transitions\.csv: .* users (leave|reach)/);
  });
  it('an unknown state, naming file, line and column', async () => {
    const dir = await sample();
    edit(dir, 'state_counts.csv', (s) => s.replace('dormant', 'asleep'));
    expect((await expectTidemarkError(() => readWaist(dir), 'INPUT_INVALID')).oneLine()).toMatch(/state_counts\.csv:\d+, column state: 'asleep' is not one of the manifest's states/);
  });
  it('a missing table and a missing folder', async () => {
    const dir = await sample();
    edit(dir, 'durations.csv', () => 'split,group\n');
    expect((await expectTidemarkError(() => readWaist(dir), 'INPUT_INVALID')).oneLine()).toMatch(/durations\.csv:1: the header has no column cohort/);
    await expectTidemarkError(() => readWaist(join(dir, 'nope')), 'FILE_NOT_FOUND');
  });
});

describe('the manifest JSON Schema', () => {
  it('src/waist/manifest.schema.json is the schema the code exports (run `npm run schema` after changing it)', async () => {
    const { waistManifestJsonSchema } = await import('../../src/waist/manifest.js');
    const onDisk = JSON.parse(readFileSync(new URL('../../src/waist/manifest.schema.json', import.meta.url), 'utf8'));
    expect(onDisk).toEqual(JSON.parse(JSON.stringify(waistManifestJsonSchema())));
  });
});
