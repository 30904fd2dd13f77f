/**
 * The contributor guide's recipe "How to add or split a state" (DEVELOPERS.md), followed: a rules file
 * splits `engaged` into two sub-states by key events in the week, and the split states flow through
 * flows, retention, explain, projection, cohorts, survival, the waist and the report with no other
 * code change. Invented data (the makerspace booking app), seeded.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mulberry32 } from '../../src/numerics/random.js';
import { corpusDir, run } from '../hostile/harness.js';

const dir = corpusDir();
afterAll(() => dir.done());

// step 1 of the recipe: the rules say how the state splits, and name the sub-states and their labels
const RULES = `name: weekly-split
version: 1
grain: week
lapseLimit: 2
minCell: 5
splits:
  - state: engaged
    atLeast: 3
    names: [steady, keen]
    labels: [steady regulars, keen regulars]
`;

let events: string, rules: string;
beforeAll(() => {
  const rng = mulberry32(11);
  const start = Date.UTC(2026, 0, 5);
  const rows = ['user_id,timestamp,event'];
  for (let m = 0; m < 120; m++) {
    const heavy = m % 3 === 0;
    for (let w = Math.floor(rng() * 6); w < 16; w++) {
      if (rng() < 0.25) continue;
      const n = heavy ? 3 + Math.floor(rng() * 3) : 1 + Math.floor(rng() * 2);
      for (let k = 0; k < n; k++) rows.push(`m${m},${new Date(start + w * 604_800_000 + Math.floor(rng() * 6.9 * 86_400_000)).toISOString()},booking`);
    }
  }
  events = dir.file('split.csv', `${rows.join('\n')}\n`);
  rules = dir.file('split.yaml', RULES);
});

describe('a split state, through every command', () => {
  it('rules check accepts it', async () => {
    const r = await run('rules', 'check', rules);
    expect(r.code, r.err).toBe(0);
  });

  it('flows, retention and cohorts count the sub-states', async () => {
    const f = JSON.parse((await run('flows', '--events', events, '--rules', rules, '--format', 'json')).out);
    expect(f.states).toEqual(['fresh', 'steady', 'keen', 'returned', 'lapsing', 'dormant']);
    expect(f.activeStates).toEqual(['fresh', 'steady', 'keen', 'returned']);
    const last = f.transitions[f.transitions.length - 1];
    expect(last.retention.keen.n).toBeGreaterThan(0);
    expect(last.retention.steady.n).toBeGreaterThan(0);
    const ret = JSON.parse((await run('retention', '--events', events, '--rules', rules, '--format', 'json')).out);
    expect(new Set(ret.rows.map((r: { state: string }) => r.state))).toEqual(new Set(['fresh', 'steady', 'keen', 'returned']));
    expect((await run('cohorts', '--events', events, '--rules', rules, '--format', 'json')).code).toBe(0);
  });

  it('explain names the sub-states by their labels', async () => {
    const e = JSON.parse((await run('explain', '--events', events, '--rules', rules, '--format', 'json')).out);
    const states = e.byState.map((g: { state: string }) => g.state);
    expect(states).toContain('keen');
    expect(states).toContain('steady');
    expect(e.sentence).toMatch(/regulars/);
  });

  it('project fits a chain over the six states, and what-ifs know the split moves', async () => {
    const p = await run('project', '--events', events, '--rules', rules, '--what-if', 'keen->lapsing*0.5', '--until', 'dormant', '--samples', '50', '--format', 'json');
    expect(p.code, p.err).toBe(0);
    expect(JSON.parse(p.out).states).toEqual(['fresh', 'steady', 'keen', 'returned', 'lapsing', 'dormant']);
    // a lapsing user who is active becomes returned: lapsing -> keen cannot happen
    const bad = await run('project', '--events', events, '--rules', rules, '--what-if', 'lapsing->keen*1.2');
    expect(bad.code).toBe(2);
    expect(bad.err).toMatch(/lapsing->keen cannot happen: a lapsing user who is active the next period becomes returned/);
  });

  it('survival and the waist carry the sub-states, with their roles, labels and colours', async () => {
    expect((await run('survival', '--events', events, '--rules', rules, '--format', 'json')).code).toBe(0);
    const out = join(dir.dir, 'split-waist');
    expect((await run('waist', '--events', events, '--rules', rules, '--out', out)).code).toBe(0);
    const m = JSON.parse(readFileSync(join(out, 'manifest.json'), 'utf8'));
    const keen = m.states.find((s: { name: string }) => s.name === 'keen');
    expect(keen).toMatchObject({ active: true, role: 'continuing', label: 'keen regulars' });
    expect(keen.definition).toMatch(/3 or more key events/);
    const a = await run('flows', '--waist', out, '--format', 'json');
    const b = await run('flows', '--events', events, '--rules', rules, '--format', 'json');
    expect(a.out).toBe(b.out);
  });

  it('the report draws them, with a colour each and their definitions', async () => {
    const out = join(dir.dir, 'split-report');
    const r = await run('report', '--events', events, '--rules', rules, '--out', out);
    expect(r.code, r.err).toBe(0);
    const html = readFileSync(join(out, 'index.html'), 'utf8');
    expect(html).toMatch(/keen: active this week and the week before, with 3 or more key events in it/);
    expect(html).toMatch(/<li class="block" style="--c:#[0-9A-F]{6}">keen<\/li>/);
  }, 60_000);
});
