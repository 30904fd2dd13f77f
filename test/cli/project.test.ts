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
