import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { runCli, tempDir } from '../report/fixtures.js';

const dir = tempDir('tidemark-input-');

describe('CSV delimiters', () => {
  it('when a file is semicolon-separated then the header error says so and names the option', async () => {
    const f = join(dir, 'semi.csv');
    writeFileSync(f, 'user_id;timestamp;event\nm1;2026-05-04T10:00:00Z;booking_made\n');
    const r = await runCli(['flows', '--events', f]);
    expect(r.code).toBe(1);
    expect(r.err).toMatch(/semi\.csv:1: .*not comma-separated\. Pass --delimiter ';'/);
  });

  it('when --delimiter is given then semicolon and tab files read like comma files', async () => {
    const rows = [['user_id', 'timestamp', 'event'], ['m1', '2026-05-04T10:00:00Z', 'booking_made'], ['m1', '2026-05-11T10:00:00Z', 'checked_in'], ['m2', '2026-05-11T12:00:00Z', 'booking_made']];
    const out: string[] = [];
    for (const [name, sep, flag] of [['c.csv', ',', ','], ['s.csv', ';', ';'], ['t.csv', '\t', '\\t']]) {
      const f = join(dir, name);
      writeFileSync(f, rows.map((r) => r.join(sep)).join('\n'));
      const r = await runCli(['flows', '--events', f, '--delimiter', flag, '--format', 'json', '--quiet']);
      expect(r.code, r.err).toBe(0);
      out.push(JSON.stringify(JSON.parse(r.out).transitions));
    }
    expect(out[1]).toBe(out[0]);
    expect(out[2]).toBe(out[0]);
  });

  it('when an option is misspelt then commander names it and suggests the right one (exit 2)', async () => {
    const r = await runCli(['flows', '--evnts', 'x.csv']);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/unknown option '--evnts'[\s\S]*--events/);
  });
});
