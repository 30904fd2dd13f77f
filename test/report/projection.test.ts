/** The report's projection part: history joined to the forecast, the scenario chart, the band coverage. */
import { beforeAll, describe, expect, it } from 'vitest';
import { createEngine } from '../../src/engines/index.js';
import { filesSource } from '../../src/engines/types.js';
import { analysisWaist } from '../../src/waist/derive.js';
import type { Waist } from '../../src/waist/types.js';
import { buildReport, type ReportModel } from '../../src/report/build.js';
import { offLineReading } from '../../src/report/charts/projection.js';
import { loadRulesFile } from '../../src/rules/load.js';
import { DEFAULT_RULES } from '../../src/cli/common.js';
import { demoEvents, tempDir } from './fixtures.js';

let model: ReportModel;
let result: { waist: Waist['tables'] };

beforeAll(async () => {
  const ev = demoEvents(tempDir());
  const rules = loadRulesFile(DEFAULT_RULES);
  const { waist } = analysisWaist((await createEngine('memory').run(filesSource([ev.file]), rules)).waist);
  result = { waist: waist.tables };
  model = buildReport(waist, { scenarios: ['keep-lapsers=lapsing->dormant*0.8', 'open-day=+1500 fresh at +4'], samples: 100 });
}, 120_000);

describe('report projection charts', () => {
  it('the projection chart joins the last 26 periods of history to the forecast, with a line at now', () => {
    const chart = model.charts.find((c) => c.id === 'projection')!;
    const values = (chart.spec as unknown as { data: { values: { part: string; x: string }[] } }).data.values;
    const history = values.filter((v) => v.part === 'history');
    const states = result.waist.states.length;
    expect(history.length).toBe(26 * states);
    const now = values.find((v) => v.part === 'now')!;
    expect(now.x).toBe(result.waist.periods[result.waist.periods.length - 1]);
    expect(history.every((v) => v.x < now.x)).toBe(true);
    expect(values.filter((v) => v.part === 'forecast').every((v) => v.x > now.x)).toBe(true);
    expect(JSON.stringify(chart.spec)).toMatch(/"label":"now"/);
  });

  it("the story's next line gives the same band of active users as the projection chart's reading", () => {
    const next = model.story.find((l) => l.kind === 'next')!;
    const story = /\(band ([\d,]+)–([\d,]+)\)/.exec(next.text);
    const chart = /\(([\d,]+)–([\d,]+) active users in the 80% band\)/.exec(model.charts.find((c) => c.id === 'projection')!.reading);
    expect(story).not.toBeNull();
    expect(chart).not.toBeNull();
    expect([story![1], story![2]]).toEqual([chart![1], chart![2]]);
  });

  it('the scenario chart compares each scenario with the baseline, and its reading gives each difference with its band', () => {
    const chart = model.charts.find((c) => c.id === 'scenarios')!;
    expect(chart.reading).toMatch(/keep-lapsers adds [\d,]+ active users \(band \+[\d,]+ to \+[\d,]+\); open-day adds/);
    const rows = chart.table.rows;
    expect(new Set(rows.map((r) => r[0]))).toEqual(new Set(['keep-lapsers', 'open-day']));
    // before the open day (step < 4) it changes nothing
    expect(rows.filter((r) => r[0] === 'open-day' && (r[1] as number) < 4).every((r) => r[6] === 0)).toBe(true);
  });

  it('the coverage chart and the backtest table report both bands, the interval scores and the no-change baseline', () => {
    const cov = model.charts.find((c) => c.id === 'coverage')!;
    expect(cov.reading).toMatch(/the 50% band held \d+%–\d+% of past shares \(target 40%–60%\) and the 80% band \d+%–\d+% \(target 70%–90%\)/);
    const bt = model.charts.find((c) => c.id === 'backtest')!;
    expect(bt.table.header).toEqual(['horizon', 'origins', 'mae', 'naive_mae', 'seasonal_mae', 'coverage_50', 'coverage_outer', 'interval_score', 'interval_score_no_change', 'interval_score_seasonal', 'model_coverage_50', 'model_coverage_outer', 'model_interval_score']);
    expect(bt.table.rows).toHaveLength(8);
  });
});

describe('offLineReading: states whose dashed line lies outside their moved 50% band', () => {
  // hand-made end step: fresh's line above its 25th–75th band, dormant's below, engaged's inside
  const p = { states: ['fresh', 'engaged', 'dormant'] } as unknown as Parameters<typeof offLineReading>[0];
  const end = (inner: Record<string, [number, number]>) => ({ shares: { fresh: 0.1, engaged: 0.3, dormant: 0.6 }, bands: { inner: { shares: inner } } }) as unknown as Parameters<typeof offLineReading>[1];

  it('names the states above and below, from the shares and the inner band only', () => {
    const text = offLineReading(p, end({ fresh: [0.05, 0.08], engaged: [0.25, 0.35], dormant: [0.62, 0.7] }));
    expect(text).toContain('above what happened for fresh (their bands sit below the dashed line)');
    expect(text).toContain('below what happened for dormant (their bands sit above it)');
    expect(text).not.toContain('engaged');
  });

  it('says nothing when every line lies within its band, or when there are no bands', () => {
    expect(offLineReading(p, end({ fresh: [0.05, 0.1], engaged: [0.25, 0.35], dormant: [0.6, 0.7] }))).toBe('');
    expect(offLineReading(p, { shares: { fresh: 0.1, engaged: 0.3, dormant: 0.6 } } as unknown as Parameters<typeof offLineReading>[1])).toBe('');
  });
});
