import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { leftCensoringHint } from '../../src/report/build.js';
import type { FlowsSummary } from '../../src/flows/summary.js';
import { runCli, tempDir } from './fixtures.js';

const DAY = 86_400_000;
const MONDAY = Date.UTC(2026, 2, 2);

/** 60 members booking every week for 6 weeks; the data stop on `lastDay` (0 = Monday) of week 6. */
function log(lastDay: number): string {
  const rows = ['user_id,timestamp,event'];
  for (let m = 0; m < 60; m++) {
    for (let w = 0; w < 6; w++) if ((m + w) % 3 !== 0) rows.push(`m${m},${new Date(MONDAY + w * 7 * DAY + (m % 5) * DAY + 3_600_000).toISOString()},booking_made`);
    rows.push(`m${m},${new Date(MONDAY + 6 * 7 * DAY + Math.min(m % 7, lastDay) * DAY + 3_600_000).toISOString()},booking_made`);
  }
  return rows.join('\n');
}

describe('incomplete last period', () => {
  it('when the data stop mid-week then the report says so and leaves that week out', async () => {
    const dir = tempDir();
    writeFileSync(join(dir, 'e.csv'), log(2)); // last events on Wednesday
    const r = await runCli(['report', '--events', join(dir, 'e.csv'), '--out', join(dir, 'out'), '--format', 'json', '--quiet']);
    expect(r.code, r.err).toBe(0);
    const j = JSON.parse(r.out); // JSON mode: standard output is JSON only
    expect(j.warnings.join(' ')).toMatch(/last period, 2026-04-13, looks incomplete/);
    const flows = JSON.parse(readFileSync(join(dir, 'out', 'flows.json'), 'utf8'));
    expect(flows.periods[flows.periods.length - 1]).toBe('2026-04-06');
  }, 30_000);

  it('when the data run to the end of the week then nothing is left out; --include-partial keeps a partial week', async () => {
    const dir = tempDir();
    writeFileSync(join(dir, 'full.csv'), log(6));
    const r = await runCli(['report', '--events', join(dir, 'full.csv'), '--out', join(dir, 'a'), '--format', 'json', '--quiet']);
    expect(JSON.parse(r.out).warnings.join(' ')).not.toMatch(/incomplete/);
    writeFileSync(join(dir, 'part.csv'), log(2));
    await runCli(['report', '--events', join(dir, 'part.csv'), '--out', join(dir, 'b'), '--include-partial', '--quiet']);
    const flows = JSON.parse(readFileSync(join(dir, 'b', 'flows.json'), 'utf8'));
    expect(flows.periods[flows.periods.length - 1]).toBe('2026-04-13');
  }, 30_000);
});

describe('leftCensoringHint', () => {
  const summary = (firstFresh: number, laterFresh: number, engaged: number): FlowsSummary => ({
    states: ['fresh', 'engaged', 'returned', 'lapsing', 'dormant'],
    activeStates: ['fresh', 'engaged', 'returned'],
    periods: ['2026-01-05', '2026-01-12', '2026-01-19', '2026-01-26', '2026-02-02'],
    warmupPeriods: [],
    stateCounts: [],
    pooled: null,
    transitions: [firstFresh, laterFresh, laterFresh, laterFresh].map((rate, i) => ({
      from: '', to: '', counts: [], fresh: 0, rates: [], growth: {} as never,
      retention: { fresh: { n: 100, retained: Math.round(rate * 100), rate }, engaged: { n: i === 0 ? 0 : 100, retained: Math.round(engaged * 100), rate: engaged }, returned: { n: 0, retained: 0, rate: null } },
    })),
  });

  it('warns when first-period "fresh" users retain like engaged users, not like later newcomers', () => {
    expect(leftCensoringHint(summary(0.78, 0.4, 0.8), 'week')).toMatch(/middle of users' histories.*warm-up/);
  });

  it('stays quiet when the first cohort retains like later newcomers', () => {
    expect(leftCensoringHint(summary(0.42, 0.4, 0.8), 'week')).toBeUndefined();
  });
});

describe('short logs', () => {
  it.each([1, 2, 3])('with %i week(s) of data the report is written and reads sensibly (no NaN, undefined or null)', async (weeks) => {
    const dir = tempDir();
    const rows = ['user_id,timestamp,event'];
    for (let m = 0; m < 50; m++) for (let w = 0; w < weeks; w++) if (w === 0 || (m + w) % 2 === 0) rows.push(`m${m},${new Date(MONDAY + w * 7 * DAY + 3_600_000).toISOString()},booking_made`);
    writeFileSync(join(dir, 'e.csv'), rows.join('\n'));
    const r = await runCli(['report', '--events', join(dir, 'e.csv'), '--out', join(dir, 'out'), '--include-partial', '--quiet']);
    expect(r.code, r.err).toBe(0);
    const html = readFileSync(join(dir, 'out', 'index.html'), 'utf8');
    const text = html.replace(/<svg[\s\S]*?<\/svg>/g, '');
    expect(text).not.toMatch(/NaN|undefined|>null</);
    expect((html.match(/<figure class="chart"/g) ?? []).length).toBeGreaterThanOrEqual(weeks === 1 ? 1 : 4);
  }, 30_000);
});
