/**
 * The demo's planted truth (src/demo/makerspace.ts) is recovered by the flows. The demo data are
 * invented; this checks the pipeline end to end against what the simulation was told to do.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { CHANGE_WEEK, DEMO_WEEKS, PLANTED, PROMO_WEEK, simulateMakerspace } from '../../src/demo/makerspace.js';
import { createEngine } from '../../src/engines/index.js';
import { filesSource } from '../../src/engines/types.js';
import { analysisWaist } from '../../src/waist/derive.js';
import { summariseFlows, type FlowsSummary } from '../../src/flows/summary.js';
import { loadRulesFile } from '../../src/rules/load.js';

let dir: string;
let flows: FlowsSummary;
let members = 0;

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'tidemark-demo-'));
  const lines = ['user_id,timestamp,event,plan,channel'];
  members = simulateMakerspace(20260504, (e) => lines.push(`${e.user_id},${e.timestamp},${e.event},${e.plan},${e.channel}`)).members;
  writeFileSync(join(dir, 'events.csv'), lines.join('\n'));
  const { waist } = await createEngine('memory').run(filesSource([join(dir, 'events.csv')]), loadRulesFile('rules/weekly.yaml'));
  flows = summariseFlows(analysisWaist(waist, { includePartial: true }).waist.tables);
}, 60_000);
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** Pooled retention of a state over transitions into weeks [a, b). */
function pooled(state: string, a: number, b: number): number {
  let n = 0, kept = 0;
  for (const t of flows.transitions.slice(a - 1, b - 1)) {
    n += t.retention[state].n;
    kept += t.retention[state].retained;
  }
  return kept / n;
}

describe('demo planted truth', () => {
  it('has about 20,000 members over 30 weeks', () => {
    expect(flows.periods).toHaveLength(DEMO_WEEKS);
    expect(flows.periods[0]).toBe('2026-05-04');
    expect(members).toBeGreaterThan(19_000);
    expect(members).toBeLessThan(21_000);
  });

  it('newcomer retention rises from 0.40 to 0.55 at the onboarding change', () => {
    expect(pooled('fresh', 1, CHANGE_WEEK)).toBeCloseTo(PLANTED.newcomerBefore, 1);
    expect(pooled('fresh', CHANGE_WEEK, DEMO_WEEKS)).toBeCloseTo(PLANTED.newcomerAfter, 1);
    expect(Math.abs(pooled('fresh', 1, CHANGE_WEEK) - PLANTED.newcomerBefore)).toBeLessThan(0.015);
    expect(Math.abs(pooled('fresh', CHANGE_WEEK, DEMO_WEEKS) - PLANTED.newcomerAfter)).toBeLessThan(0.015);
  });

  it('veteran retention falls from 0.82 to 0.74 at the same week', () => {
    for (const s of ['engaged', 'returned']) {
      expect(Math.abs(pooled(s, 2, CHANGE_WEEK) - PLANTED.veteranBefore)).toBeLessThan(0.015);
      expect(Math.abs(pooled(s, CHANGE_WEEK, DEMO_WEEKS) - PLANTED.veteranAfter)).toBeLessThan(0.015);
    }
  });

  it('the promotion brings one large newcomer cohort', () => {
    const fresh = flows.transitions.map((t) => t.fresh);
    const promo = fresh[PROMO_WEEK - 1];
    const others = fresh.filter((_, i) => i !== PROMO_WEEK - 1);
    expect(promo).toBeGreaterThan(PLANTED.weeklyArrivals + PLANTED.promoExtra - 200);
    expect(Math.max(...others)).toBeLessThan(PLANTED.weeklyArrivals + 150);
    // the mix shifts: in the week after, newcomers are a far larger share of the active users retained from
    const after = flows.transitions[PROMO_WEEK];
    const share = (t: typeof after) => t.retention.fresh.n / (t.retention.fresh.n + t.retention.engaged.n + t.retention.returned.n);
    expect(share(after)).toBeGreaterThan(2 * share(flows.transitions[PROMO_WEEK - 2]));
  });

  it('the growth-accounting identity holds in every week', () => {
    for (const t of flows.transitions) expect(t.growth.residual).toBe(0);
  });
});
