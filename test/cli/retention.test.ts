import { describe, expect, it } from 'vitest';
import { demoEvents, runCli, tempDir } from '../report/fixtures.js';

describe('tidemark retention', () => {
  it('per state it agrees with the flows\' status-split retention, and per tenure band it sums to it', async () => {
    const { file } = demoEvents(tempDir('tidemark-ret-'));
    const flows = JSON.parse((await runCli(['flows', '--events', file, '--format', 'json', '--quiet'])).out);
    const byState = JSON.parse((await runCli(['retention', '--events', file, '--format', 'json', '--quiet'])).out);
    const byBand = JSON.parse((await runCli(['retention', '--events', file, '--tenure', '--format', 'json', '--quiet'])).out);
    let checked = 0;
    for (const t of flows.transitions) {
      for (const s of flows.activeStates) {
        const want = t.retention[s];
        if (want.n === 0) continue;
        const row = byState.rows.find((r: { to: string; state: string }) => r.to === t.to && r.state === s);
        expect(row).toMatchObject({ n: want.n, retained: want.retained });
        expect(row.lower).toBeLessThanOrEqual(row.rate);
        expect(row.upper).toBeGreaterThanOrEqual(row.rate);
        const bands = byBand.rows.filter((r: { to: string; state: string }) => r.to === t.to && r.state === s);
        expect(bands.reduce((a: number, r: { n: number }) => a + r.n, 0)).toBe(want.n);
        expect(bands.reduce((a: number, r: { retained: number }) => a + r.retained, 0)).toBe(want.retained);
        checked++;
      }
    }
    expect(checked).toBeGreaterThan(50);
  }, 60_000);
});
