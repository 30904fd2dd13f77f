/**
 * `tidemark cohorts` against an independent computation from `tidemark classify`'s per-user states
 * (a plain loop over users, written here), on a seeded random makerspace log.
 */
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { main } from '../../src/cli/main.js';
import { bufferIo } from '../../src/cli/io.js';
import { mulberry32 } from '../../src/numerics/random.js';

const dir = mkdtempSync(join(tmpdir(), 'tidemark-cohorts-'));
const ACTIVE = new Set(['fresh', 'engaged', 'returned']);
let cohorts: any;
let perUser: Map<string, { cohort: string; ages: Set<number>; last: number }>;

async function run(args: string[]) {
  const io = bufferIo();
  const code = await main(args, io);
  expect(code).toBe(0);
  return io.out;
}

beforeAll(async () => {
  const rng = mulberry32(99);
  const rows = ['user_id,timestamp,event'];
  for (let m = 0; m < 300; m++) {
    const start = Math.floor(rng() * 10);
    for (let w = start; w < 14; w++) if (w === start || rng() < 0.45) rows.push(`m${m},${new Date(Date.UTC(2026, 0, 5) + w * 7 * 86_400_000 + Math.floor(rng() * 6e8)).toISOString()},booking_made`);
  }
  const f = join(dir, 'events.csv');
  writeFileSync(f, rows.join('\n'));
  cohorts = JSON.parse(await run(['cohorts', '--events', f, '--ages', '1,3', '--window', '2..4', '--format', 'json', '--quiet']));
  const classified = (await run(['classify', '--events', f, '--format', 'json', '--quiet'])) as string;
  perUser = new Map();
  const periods = [...new Set((JSON.parse(classified) as { period: string }[]).map((r) => r.period))].sort();
  for (const r of JSON.parse(classified) as { user_id: string; period: string; state: string }[]) {
    const age = periods.indexOf(r.period);
    let u = perUser.get(r.user_id);
    if (!u) perUser.set(r.user_id, (u = { cohort: r.period, ages: new Set(), last: periods.length - 1 }));
    if (ACTIVE.has(r.state)) u.ages.add(age - periods.indexOf(u.cohort));
  }
  for (const u of perUser.values()) u.last = periods.length - 1 - periods.indexOf(u.cohort);
});

/** Pooled retention by a per-user predicate over users whose cohort observed ages up to `need`. */
function pooled(need: number, hit: (u: { ages: Set<number>; last: number }) => boolean) {
  let n = 0, k = 0;
  for (const u of perUser.values()) {
    if (u.last < need) continue;
    n++;
    if (hit(u)) k++;
  }
  return { n, k };
}

describe('tidemark cohorts', () => {
  it('the triangle sizes and active counts match a per-user count', () => {
    for (const row of cohorts.triangle) {
      const members = [...perUser.values()].filter((u) => u.cohort === row.cohort);
      expect(row.size).toBe(members.length);
      for (const cell of row.cells) expect(cell.active).toBe(members.filter((u) => u.ages.has(cell.age)).length);
    }
  });

  it('classic, on-or-after and window retention match the per-user definitions', () => {
    const [c1, c3] = cohorts.classic;
    expect(c1.pooled).toMatchObject({ n: pooled(1, () => true).n, retained: pooled(1, (u) => u.ages.has(1)).k });
    expect(c3.pooled.retained).toBe(pooled(3, (u) => u.ages.has(3)).k);
    const [o1, o3] = cohorts.onOrAfter;
    expect(o1.pooled.retained).toBe(pooled(1, (u) => [...u.ages].some((a) => a >= 1)).k);
    expect(o3.pooled.retained).toBe(pooled(3, (u) => [...u.ages].some((a) => a >= 3)).k);
    expect(cohorts.window.pooled.retained).toBe(pooled(4, (u) => [2, 3, 4].some((a) => u.ages.has(a))).k);
    expect(cohorts.window.pooled.n).toBe(pooled(4, () => true).n);
  });

  it('every shape reading states the rule that decided it', () => {
    for (const s of cohorts.shapes) expect(s.rule.length).toBeGreaterThan(10);
  });
});
