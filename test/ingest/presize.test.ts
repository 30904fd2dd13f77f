/**
 * The CSV reader allocates its columns once from an estimate of the rows (rowsEstimate: the file's
 * size × the line feeds of the first refill). The estimate only sizes allocations: a read of a file
 * large enough to be presized gives the log a reader with no estimate gives (rows built by hand here
 * from the generated lines, an independent count), whether the estimate is short or long.
 */
import { statSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { rowsEstimate } from '../../src/ingest/csv.js';
import { readEvents } from '../../src/ingest/read.js';
import { tempDir, rulesOf } from '../core/helpers.js';

describe('rowsEstimate and presized columns', () => {
  it('estimates the rows of a file from its first refill, a little over; none for small files or few lines', () => {
    const line = Buffer.from('m123,2026-05-04T18:30:00Z,booking_made,pro\n');
    const chunk = Buffer.concat(Array.from({ length: 1000 }, () => line));
    const rows = (64 << 20) / line.length;
    const est = rowsEstimate(chunk, chunk.length, 64 << 20);
    expect(est).toBeGreaterThanOrEqual(rows);
    expect(est).toBeLessThanOrEqual(rows * 1.05 + 1024);
    expect(rowsEstimate(chunk, chunk.length, 1 << 20)).toBe(0); // a small file doubles a few times at most
    expect(rowsEstimate(chunk.subarray(0, line.length * 10), line.length * 10, 64 << 20)).toBe(0); // 10 lines tell too little
  });

  it('a presized read (short lines first, so the estimate runs long; long lines first, so it runs short) gives every row, in order', async () => {
    const t = tempDir();
    try {
      const rules = rulesOf({ grain: 'week', lapseLimit: 2 });
      for (const shortFirst of [true, false]) {
        // about 5 MiB: 60,000 rows, the first 30,000 with short ids or long ones
        const lines = ['user_id,timestamp,event'];
        const want: [string, number][] = [];
        for (let i = 0; i < 60_000; i++) {
          const long = (i < 30_000) !== shortFirst;
          const id = long ? `member-of-the-makerspace-${i % 997}-${'x'.repeat(40)}` : `m${i % 997}`;
          const day = 20_500 + (i % 200);
          lines.push(`${id},${new Date(day * 86_400_000).toISOString()},booking_made`);
          want.push([id, day]);
        }
        const file = t.file(`p${shortFirst}.csv`, lines.join('\n') + '\n');
        expect(statSync(file).size).toBeGreaterThan(4 << 20); // large enough to be presized
        const log = await readEvents([file], { rules, parallel: false });
        expect(log.size).toBe(want.length);
        const days = Array.from(log.wallMs, (w) => Math.floor(w / 86_400_000));
        expect(Array.from(log.user, (u, i) => [log.users[u], days[i]])).toEqual(want);
      }
    } finally {
      t.done();
    }
  });
});
