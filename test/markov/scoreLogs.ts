/**
 * Scores the projection bands' backtest on member-level logs (`memberLogs.ts`): `npx tsx
 * test/markov/scoreLogs.ts SET` where SET names a list of specs below. For each log: the waist tables
 * from the memory engine with the weekly rules, then the backtest as `project` runs it (window 8,
 * horizons 1–8, 100 futures per origin, seed 1, season 52), and the (log, horizon) cells whose 80% and
 * 50% bands held 70–90% and 40–60%: for the model's bands and for the recalibrated ones.
 */
import { mkdirSync, readFileSync, writeFileSync, existsSync } from 'node:fs';
import { join } from 'node:path';
import { tmpdir } from 'node:os';
import { runOnLog } from '../../src/engines/memory/index.js';
import { readEvents } from '../../src/ingest/read.js';
import { backtest } from '../../src/markov/backtest.js';
import { parseRules } from '../../src/rules/load.js';
import type { WaistTables } from '../../src/flows/types.js';
import { simulateMakerspace } from '../../src/demo/makerspace.js';
import { memberLogCsv, type MemberLogSpec } from './memberLogs.js';

/** Logs looked at while designing. */
export const DEVELOPMENT: Record<string, MemberLogSpec> = {
  shocks: { weeks: 50, arrivals: 400, seed: 101, shock: 0.25, arrivalShock: 0.2 },
  decline: { weeks: 55, arrivals: 500, seed: 102, decline: -0.02, arrivalTrend: -0.008 },
  cycle: { weeks: 60, arrivals: 350, seed: 103, cycle: { period: 11, amp: 0.35 } },
  drift: { weeks: 55, arrivals: 450, seed: 104, drift: 0.08, spikes: { 30: 6 } },
  quiet: { weeks: 45, arrivals: 90, seed: 105, spread: 1.6 },
  growth: { weeks: 50, arrivals: 200, seed: 106, growth: 0.04, shock: 0.12 },
};

/** More development logs: other seeds and strengths of the same shapes, and combinations. */
export const DEVELOPMENT_2: Record<string, MemberLogSpec> = {
  shocks2: { weeks: 45, arrivals: 700, seed: 201, shock: 0.4, spread: 1.1 },
  decline2: { weeks: 60, arrivals: 300, seed: 202, decline: -0.012, shock: 0.08 },
  cycle2: { weeks: 50, arrivals: 500, seed: 203, cycle: { period: 8, amp: 0.25 }, arrivalShock: 0.15 },
  drift2: { weeks: 65, arrivals: 250, seed: 204, drift: 0.12, arrivalShock: 0.1 },
  quiet2: { weeks: 55, arrivals: 60, seed: 205, spread: 2, spikes: { 20: 5, 41: 4 } },
  growth2: { weeks: 45, arrivals: 150, seed: 206, growth: 0.06, decline: 0.008 },
};

/**
 * Logs generated after the design was committed (270f134), with seeds and settings not used while
 * designing, scored once: a step change of activity (a planted break) and other members' base rates
 * (loyal, churny) are shapes the development logs did not have.
 */
export const UNSEEN: Record<string, MemberLogSpec> = {
  surge: { weeks: 48, arrivals: 600, seed: 9001, spikes: { 12: 8, 33: 4 }, shock: 0.1 },
  slide: { weeks: 62, arrivals: 420, seed: 9002, decline: -0.025, arrivalTrend: -0.01 },
  cycle6: { weeks: 52, arrivals: 380, seed: 9003, cycle: { period: 6, amp: 0.3 }, spread: 1.2 },
  wander: { weeks: 58, arrivals: 520, seed: 9004, drift: 0.1, growth: 0.015 },
  tiny: { weeks: 42, arrivals: 45, seed: 9005, spread: 1.8, shock: 0.1 },
  boom: { weeks: 46, arrivals: 120, seed: 9006, growth: 0.08, shock: 0.15, arrivalShock: 0.25 },
  stepdown: { weeks: 56, arrivals: 350, seed: 9007, step: { week: 30, by: -0.5 }, shock: 0.1 },
  loyal: { weeks: 55, arrivals: 300, seed: 9008, shock: 0.15, base: { newcomer: 0.5, active: 2.2, idle: -2.2, idleDecay: 0.2 } },
  churny: { weeks: 50, arrivals: 800, seed: 9009, cycle: { period: 17, amp: 0.2 }, drift: 0.05, base: { newcomer: -1.2, active: 0.6, idle: -1, idleDecay: 0.5 } },
};

/**
 * A second set of logs not seen while designing, generated after the design was committed and the
 * first unseen set scored (new seeds and settings; a dip of activity for eight weeks and a decline that
 * turns into a recovery are shapes no earlier log had), scored once.
 */
export const UNSEEN_2: Record<string, MemberLogSpec> = {
  dip: { weeks: 54, arrivals: 400, seed: 9101, dip: { from: 25, to: 33, by: -0.6 }, shock: 0.1 },
  recovery: { weeks: 60, arrivals: 350, seed: 9102, decline: -0.02, turn: { week: 30, slope: 0.02 } },
  cycle10: { weeks: 56, arrivals: 450, seed: 9103, cycle: { period: 10, amp: 0.4 }, arrivalShock: 0.2 },
  decline3: { weeks: 70, arrivals: 380, seed: 9104, decline: -0.018, spread: 1.4 },
  spiky: { weeks: 50, arrivals: 300, seed: 9105, spikes: { 14: 5, 27: 10, 40: 3 } },
  small2: { weeks: 60, arrivals: 30, seed: 9106, spread: 1.2 },
  big: { weeks: 40, arrivals: 1500, seed: 9107, shock: 0.2 },
  drift3: { weeks: 64, arrivals: 260, seed: 9108, drift: 0.15 },
  growfade: { weeks: 52, arrivals: 180, seed: 9109, growth: 0.05, decline: -0.01 },
  longcycle: { weeks: 66, arrivals: 250, seed: 9110, cycle: { period: 26, amp: 0.3 }, base: { newcomer: 0.5, active: 2.2, idle: -2.2, idleDecay: 0.2 } },
};

/**
 * A third set of logs not seen while designing, written after the fourth pass's design was committed
 * (a6a3195) and before anything was scored on them; scored once with that design and once with main's
 * method. New seeds and new mixes: a steep steady decline and a steep steady rise of activity, four
 * spikes of newcomers with shocks, a 9-week cycle over a decline, churning members with drift, loyal
 * members with an upward step at week 28 (a planted break), a tiny declining log, a large log with big
 * shocks of activity and arrivals, an eight-week dip followed by a spike (a planted break), and growth
 * whose activity turns from rising to falling.
 */
export const UNSEEN_3: Record<string, MemberLogSpec> = {
  plunge: { weeks: 58, arrivals: 300, seed: 9201, decline: -0.03, shock: 0.05 },
  climb: { weeks: 56, arrivals: 400, seed: 9202, decline: 0.025, arrivalTrend: -0.005 },
  spikes4: { weeks: 52, arrivals: 350, seed: 9203, spikes: { 10: 6, 22: 12, 35: 4, 44: 7 }, shock: 0.08 },
  cyclefade: { weeks: 60, arrivals: 300, seed: 9204, cycle: { period: 9, amp: 0.3 }, decline: -0.01 },
  churndrift: { weeks: 54, arrivals: 600, seed: 9205, drift: 0.1, base: { newcomer: -1.2, active: 0.6, idle: -1, idleDecay: 0.5 } },
  loyalstep: { weeks: 56, arrivals: 250, seed: 9206, step: { week: 28, by: 0.4 }, shock: 0.08, base: { newcomer: 0.5, active: 2.2, idle: -2.2, idleDecay: 0.2 } },
  tinyfall: { weeks: 60, arrivals: 40, seed: 9207, spread: 1.5, decline: -0.015 },
  hugeshock: { weeks: 44, arrivals: 1200, seed: 9208, shock: 0.3, arrivalShock: 0.3 },
  dipspike: { weeks: 58, arrivals: 320, seed: 9209, dip: { from: 20, to: 28, by: -0.5 }, spikes: { 38: 6 } },
  growturn: { weeks: 62, arrivals: 200, seed: 9210, growth: 0.05, decline: 0.01, turn: { week: 25, slope: -0.02 } },
};

/**
 * A fourth set of logs not seen while designing, written after the fifth pass's design (horizon-pooled
 * recalibration) was committed (78b6595) and before anything was scored on them; scored once with that
 * design and once with main's method. New seeds and new mixes: a steep rise of activity with growing
 * arrivals, a steeper decline than any before, four newcomer spikes (one 15×) over drift, big shared
 * shocks on a large log, a 13-week cycle with growth, a short 4-week cycle, a small drifting log (35
 * newcomers a week), loyal members in decline, churning members with a spike, an upward step at week 35
 * over a 20-week cycle (a planted break), a six-week deep dip with shocks (a planted break), and a
 * decline that turns into a rise with falling arrivals. Scored (`unseen4`): main's method (each horizon
 * alone) 96 / 96 of 96 cells in range (80% / 50% band); the pooled design (`TM_HW=1,0.25`) 96 / 95, so it
 * was not adopted.
 */
export const UNSEEN_4: Record<string, MemberLogSpec> = {
  steeprise: { weeks: 60, arrivals: 350, seed: 9301, decline: 0.03, shock: 0.05, arrivalTrend: 0.005 },
  steepfall: { weeks: 54, arrivals: 500, seed: 9302, decline: -0.035, arrivalShock: 0.1 },
  spiky3: { weeks: 56, arrivals: 280, seed: 9303, spikes: { 9: 8, 18: 3, 31: 15, 47: 5 }, drift: 0.05 },
  shock35: { weeks: 50, arrivals: 900, seed: 9304, shock: 0.35, spread: 1.3 },
  cycle13: { weeks: 64, arrivals: 420, seed: 9305, cycle: { period: 13, amp: 0.35 }, growth: 0.01 },
  cycle4: { weeks: 52, arrivals: 320, seed: 9306, cycle: { period: 4, amp: 0.25 }, shock: 0.05 },
  small3: { weeks: 58, arrivals: 35, seed: 9307, spread: 1, drift: 0.05 },
  loyalfall: { weeks: 60, arrivals: 220, seed: 9308, decline: -0.015, base: { newcomer: 0.5, active: 2.2, idle: -2.2, idleDecay: 0.2 } },
  churnspike: { weeks: 48, arrivals: 650, seed: 9309, spikes: { 20: 6 }, arrivalShock: 0.2, base: { newcomer: -1.2, active: 0.6, idle: -1, idleDecay: 0.5 } },
  stepup: { weeks: 62, arrivals: 300, seed: 9310, step: { week: 35, by: 0.5 }, cycle: { period: 20, amp: 0.2 } },
  dipshock: { weeks: 56, arrivals: 450, seed: 9311, dip: { from: 30, to: 36, by: -0.7 }, shock: 0.15 },
  turnup: { weeks: 66, arrivals: 260, seed: 9312, decline: -0.02, turn: { week: 33, slope: 0.015 }, arrivalTrend: -0.004 },
};

const SETS: Record<string, Record<string, MemberLogSpec | 'demo'>> = { demo: { demo: 'demo' }, dev: DEVELOPMENT, dev2: DEVELOPMENT_2, unseen: UNSEEN, unseen2: UNSEEN_2, unseen3: UNSEEN_3, unseen4: UNSEEN_4, devall: { ...DEVELOPMENT, ...DEVELOPMENT_2 } };

export async function tablesOf(name: string, spec: MemberLogSpec | 'demo'): Promise<WaistTables> {
  const dir = join(tmpdir(), 'tidemark-calib');
  mkdirSync(dir, { recursive: true });
  const cache = join(dir, spec === 'demo' ? 'demo.json' : `${name}-${spec.seed}.json`);
  if (existsSync(cache)) return JSON.parse(readFileSync(cache, 'utf8')) as WaistTables;
  const f = join(dir, spec === 'demo' ? 'demo.csv' : `${name}-${spec.seed}.csv`);
  if (spec === 'demo') {
    const lines = ['user_id,timestamp,event'];
    simulateMakerspace(undefined, (e) => lines.push(`${e.user_id},${e.timestamp},${e.event}`));
    writeFileSync(f, lines.join('\n') + '\n');
  } else writeFileSync(f, memberLogCsv(spec));
  const rules = parseRules(readFileSync(new URL('../../rules/weekly.yaml', import.meta.url), 'utf8'));
  const { waist } = await runOnLog(await readEvents([f], { rules }), rules);
  writeFileSync(cache, JSON.stringify(waist.tables));
  return waist.tables;
}

const pct = (x: number) => Math.round(x * 100);

async function main(): Promise<void> {
  const set = SETS[process.argv[2] ?? 'dev'];
  if (!set) throw new Error(`unknown set ${process.argv[2]}`);
  const tot = { model: [0, 0], cal: [0, 0], cells: 0, lower: [0, 0], ratio: [0, 0] };
  const missed: string[] = [];
  const proj = { f: 0, fm: 0, s: 0, sn: 0 };
  const rough = { steps: [0, 0, 0, 0], shrink: [0, 0, 0, 0], d2: [0, 0, 0, 0], w: [0, 0, 0, 0] };
  // the horizon weights of the recalibration (`horizonWeights`), e.g. TM_HW=1 for each horizon alone
  const weights = process.env.TM_HW ? process.env.TM_HW.split(',').map(Number) : undefined;
  for (const [name, spec] of Object.entries(set)) {
    const t = await tablesOf(name, spec);
    const bt = backtest(t, { horizon: 8, window: 8, minFit: 4, samples: 100, seed: 1, season: 52, detail: true, ...(weights ? { horizonWeights: weights } : {}) });
    // how ragged the bands are in the horizon: per origin and state, the steps h → h + 1 where a band's
    // width shrinks, and the mean |second difference| of the widths over their mean (model and scored)
    const byKey = new Map<string, number[][]>();
    for (const c of bt.cells ?? []) {
      const k = `${c.origin}:${c.state}`;
      if (!byKey.has(k)) byKey.set(k, []);
      byKey.get(k)![c.horizon - 1] = [c.model[3] - c.model[2], c.model[1] - c.model[0], c.band[3] - c.band[2], c.band[1] - c.band[0]];
    }
    for (const seq of byKey.values()) {
      for (let i = 1; i < seq.length; i++) for (let j = 0; j < 4; j++) {
        rough.steps[j]++;
        if (seq[i][j] < seq[i - 1][j] - 1e-12) rough.shrink[j]++;
        if (i + 1 < seq.length) {
          rough.d2[j] += Math.abs(seq[i + 1][j] - 2 * seq[i][j] + seq[i - 1][j]);
          rough.w[j] += seq[i][j];
        }
      }
    }
    const inR = (x: number, lo: number, hi: number) => (x >= lo - 1e-9 && x <= hi + 1e-9 ? 1 : 0);
    for (const r of bt.rows) {
      tot.cells++;
      tot.model[0] += inR(r.modelCoverage, 0.7, 0.9);
      tot.model[1] += inR(r.modelInnerCoverage, 0.4, 0.6);
      tot.cal[0] += inR(r.coverage, 0.7, 0.9);
      tot.cal[1] += inR(r.innerCoverage, 0.4, 0.6);
      tot.lower[0] += r.intervalScore.model.outer < r.modelIntervalScore.outer ? 1 : 0;
      tot.lower[1] += r.intervalScore.model.inner < r.modelIntervalScore.inner ? 1 : 0;
      tot.ratio[0] += r.intervalScore.model.outer / r.modelIntervalScore.outer;
      tot.ratio[1] += r.intervalScore.model.inner / r.modelIntervalScore.inner;
    }
    // how ragged the projection's recalibration is in the horizon: the mean |second difference| over
    // horizons of the four side factors (over their mean) and of the states' centre corrections
    const hz = bt.recalibration?.horizons ?? [];
    for (let i = 1; i + 1 < hz.length; i++) {
      const [a, b, c] = [hz[i - 1], hz[i], hz[i + 1]];
      if (a.outer && b.outer && c.outer && a.inner && b.inner && c.inner) {
        for (const k of [0, 1] as const) {
          proj.f += Math.abs(a.outer[k] - 2 * b.outer[k] + c.outer[k]) + Math.abs(a.inner[k] - 2 * b.inner[k] + c.inner[k]);
          proj.fm += b.outer[k] + b.inner[k];
        }
      }
      if (a.shift && b.shift && c.shift) b.shift.forEach((v, s) => ((proj.s += Math.abs(a.shift![s] - 2 * v + c.shift![s])), proj.sn++));
    }
    const out = bt.rows.flatMap((r) => [...(inR(r.coverage, 0.7, 0.9) ? [] : [`80% +${r.horizon} ${(r.coverage * 100).toFixed(1)}%`]), ...(inR(r.innerCoverage, 0.4, 0.6) ? [] : [`50% +${r.horizon} ${(r.innerCoverage * 100).toFixed(1)}%`])]);
    if (out.length) missed.push(`${name}: ${out.join(', ')}`);
    const line = (f: (r: (typeof bt.rows)[number]) => number) => bt.rows.map((r) => String(pct(f(r))).padStart(3)).join(' ');
    console.log(`${name.padEnd(8)} periods ${t.periods.length}`);
    console.log(`  model 80 ${line((r) => r.modelCoverage)} | 50 ${line((r) => r.modelInnerCoverage)} | IS80 ${bt.rows.map((r) => r.modelIntervalScore.outer.toFixed(3)).join(' ')}`);
    console.log(`  calib 80 ${line((r) => r.coverage)} | 50 ${line((r) => r.innerCoverage)} | IS80 ${bt.rows.map((r) => r.intervalScore.model.outer.toFixed(3)).join(' ')}`);
    console.log(`  IS50 model ${bt.rows.map((r) => r.modelIntervalScore.inner.toFixed(3)).join(' ')} | calib ${bt.rows.map((r) => r.intervalScore.model.inner.toFixed(3)).join(' ')}`);
  }
  console.log(`cells in range of ${tot.cells}: model 80% ${tot.model[0]}, 50% ${tot.model[1]}; recalibrated 80% ${tot.cal[0]}, 50% ${tot.cal[1]}`);
  if (missed.length) console.log(`recalibrated bands out of range: ${missed.join('; ')}`);
  const r = (j: number) => `shrinks ${pct(rough.shrink[j] / rough.steps[j])}%, roughness ${(rough.d2[j] / rough.w[j]).toFixed(3)}`;
  console.log(`band widths over the horizon (per origin and state): model 80% ${r(0)}; 50% ${r(1)} | recalibrated 80% ${r(2)}; 50% ${r(3)}`);
  console.log(`the projection's recalibration over the horizon: factors' mean |2nd difference| / mean ${(proj.f / proj.fm).toFixed(3)}; centre corrections' mean |2nd difference| ${(proj.s / proj.sn).toFixed(3)} half-widths`);
  console.log(`interval score recalibrated / model, mean over cells: 80% band ${(tot.ratio[0] / tot.cells).toFixed(3)} (lower in ${tot.lower[0]} cells), 50% band ${(tot.ratio[1] / tot.cells).toFixed(3)} (lower in ${tot.lower[1]})`);
}

if (process.argv[1]?.endsWith('scoreLogs.ts')) void main();
