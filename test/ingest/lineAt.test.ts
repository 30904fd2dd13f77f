import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { readEvents } from '../../src/ingest/read.js';
import { parseRules } from '../../src/rules/load.js';
import { tempDir } from '../report/fixtures.js';

const rules = parseRules('grain: week\nlapseLimit: 2\n');

describe('line numbers of bad rows in large files', () => {
  it.each([['\n', 'LF'], ['\r\n', 'CRLF']])('are physical lines past the 1 MB chunk boundary, with multi-byte text and quoted line breaks (%#: %s)', async (nl) => {
    const dir = tempDir('tidemark-lines-');
    const rows = ['user_id,timestamp,event,note'];
    // each row ~60 bytes with two-byte characters; 30,000 rows ≈ 1.8 MB
    for (let i = 0; i < 30_000; i++) rows.push(`m${i},2026-05-04T10:00:00Z,booking_made,"atelier café é ${i}"`);
    rows.push(`m-x,2026-05-04T10:00:00Z,booking_made,"a note${nl}on two lines"`); // physical lines 30,002-30,003
    rows.push('m-bad,not-a-time,booking_made,x'); // physical line 30,004
    const f = join(dir, 'big.csv');
    writeFileSync(f, rows.join(nl));
    await expect(readEvents([f], { rules })).rejects.toMatchObject({ code: 'EVENTS_BAD_ROW', where: { file: f, line: 30_004, column: 'timestamp' } });
  }, 30_000);
});
