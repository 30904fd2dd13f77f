import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { engineFootprint, formatBytes } from '../../src/engines/memory/budget.js';
import { runOnLog } from '../../src/engines/memory/index.js';
import { readEvents } from '../../src/ingest/read.js';
import { parseRules } from '../../src/rules/load.js';
import { tempDir } from '../report/fixtures.js';

/** 25 members with one stray 1926 booking each, 20 with bookings in January 2026 (daily rules). */
async function strayLog() {
  const f = join(tempDir('tidemark-limit-'), 'e.csv');
  const rows = ['user_id,timestamp,event'];
  for (let m = 0; m < 25; m++) rows.push(`m${m},1926-01-01T00:00:00Z,booking_made`);
  for (let m = 25; m < 45; m++) rows.push(`m${m},2026-01-0${1 + (m % 5)}T10:00:00Z,booking_made`);
  writeFileSync(f, rows.join('\n'));
  const rules = parseRules('grain: day\nlapseLimit: 7\n');
  return { rules, log: await readEvents([f], { rules }), file: f };
}

describe('the in-memory engine refuses a range too large for its memory budget', () => {
  it('when an outlying year stretches a daily range over a century then it says what it needs and names the rows', async () => {
    const { rules, log } = await strayLog();
    // 25 users × 36,530 days ≈ 913k rows: about 40 MB; a budget of 10 MB refuses it
    await expect(runOnLog(log, rules, {}, { budget: 10_000_000 })).rejects.toThrow(/^classifying 1926-01-01 to 2026-01-05 \(36,530 days, 45 users\) needs about \d+ MB, more than the 10 MB memory budget; the earliest row is .*e\.csv:2 '1926-01-01T00:00:00Z' and the latest .*e\.csv:\d+ '2026-01-05T10:00:00Z'$/);
  });

  it('when narrowed with --from the same log fits: history before --from is crossed, not stored', async () => {
    const { rules, log } = await strayLog();
    const run = await runOnLog(log, rules, { from: '2025-12-01' }, { budget: 10_000_000 });
    expect(run.waist.tables.periods[0]).toBe('2025-12-01');
    // the 1926 members are dormant from 1926-01-09 (eight quiet days) and stay so
    expect(run.waist.tables.stateCounts[0]).toEqual([0, 0, 0, 0, 25]);
  });
});

describe('engineFootprint', () => {
  it('counts 18 bytes a row for the classification (four Int32 and two Int8 columns) and 16 a user', () => {
    const base = { events: 0, attributes: 0, activePeriods: 0, users: 0, rows: 0, cohortActive: 0, outPeriods: 0, bands: 4, cohortCells: 0, windowCells: 0, split: false, rowObjects: false };
    const f = engineFootprint({ ...base, rows: 1000, users: 10 });
    expect(f.parts.find((p) => p.what === 'classification')?.bytes).toBe(18 * 1000 + 16 * 10);
    // one more classified row costs the same at any size (the estimate is linear in rows)
    const a = engineFootprint({ ...base, rows: 1e6 }).total, b = engineFootprint({ ...base, rows: 2e6 }).total;
    expect(b).toBe(2 * a);
  });

  it('formats bytes in decimal units', () => {
    expect([formatBytes(999), formatBytes(52_000_000), formatBytes(4_345_298_944), formatBytes(11e12)]).toEqual(['999 bytes', '52 MB', '4.3 GB', '11 TB']);
  });
});
