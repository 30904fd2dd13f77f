/**
 * The behaviour commands in-process: JSON contracts, the RFM chain read back by `project --matrix`,
 * and usage errors (exit 2, one line naming the flag) checked before any event is read.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { tempDir } from '../core/helpers.js';
import { expectRefusal, run } from '../hostile/harness.js';
import { randomEvents, rawCsv } from '../lifecycle/randomEvents.js';

let t: ReturnType<typeof tempDir>;
let events: string;
beforeAll(() => {
  t = tempDir();
  events = t.file('bookings.csv', rawCsv(randomEvents(61, 150, 14)));
});
afterAll(() => t.done());

describe('JSON outputs', () => {
  it('early', async () => {
    const r = await run('early', '--events', events, '--early', '2', '--horizon', '2', '--thresholds', '1,3', '--format', 'json', '--quiet');
    expect(r.code, r.err).toBe(0);
    const o = JSON.parse(r.out);
    expect(o.options).toEqual({ early: 2, horizon: 2, thresholds: [1, 3], q: 0.05 });
    expect(o.rows.length).toBeGreaterThan(0);
    expect(Object.keys(o.rows[0])).toEqual(['event', 'k', 'atLeast', 'below', 'coverage', 'lift', 'difference', 'p', 'youden', 'small', 'pAdjusted', 'significant']);
    expect(o.caution).toMatch(/experiment/);
    expect(o.newcomers + o.leftOut + o.before).toBeGreaterThan(0);
  });

  it('habits', async () => {
    const r = await run('habits', '--events', events, '--span', '6', '--format', 'json', '--quiet');
    expect(r.code, r.err).toBe(0);
    const o = JSON.parse(r.out);
    expect(o.options).toEqual({ span: 6, minActive: 5, lapseLimit: 2 });
    expect(o.longTenured.hours).toHaveLength(24);
    expect(o.droppedEarly.weekdays).toHaveLength(7);
  });

  it('grain', async () => {
    const r = await run('grain', '--events', events, '--format', 'json', '--quiet');
    expect(r.code, r.err).toBe(0);
    const o = JSON.parse(r.out);
    expect(['day', 'week', 'month']).toContain(o.suggestion.grain);
    expect(o.rule).toMatch(/80th percentile/);
  });

  it('rfm: the chain written by --matrix-out is projected by project --matrix', async () => {
    const m = `${t.dir}/segments.json`;
    const r = await run('rfm', '--events', events, '--window', '4', '--value-column', 'amount', '--matrix-out', m, '--format', 'json', '--quiet');
    expect(r.code, r.err).toBe(0);
    const o = JSON.parse(r.out);
    expect(o.model.states).toEqual(['steady', 'middle', 'light-recent', 'cooling-regular', 'fading', 'outside-window']);
    expect(o.periods.at(-1).ranges.value).toHaveLength(5);
    const p = await run('project', '--matrix', m, '--horizon', '3', '--format', 'json');
    expect(p.code, p.err).toBe(0);
    const proj = JSON.parse(p.out);
    expect(proj.states).toEqual(o.model.states);
    expect(proj.projection[0].counts).toEqual(o.model.start);
  });

  it('rfm --from scores the same periods as a run over the whole log (only the window before --from is read)', async () => {
    const all = JSON.parse((await run('rfm', '--events', events, '--window', '3', '--format', 'json', '--quiet')).out);
    const from = all.periods[6].period;
    const part = JSON.parse((await run('rfm', '--events', events, '--window', '3', '--from', from, '--format', 'json', '--quiet')).out);
    expect(part.periods).toEqual(all.periods.slice(6));
    expect(part.transitions).toEqual(all.transitions.slice(6));
  });

  it('csv and table formats', async () => {
    for (const cmd of ['early', 'habits', 'rfm', 'grain', 'inspect']) {
      for (const format of ['csv', 'table']) {
        const r = await run(cmd, '--events', events, '--format', format, '--quiet');
        expect(r.code, `${cmd} ${format}: ${r.err}`).toBe(0);
        expect(r.out.length).toBeGreaterThan(20);
      }
    }
  }, 60_000);
});

describe('usage errors name the flag (exit 2)', () => {
  it.each([
    [['early', '--early', '0'], '--early'],
    [['early', '--thresholds', '1,x'], '--thresholds'],
    [['early', '--horizon', '1e3'], '--horizon'],
    [['habits', '--span', '1'], '--span'],
    [['habits', '--span', '4', '--active', '5'], '--active'],
    [['rfm', '--window', '0'], '--window'],
    [['rfm', '--value-column', 'price'], '--value-column'],
    [['grain', '--warmup', '2'], '--warmup'],
    [['inspect', '--from', '2026-02-30'], '--from'],
  ])('%j', async (args, flag) => {
    const line = expectRefusal(await run(...(args as string[]), '--events', events), 2);
    expect(line).toContain(flag);
  });

  it('a span the lapse limit cannot go dormant in', async () => {
    const line = expectRefusal(await run('habits', '--events', events, '--span', '3'), 2);
    expect(line).toMatch(/--span: .*cannot show a user going dormant/);
  });

  it('a horizon past the data: exit 2, saying how many newcomers were left out', async () => {
    const line = expectRefusal(await run('early', '--events', events, '--horizon', '200'), 2);
    expect(line).toMatch(/--horizon: no newcomer is observed for 201 periods/);
  });
});
