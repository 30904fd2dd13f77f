/**
 * End to end: the commands of the explain family on published datasets turned into inputs.
 */
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { main } from '../../src/cli/main.js';
import { bufferIo } from '../../src/cli/io.js';
import { simulateMakerspace } from '../../src/demo/makerspace.js';
import { SIX_MP, PLACEBO } from '../survival/freireich.js';

const dir = mkdtempSync(join(tmpdir(), 'tidemark-explain-'));
async function run(args: string[]) {
  const io = bufferIo();
  const code = await main(args, io);
  return { code, out: io.out, err: io.err };
}
const week = (w: number, h = 10) => new Date(Date.UTC(2026, 2, 2) + w * 7 * 86_400_000 + h * 3_600_000).toISOString();

/**
 * Bickel, Hammel & O'Connell (1975), Science 187:398–403, the six-department table (R's UCBAdmissions):
 * admitted/rejected, men then women. Turned into an event log: each applicant is a user active in one
 * week with the department as an attribute; "admitted" = active again the next week. Men apply in
 * week 0, women in week 2, so retention into week 1 is the men's admission rate and into week 3 the
 * women's, and `explain --by dept` decomposes women − men.
 */
const UCB: Record<string, [number, number, number, number]> = {
  A: [512, 313, 89, 19], B: [353, 207, 17, 8], C: [120, 205, 202, 391], D: [138, 279, 131, 244], E: [53, 138, 94, 299], F: [22, 351, 24, 317],
};

beforeAll(() => {
  const rows = ['user_id,timestamp,event,dept'];
  let id = 0;
  for (const [dept, [mA, mR, wA, wR]] of Object.entries(UCB)) {
    const add = (n: number, w: number, admitted: boolean) => {
      for (let i = 0; i < n; i++) {
        const u = `a${id++}`;
        rows.push(`${u},${week(w)},applied,${dept}`);
        if (admitted) rows.push(`${u},${week(w + 1)},enrolled,${dept}`);
      }
    };
    add(mA, 0, true); add(mR, 0, false); add(wA, 2, true); add(wR, 2, false);
  }
  writeFileSync(join(dir, 'ucb.csv'), rows.join('\n'));
});

describe('tidemark explain --by on the Bickel admissions table', () => {
  it('gives the published Kitagawa decomposition of women − men (published-values.md: −0.141645 = +0.036028 − 0.177674)', async () => {
    // every event falls on a Monday, so the last week looks incomplete: keep it, it is the women's week
    const r = await run(['explain', '--events', join(dir, 'ucb.csv'), '--base', '2026-03-09', '--compare', '2026-03-23', '--by', 'dept', '--format', 'json', '--quiet', '--include-partial']);
    expect(r.code, r.err).toBe(0);
    const e = JSON.parse(r.out);
    // overall: men 1198 of 2691 (0.4452), women 557 of 1835 (0.3035)
    expect(e.overall.base).toBeCloseTo(1198 / 2691, 10);
    expect(e.overall.compare).toBeCloseTo(557 / 1835, 10);
    expect(e.bySegment.overall.change).toBeCloseTo(-0.141645, 6);
    expect(e.bySegment.rateEffect).toBeCloseTo(0.036028, 6);
    expect(e.bySegment.mixEffect).toBeCloseTo(-0.177674, 6);
    const a = e.bySegment.groups.find((g: { group: string }) => g.group === 'A');
    expect(a.rateBase).toBeCloseTo(512 / 825, 12);
    expect(a.rateCompare).toBeCloseTo(89 / 108, 12);
    expect(e.bySegment.caution).toMatch(/correlation, not a cause/);
  });
});

describe('tidemark explain on the demo', () => {
  it('recovers the planted story: newcomers gain, veterans lose, the promotion shifts the mix', async () => {
    const rows = ['user_id,timestamp,event,plan,channel'];
    simulateMakerspace(20260504, (e) => rows.push(`${e.user_id},${e.timestamp},${e.event},${e.plan},${e.channel}`));
    writeFileSync(join(dir, 'demo.csv'), rows.join('\n'));
    // base: retention into 2026-08-10 (before the change); compare: into 2026-09-14 (after the change and the promotion)
    const r = await run(['explain', '--events', join(dir, 'demo.csv'), '--base', '2026-08-10', '--compare', '2026-09-14', '--format', 'json', '--quiet']);
    expect(r.code).toBe(0);
    const e = JSON.parse(r.out);
    const g = (s: string) => e.byState.find((x: { state: string }) => x.state === s);
    expect(g('fresh').rateEffect).toBeGreaterThan(0);
    expect(g('engaged').rateEffect).toBeLessThan(0);
    expect(g('returned').rateEffect).toBeLessThan(0);
    expect(e.mixEffect).toBeLessThan(-0.05);
    expect(g('fresh').weightCompare).toBeGreaterThan(2 * g('fresh').weightBase);
    expect(e.rateEffect + e.mixEffect).toBeCloseTo(e.overall.change, 12);
    expect(e.sentence).toMatch(/^Overall one-week retention fell/);
    const fresh = e.changes.find((c: { state: string }) => c.state === 'fresh');
    expect(fresh.significant).toBe(true);
    expect(fresh.lower).toBeGreaterThan(0);
  }, 30_000);

  it('refuses a date that is not a period label, pointing to the period holding it', async () => {
    const r = await run(['explain', '--events', join(dir, 'demo.csv'), '--compare', '2026-09-15', '--quiet']);
    expect(r.code).toBe(2); // a value of --compare that the data do not hold: a usage error naming the flag
    expect(r.err).toMatch(/--compare: 2026-09-15 is not a period.*lies in the period labelled 2026-09-14/);
  }, 30_000);
});

describe('tidemark survival --durations on Freireich et al. (1963)', () => {
  it('gives the published Kaplan–Meier table and log-rank test (published-values.md)', async () => {
    const lines = ['duration,observed,group', ...SIX_MP.map((v) => `${Math.abs(v)},${v > 0 ? 1 : 0},6-MP`), ...PLACEBO.map((v) => `${v},1,placebo`)];
    writeFileSync(join(dir, 'remission.csv'), lines.join('\n'));
    const r = await run(['survival', '--durations', join(dir, 'remission.csv'), '--format', 'json']);
    expect(r.code).toBe(0);
    const s = JSON.parse(r.out);
    const mp = s.groups.find((g: { group: string }) => g.group === '6-MP');
    expect(mp.points[0]).toMatchObject({ t: 0, survival: 1 });
    // 6-MP at t = 6: at risk 21, 3 events, S .8571, Greenwood SE .0764; at 23: S .4482, SE .1346
    const at = (t: number) => mp.points.find((p: { t: number }) => p.t === t);
    expect(at(6)).toMatchObject({ atRisk: 21, events: 3 });
    expect(at(6).survival).toBeCloseTo(0.8571, 4);
    expect(at(6).se).toBeCloseTo(0.0764, 4);
    expect(at(23).survival).toBeCloseTo(0.4482, 4);
    expect(at(23).se).toBeCloseTo(0.1346, 4);
    expect(mp.median).toBe(23);
    expect(s.groups.find((g: { group: string }) => g.group === 'placebo').median).toBe(8);
    expect(s.logRank.chiSquare).toBeCloseTo(16.7929, 4);
    expect(s.logRank.df).toBe(1);
    expect(s.logRank.pValue).toBeCloseTo(4.1688e-5, 8);
  });
});

describe('tidemark curve --alive on Fader & Hardie (2007)', () => {
  it('fits the "regular" segment: α 0.704, β 1.182, log-likelihood −1680.265, years 8–12 projected (published-values.md)', async () => {
    const r = await run(['curve', '--alive', '1000,631,468,382,326,289,262,241', '--horizon', '12', '--format', 'json']);
    expect(r.code).toBe(0);
    const c = JSON.parse(r.out);
    expect(c.alpha).toBeCloseTo(0.704, 3);
    expect(c.beta).toBeCloseTo(1.182, 3);
    expect(c.logLikelihood).toBeCloseTo(-1680.265, 2);
    const pct = (t: number) => Math.round(c.projection[t].survival * 1000) / 10;
    expect([8, 9, 10, 11, 12].map(pct)).toEqual([22.0, 20.4, 19.1, 18.0, 17.0]);
  });

  it('refuses a non-number in --alive as a usage error', async () => {
    const r = await run(['curve', '--alive', '1000,x,400']);
    expect(r.code).toBe(2);
    expect(r.err).toMatch(/entry 2/);
  });
});
