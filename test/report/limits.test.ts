import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { runOnLog } from '../../src/engines/memory/index.js';
import { readEvents } from '../../src/ingest/read.js';
import { REPORT_BACKTEST_ORIGINS, REPORT_COHORTS, buildReport } from '../../src/report/build.js';
import type { CohortsOutput } from '../../src/explain/cohortReport.js';
import type { ProjectOutput } from '../../src/markov/run.js';
import { parseRules } from '../../src/rules/load.js';
import { tempDir } from './fixtures.js';

const WEEK = 604_800_000;

describe('the report over many periods', () => {
  // the timeout only bounds a hang: the run takes about a second
  it('reads the latest 52 cohorts and backtest origins, and says that older cohorts were left out', { timeout: 30_000 }, async () => {
    // 70 weekly cohorts of 5 members each; every member books in their first week and every third week after
    const rows = ['user_id,timestamp,event'];
    const start = Date.UTC(2025, 0, 6);
    for (let c = 0; c < 70; c++) for (let m = 0; m < 5; m++) for (let w = c; w < 72; w += 3) rows.push(`c${c}m${m},${new Date(start + w * WEEK + 3_600_000).toISOString()},booking_made`);
    const f = join(tempDir(), 'e.csv');
    writeFileSync(f, rows.join('\n'));
    const rules = parseRules('grain: week\nlapseLimit: 2\n');
    const { waist } = await runOnLog(await readEvents([f], { rules }), rules);
    const result = { waist: waist.tables };
    expect(result.waist.cohorts).toHaveLength(70);
    const m = buildReport(waist);
    const cohorts = m.documents.find((d) => d.name === 'cohorts')!.value as CohortsOutput;
    expect(cohorts.triangle.map((r) => r.cohort)).toEqual(result.waist.cohorts.slice(-REPORT_COHORTS).map((r) => r.cohort));
    expect(m.warnings.join(' ')).toContain(`latest ${REPORT_COHORTS} of 70 acquisition cohorts`);
    const projection = m.documents.find((d) => d.name === 'projection')!.value as ProjectOutput;
    const backtest = projection.backtest as { origins: string[] };
    expect(backtest.origins).toHaveLength(REPORT_BACKTEST_ORIGINS);
    expect(backtest.origins[backtest.origins.length - 1]).toBe(result.waist.periods[result.waist.periods.length - 2]);
  });
});
