import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { runOnLog } from '../../src/engines/memory.js';
import { readEvents } from '../../src/ingest/read.js';
import { parseRules } from '../../src/rules/load.js';
import { tempDir } from '../report/fixtures.js';

describe('the in-memory engine refuses a range too large to classify', () => {
  it('when one outlying timestamp stretches a daily range over a century then it says so and suggests --from', async () => {
    const f = join(tempDir('tidemark-limit-'), 'e.csv');
    // 25 members with one stray 1926 booking each, 20 with bookings in January 2026
    const rows = ['user_id,timestamp,event'];
    for (let m = 0; m < 25; m++) rows.push(`m${m},1926-01-01T00:00:00Z,booking_made`);
    for (let m = 25; m < 45; m++) rows.push(`m${m},2026-01-0${1 + (m % 5)}T10:00:00Z,booking_made`);
    writeFileSync(f, rows.join('\n'));
    const rules = parseRules('grain: day\nlapseLimit: 7\n');
    const log = await readEvents([f], { rules });
    expect(() => runOnLog(log, rules, {}, 100_000)).toThrow(/1926-01-01 to 2026-01-05 is 36530 periods: classifying it would take 913,\d{3} user-periods/);
    // narrowed with --from, the same log fits: history before --from is still read
    expect(runOnLog(log, rules, { from: '2025-12-01' }, 100_000).result.waist.periods[0]).toBe('2025-12-01');
  });
});
