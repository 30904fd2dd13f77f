/**
 * An incomplete last period (the data stop before its last seventh) is left out by every analysis
 * command, said on standard error and in the JSON; --include-partial keeps it. `flows` keeps it and
 * notes it, as before. The expected periods are worked out by hand from the log below.
 */
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { runCli, tempDir } from '../report/fixtures.js';

const dir = tempDir('tidemark-partial-cli-');
const DAY = 86_400_000;
const MONDAY = Date.UTC(2026, 2, 2);
/** 60 members over weeks 0–5 (2026-03-02 … 2026-04-06), each active two weeks in three; then one booking each on Monday–Wednesday of week 6 (2026-04-13). */
function bookings(lastDay: number): string {
  const rows = ['user_id,timestamp,event'];
  for (let m = 0; m < 60; m++) {
    for (let w = 0; w < 6; w++) if ((m + w) % 3 !== 0) rows.push(`m${m},${new Date(MONDAY + w * 7 * DAY + (m % 5) * DAY + 3_600_000).toISOString()},booking_made`);
    rows.push(`m${m},${new Date(MONDAY + 6 * 7 * DAY + Math.min(m % 7, lastDay) * DAY + 3_600_000).toISOString()},booking_made`);
  }
  return rows.join('\n');
}
const PART = join(dir, 'part.csv');
writeFileSync(PART, bookings(2));
const FULL = join(dir, 'full.csv');
writeFileSync(FULL, bookings(6));

const LAST = '2026-04-13';
const BEFORE = '2026-04-06';

/** The last period any output mentions, by command, from its JSON. */
const lastOf: Record<string, (j: any) => string> = {
  retention: (j) => j.rows[j.rows.length - 1].to,
  explain: (j) => j.compare,
  project: (j) => j.source.fit.to,
  cohorts: (j) => j.triangle[j.triangle.length - 1].cohort,
  survival: (j) => j.lastPeriod?.label ?? '',
  curve: (j) => j.fits[j.fits.length - 1].cohort,
};
// with lapseLimit 0 a member is lost at the first quiet week, so the cohorts' curves can be fitted
const QUICK = join(dir, 'quick.yaml');
writeFileSync(QUICK, 'grain: week\nlapseLimit: 0\n');
const extra: Record<string, string[]> = { curve: ['--min-size', '1', '--rules', QUICK], project: ['--no-backtest'] };

describe('the incomplete last period', () => {
  it.each(['retention', 'explain', 'project', 'cohorts', 'survival', 'curve'])('%s leaves it out, says so on stderr and in the JSON', async (command) => {
    const r = await runCli([command, '--events', PART, '--format', 'json', ...(extra[command] ?? [])]);
    expect(r.code, r.err).toBe(0);
    expect(r.err).toMatch(/rows: 300 read, 240 used, 60 in the incomplete last period/);
    expect(r.err).toMatch(new RegExp(`note: the last period, ${LAST}, looks incomplete \\(the data stop 2\\d% of the way through it\\), so it is left out of every rate \\(60 rows\\); pass --include-partial to keep it`));
    const j = JSON.parse(r.out);
    expect(j.lastPeriod).toMatchObject({ label: LAST, complete: false, leftOut: true, rowsLeftOut: 60 });
    if (command !== 'survival') expect(lastOf[command](j) < LAST, `${command}: ${lastOf[command](j)}`).toBe(true);
    if (command === 'explain' || command === 'project') expect(lastOf[command](j)).toBe(BEFORE);
  }, 30_000);

  it.each(['retention', 'explain', 'project', 'cohorts', 'survival', 'curve'])('%s --include-partial keeps it, and says so', async (command) => {
    const r = await runCli([command, '--events', PART, '--format', 'json', '--include-partial', ...(extra[command] ?? [])]);
    expect(r.code, r.err).toBe(0);
    expect(r.err).toMatch(/rows: 300 read, 300 used$/m);
    expect(r.err).toMatch(/it is kept, as asked, so its rates miss users who may still be active later in it/);
    const j = JSON.parse(r.out);
    expect(j.lastPeriod).toMatchObject({ label: LAST, complete: false, leftOut: false, rowsLeftOut: 0 });
    if (command === 'explain' || command === 'project' || command === 'retention') expect(lastOf[command](j)).toBe(LAST);
  }, 30_000);

  it('a complete last week is neither left out nor mentioned', async () => {
    for (const command of ['retention', 'explain']) {
      const r = await runCli([command, '--events', FULL, '--format', 'json']);
      expect(r.code, r.err).toBe(0);
      expect(r.err).not.toMatch(/incomplete/);
      const j = JSON.parse(r.out);
      expect(j.lastPeriod).toBeUndefined();
      expect(lastOf[command](j)).toBe(LAST);
    }
  }, 30_000);

  it('the same analysis with the partial week cut off by hand equals the default', async () => {
    // independent: drop the week-6 rows from the file itself
    const cut = join(dir, 'cut.csv');
    writeFileSync(cut, bookings(2).split('\n').filter((l, i) => i === 0 || l.split(',')[1] < LAST).join('\n'));
    const a = JSON.parse((await runCli(['retention', '--events', PART, '--format', 'json', '--quiet'])).out);
    // (the cut file ends on a Friday, so its own last week looks incomplete too: keep it there)
    const b = JSON.parse((await runCli(['retention', '--events', cut, '--format', 'json', '--quiet', '--include-partial'])).out);
    expect(a.rows).toEqual(b.rows);
  }, 30_000);

  it('flows keeps it and notes it in the table; its JSON says it was not left out', async () => {
    const t = await runCli(['flows', '--events', PART, '--quiet']);
    expect(t.out).toMatch(new RegExp(`note: the last period ${LAST} looks incomplete`));
    const j = JSON.parse((await runCli(['flows', '--events', PART, '--format', 'json', '--quiet'])).out);
    expect(j.periods[j.periods.length - 1]).toBe(LAST);
    expect(j.lastPeriod).toMatchObject({ label: LAST, complete: false, leftOut: false });
    expect(j.rows).toMatchObject({ read: 300, used: 300, partial: 0 });
  }, 30_000);
});
