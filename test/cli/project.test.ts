import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { main } from '../../src/cli/main.js';
import { bufferIo } from '../../src/cli/io.js';

const dir = mkdtempSync(join(tmpdir(), 'tidemark-project-'));
function file(name: string, body: unknown): string {
  const f = join(dir, name);
  writeFileSync(f, typeof body === 'string' ? body : JSON.stringify(body));
  return f;
}
async function run(args: string[]) {
  const io = bufferIo();
  const code = await main(args, io);
  return { code, out: io.out, err: io.err };
}

// Grinstead & Snell, Introduction to Probability, ch. 11, Example 11.1 (Land of Oz): fixed vector (0.4, 0.2, 0.4)
const oz = { states: ['rain', 'nice', 'snow'], matrix: [[0.5, 0.25, 0.25], [0.5, 0, 0.5], [0.25, 0.25, 0.5]], start: { rain: 0, nice: 100, snow: 0 } };

describe('tidemark project --matrix', () => {
  it('when given the Land of Oz chain then JSON has its fixed vector and a projection', async () => {
    const r = await run(['project', '--matrix', file('oz.json', oz), '--horizon', '2', '--format', 'json']);
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    expect(j.states).toEqual(oz.states);
    expect(j.steadyState.rain).toBeCloseTo(0.4, 9);
    expect(j.steadyState.nice).toBeCloseTo(0.2, 9);
    expect(j.steadyState.snow).toBeCloseTo(0.4, 9);
    // hand computation: (0,100,0)·P = (50, 0, 50); ·P again = (37.5, 25, 37.5)
    expect(j.projection[1].counts).toEqual({ rain: 50, nice: 0, snow: 50 });
    expect(j.projection[2].counts.rain).toBeCloseTo(37.5, 12);
    expect(j.projection[2].counts.nice).toBeCloseTo(25, 12);
    expect(j.backtest).toBeUndefined();
  });

  it('when --until is given then firstPassage holds the mean first passage times to it', async () => {
    const r = await run(['project', '--matrix', file('oz2.json', oz), '--until', 'rain', '--format', 'json']);
    const j = JSON.parse(r.out);
    // Grinstead & Snell §11.5, mean first passage matrix M: column rain = (0, 8/3, 10/3)
    expect(j.firstPassage.target).toBe('rain');
    expect(j.firstPassage.expectedSteps.nice).toBeCloseTo(8 / 3, 9);
    expect(j.firstPassage.expectedSteps.snow).toBeCloseTo(10 / 3, 9);
  });

  it('when --what-if scales a transition then baseline and scenario differ and the row was renormalised', async () => {
    const r = await run(['project', '--matrix', file('oz3.json', oz), '--horizon', '1', '--what-if', 'nice->rain*0.5', '--format', 'json']);
    const j = JSON.parse(r.out);
    expect(j.scenario.edits[0]).toMatchObject({ before: 0.5, after: 0.25 });
    // nice row becomes (0.25, 0, 0.75): 100 nice → 25 rain, 75 snow
    expect(j.scenario.projected[1].counts.rain).toBeCloseTo(25, 12);
    expect(j.scenario.difference[1].counts.snow).toBeCloseTo(25, 12);
  });

  it.each([
    ['a row that does not sum to 1', { states: ['a', 'b'], matrix: [[0.9, 0.2], [0.5, 0.5]], start: { a: 1 } }, /matrix\[0\].*sums to 1\.1/],
    ['a negative entry', { states: ['a', 'b'], matrix: [[1.5, -0.5], [0, 1]], start: { a: 1 } }, /negative/],
    ['a ragged matrix', { states: ['a', 'b'], matrix: [[1, 0], [0, 0.5, 0.5]], start: { a: 1 } }, /matrix\[1\]/],
    ['a duplicate state', { states: ['a', 'a'], matrix: [[1, 0], [0, 1]], start: { a: 1 } }, /twice/],
    ['a start naming an unknown state', { states: ['a', 'b'], matrix: [[1, 0], [0, 1]], start: { c: 1 } }, /start.*'c'/],
  ])('refuses %s with one line and exit 1', async (_, doc, pattern) => {
    const r = await run(['project', '--matrix', file(`bad${Math.random()}.json`, doc)]);
    expect(r.code).toBe(1);
    expect(r.err.trim().split('\n')).toHaveLength(1);
    expect(r.err).toMatch(pattern);
    expect(r.err).toContain('.json');
  });

  it('refuses a what-if naming a missing transition', async () => {
    const r = await run(['project', '--matrix', file('oz4.json', oz), '--what-if', 'rain->hail*2']);
    expect(r.code).toBe(2); // the option names a state the matrix lacks: a usage error naming the flag
    expect(r.err).toMatch(/^tidemark: --what-if: /);
    expect(r.err).toMatch(/hail/);
  });

  it('refuses --events with --matrix, and neither, as usage errors', async () => {
    expect((await run(['project', '--matrix', file('oz5.json', oz), '--events', 'x.csv'])).code).toBe(2);
    expect((await run(['project'])).code).toBe(2);
  });
});

describe('tidemark project --events', () => {
  it('fits on the flows: fresh is transient (share 0), bands bracket the median, backtest present', async () => {
    // a small makerspace log: 40 members over 10 weeks, arriving in weeks 0-3, with gaps by member number
    const rows = ['user_id,timestamp,event'];
    for (let m = 0; m < 40; m++) for (let w = m % 4; w < 10; w++) if ((m * 7 + w * 3) % 5 !== 0) rows.push(`m${m},${new Date(Date.UTC(2026, 2, 2) + w * 7 * 86400000).toISOString()},booking_made`);
    const f = file('events.csv', rows.join('\n'));
    // lapseLimit 0: a quiet week is dormant at once, so every state has transitions out
    const rules = file('rules.yaml', 'grain: week\nlapseLimit: 0\n');
    const r = await run(['project', '--events', f, '--rules', rules, '--horizon', '3', '--samples', '50', '--format', 'json', '--quiet']);
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    expect(j.steadyState.fresh).toBe(0);
    // with lapseLimit 0 nobody is ever lapsing: that state is left out of the long-run analysis, not a fake closed class
    expect(j.longRun.unobserved).toEqual(['lapsing']);
    expect(j.longRun.kind).toBe('unique');
    const sum = Object.values(j.steadyState as Record<string, number>).reduce((a, b) => a + b, 0);
    expect(sum).toBeCloseTo(1, 9);
    for (const step of j.projection.slice(1)) for (const s of j.states) {
      expect(step.bands.counts[s][0]).toBeLessThanOrEqual(step.bands.counts[s][1] + 1e-9);
    }
    expect(j.backtest.rows.length).toBeGreaterThan(0);
  });
});

describe('tidemark project: scenarios, segments, inflow methods, planner shares', () => {
  // 120 members over 12 weeks; plan by member number; a one-off open day brings 60 extra in week 6
  const rows = ['user_id,timestamp,event,plan'];
  for (let m = 0; m < 180; m++) {
    const join = m < 120 ? m % 10 : 6;
    for (let w = join; w < 12; w++) if (w === join || (m * 7 + w * 3) % 5 !== 0) rows.push(`m${m},${new Date(Date.UTC(2026, 2, 2) + w * 7 * 86400000 + 3600000).toISOString()},booking_made,${m % 3 ? 'hobby' : 'studio'}`);
  }
  const events = file('members.csv', rows.join('\n'));
  const rules = file('rules2.yaml', 'grain: week\nlapseLimit: 1\n');
  const common = ['project', '--events', events, '--rules', rules, '--horizon', '4', '--samples', '60', '--quiet', '--no-backtest'];

  it('--scenario NAME=… twice: each compared with the baseline at the horizon, with bands; the table shows them side by side', async () => {
    const r = await run([...common, '--scenario', 'keep=engaged->lapsing*0.8', '--scenario', 'launch=+50 fresh at +2', '--format', 'json']);
    expect(r.code, r.err).toBe(0);
    const j = JSON.parse(r.out);
    expect(j.scenarios.map((s: { name: string }) => s.name)).toEqual(['keep', 'launch']);
    const launch = j.scenarios[1];
    expect(launch.steps[4].difference.total.value).toBeCloseTo(50, 9);
    expect(launch.atHorizon.counts.fresh.outer[0]).toBeLessThanOrEqual(launch.atHorizon.counts.fresh.outer[1]);
    expect(j.projection[4].period).toMatch(/^2026-/);
    const t = await run([...common, '--scenario', 'keep=engaged->lapsing*0.8']);
    expect(t.out).toMatch(/Scenarios at \+4/);
    expect(t.out).toMatch(/keep: engaged->lapsing\*0\.8 \(/);
  });

  it('--scenario on an impossible move: exit 2 naming the flag, the reason, a possible move as suggestion', async () => {
    const r = await run([...common, '--scenario', 'x=lapsing->engaged*1.2']);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/^tidemark: --scenario: x: .*lapsing->engaged cannot happen: a lapsing user who is active the next period becomes returned/);
    expect(r.err).toMatch(/[Dd]id you mean 'lapsing->returned\*1\.2'/);
  });

  it('--inflow-method names its method; the median ignores the open-day week and the warning lists it', async () => {
    const med = JSON.parse((await run([...common, '--fit', 'all', '--format', 'json'])).out);
    const mean = JSON.parse((await run([...common, '--fit', 'all', '--inflow-method', 'mean', '--format', 'json'])).out);
    expect(med.inflowMethod.method).toBe('median');
    expect(mean.inflowMethod.method).toBe('mean');
    expect(mean.inflowMethod.center).toBeGreaterThan(med.inflowMethod.center);
    expect(med.inflowMethod.outliers.map((o: { period: string }) => o.period)).toEqual(['2026-04-13']);
    expect(med.warnings.join(' ')).toMatch(/median treated 2026-04-13 \(\d+\) as outliers/);
  });

  it('--by plan: each plan from its own flows, and their sum', async () => {
    const r = await run([...common, '--by', 'plan', '--format', 'json']);
    expect(r.code, r.err).toBe(0);
    const j = JSON.parse(r.out);
    expect(j.segments.by).toBe('plan');
    const names = [...j.segments.groups.map((g: { segment: string }) => g.segment), ...j.segments.pooled.map((g: { segment: string }) => g.segment)];
    expect(names.sort()).toEqual(expect.arrayContaining(['hobby']));
    const sum = j.segments.sum[4].total;
    expect(sum).toBeCloseTo(j.segments.groups.reduce((a: number, g: { projection: { total: number }[] }) => a + g.projection[4].total, 0), 9);
    expect((await run([...common, '--by', 'plan'])).out).toMatch(/By plan \(each user's value in their first active period\)/);
    expect((await run(['project', '--matrix', file('ozby.json', oz), '--by', 'plan'])).code).toBe(2);
  });

  it('a planner\'s matrix with start shares and an audience projects counts; shares without one never print as 0', async () => {
    const doc = { states: ['rain', 'nice', 'snow'], matrix: oz.matrix, start: { rain: 0.25, nice: 0.5, snow: 0.25 }, audience: 2000 };
    const j = JSON.parse((await run(['project', '--matrix', file('ozaud.json', doc), '--horizon', '1', '--format', 'json'])).out);
    expect(j.start).toEqual({ rain: 500, nice: 1000, snow: 500 });
    expect(j.source.audience).toBe(2000);
    // hand: (500, 1000, 500)·P = (250 + 500 + 125, 125 + 0 + 125, 125 + 500 + 250)
    expect(j.projection[1].counts).toEqual({ rain: 875, nice: 250, snow: 875 });
    const noAudience = await run(['project', '--matrix', file('ozshares.json', { ...doc, audience: undefined }), '--horizon', '1']);
    expect(noAudience.out).toMatch(/rain\s+0\.25\s+0\.44/);
    expect(noAudience.out).toMatch(/add "audience": N/);
    const bad = await run(['project', '--matrix', file('ozbad.json', { ...doc, start: { rain: 0.5, nice: 0.6 } })]);
    expect(bad.code).toBe(1);
    expect(bad.err).toMatch(/"start" gives shares, which must sum to 1 \(they sum to 1\.1\)/);
  });

  it('CSV has the period and both bands per state and step', async () => {
    const r = await run([...common, '--format', 'csv']);
    expect(r.out.split('\n')[0]).toBe('step,period,state,count,share,count_lo,count_hi,share_lo,share_hi,count_lo50,count_hi50,share_lo50,share_hi50');
  });
});
