/**
 * The chart rules, each against an independent computation written here: the weekly triangle of a
 * daily log (plain loops over the daily cells, weeks found with Date), the large-cohort rule, the
 * fitted colour scale, the flows' shortened resting group and the arrivals' own track, label dodging,
 * legends fitted to a frame, and the one comparison of the findings.
 */
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { runOnLog } from '../../src/engines/memory/index.js';
import type { CohortRow } from '../../src/flows/types.js';
import { readEvents } from '../../src/ingest/read.js';
import { buildReport } from '../../src/report/build.js';
import { shareDomain, triangleData } from '../../src/report/charts/cohortTriangle.js';
import { dodge, flowRibbons, shortenedStay } from '../../src/report/charts/flowRibbons.js';
import { fitToFrame, NARROW, WIDE } from '../../src/report/frame.js';
import { parseRules } from '../../src/rules/load.js';
import { seeded, tempDir } from './fixtures.js';

const DAY = 86_400_000;
const iso = (ms: number) => new Date(ms).toISOString().slice(0, 10);
/** The Monday on or before a date, by Date's own weekday. */
const mondayOf = (d: string) => {
  const ms = Date.parse(`${d}T00:00:00Z`);
  return iso(ms - ((new Date(ms).getUTCDay() + 6) % 7) * DAY);
};

describe('the cohort triangle of a daily log', () => {
  it('groups daily cohorts by week and ages by week: user-days active over user-days observed (seeded, against plain loops)', () => {
    const rnd = seeded(14);
    const start = Date.UTC(2026, 11, 16); // a Wednesday, so the first week is partial
    const rows: CohortRow[] = Array.from({ length: 40 }, (_, c) => {
      const size = 1 + Math.floor(rnd() * 30);
      const ages = 40 - c; // observed to the end of the data
      return { cohort: iso(start + c * DAY), size, active: Array.from({ length: ages }, (_, a) => (a === 0 ? size : Math.floor(rnd() * (size + 1)))) };
    });
    const t = triangleData(rows, 'day', 'monday');
    expect(t.weekly).toBe(true);
    const want = new Map<string, { active: number; n: number }>();
    const sizes = new Map<string, number>();
    for (const r of rows) {
      const w = mondayOf(r.cohort);
      sizes.set(w, (sizes.get(w) ?? 0) + r.size);
      for (let a = 1; a < r.active.length; a++) {
        const key = `${w}|${Math.floor((a - 1) / 7) + 1}`;
        const cell = want.get(key) ?? { active: 0, n: 0 };
        cell.active += r.active[a];
        cell.n += r.size;
        want.set(key, cell);
      }
    }
    expect(t.cohorts.map((c) => [c.cohort, c.size])).toEqual([...sizes]);
    expect(t.cells).toHaveLength(want.size);
    for (const c of t.cells) {
      const w = want.get(`${c.cohort}|${c.age}`)!;
      expect([c.active, c.n]).toEqual([w.active, w.n]);
      expect(c.share).toBeCloseTo(w.active / w.n, 12);
    }
  });

  it('marks a cohort above twice the median size of those shown, with four cohorts or more', () => {
    const rows = (sizes: number[]) => sizes.map((size, i) => ({ cohort: iso(Date.UTC(2026, 0, 5) + i * 7 * DAY), size, active: [size, 1] }));
    const marked = (sizes: number[]) => triangleData(rows(sizes), 'week', 'monday').cohorts.filter((c) => c.large).map((c) => c.size);
    expect(marked([10, 10, 10, 10, 50])).toEqual([50]); // median 10
    expect(marked([10, 10, 21, 10])).toEqual([21]); // median 10: 21 > 20
    expect(marked([10, 10, 20, 10])).toEqual([]); // not more than twice
    expect(marked([10, 10, 50])).toEqual([]); // three cohorts: no rule
  });

  it('stretches its colour scale over the shares of cells that are not small, in 5% steps', () => {
    const cell = (share: number, n = 100) => ({ cohort: 'c', age: 1, n, active: share * n, share });
    expect(shareDomain([cell(0.12), cell(0.43), cell(0.9, 3)], 30)).toEqual([0.1, 0.45]);
    expect(shareDomain([cell(0.5), cell(0.52)], 30)).toEqual([0.45, 0.6]);
    expect(shareDomain([], 30)).toEqual([0, 1]);
  });
});

describe('the flows chart', () => {
  it('draws the largest resting group at half of all else when it would take more than a third of the height', () => {
    expect(shortenedStay(100, 50)).toBe(25);
    expect(25 / (25 + 50)).toBeCloseTo(1 / 3, 12);
    expect(shortenedStay(20, 50)).toBe(20);
  });

  it('keeps true counts in its table, shortens the resting ribbon, and gives arrivals a track no other ribbon crosses', () => {
    const states = ['a', 'b', 'c'];
    const counts = [[30, 20, 5], [10, 40, 10], [2, 8, 900]];
    const chart = flowRibbons({ states, from: 'p0', to: 'p1', counts, fresh: 25, arrival: 'a', colours: ['#000001', '#000002', '#000003'] });
    expect(chart.table.rows).toContainEqual(['p0', 'p1', 'c', 'c', 900]);
    expect(chart.table.rows).toContainEqual(['p0', 'p1', 'arriving', 'a', 25]);
    const ribbons = ((chart.spec as unknown as { layer: { data: { values: { link: string; x: number; y: number; y2: number }[] } }[] }).layer[0].data.values);
    const all = 30 + 20 + 5 + 10 + 40 + 10 + 2 + 8 + 900 + 25;
    const stay = ribbons.find((r) => r.link === 'c>c')!;
    expect(stay.y2 - stay.y).toBeCloseTo((all - 900) / 2, 9);
    const arrivals = ribbons.filter((r) => r.link === 'arriving>a');
    expect(arrivals[0].x).toBeGreaterThan(0);
    for (const p of arrivals) {
      for (const q of ribbons.filter((r) => r.link !== 'arriving>a' && Math.abs(r.x - p.x) < 1e-9)) expect(q.y >= p.y2 - 1e-9 || q.y2 <= p.y + 1e-9, `${q.link} at x=${p.x}`).toBe(true);
    }
  });

  it('moves labels apart to at least their height, inside the chart', () => {
    const out = dodge([{ mid: 10 }, { mid: 11 }, { mid: 12 }, { mid: 95 }], 5, 100);
    for (let k = 1; k < out.length; k++) expect(out[k].mid - out[k - 1].mid).toBeGreaterThanOrEqual(5 - 1e-9);
    expect(out[out.length - 1].mid).toBeLessThanOrEqual(97.5);
  });
});

describe('fitting a spec to a frame', () => {
  const spec = {
    title: { text: 'T', subtitle: 'S' },
    width: 560,
    layer: [{ mark: 'line', encoding: { color: { field: 'method', type: 'nominal', legend: { labelLimit: 320 } } } }, { mark: 'rule', encoding: { color: { value: '#555' } } }],
  };
  it('takes the title out, fits the width and gives a narrow frame one legend column with labels that fit', () => {
    const { spec: s, heading } = fitToFrame(spec as never, NARROW);
    expect(heading).toEqual({ title: 'T', subtitle: 'S' });
    const j = s as unknown as { title?: unknown; width: number; autosize: unknown; layer: { encoding: { color: { legend?: { columns: number; labelLimit: number } } } }[] };
    expect(j.title).toBeUndefined();
    expect(j.width).toBe(NARROW.width);
    expect(j.autosize).toEqual({ type: 'fit-x', contains: 'padding' });
    expect(j.layer[0].encoding.color.legend).toEqual({ labelLimit: NARROW.width - 40, columns: 1 });
    expect(j.layer[1].encoding.color.legend).toBeUndefined();
    const wide = fitToFrame(spec as never, WIDE).spec as unknown as typeof j;
    expect(wide.layer[0].encoding.color.legend!.columns).toBe(4);
  });
});

describe('the one comparison of the findings', () => {
  async function model(o: { base?: string; compare?: string } = {}) {
    const rows = ['user_id,timestamp,event'];
    for (let m = 0; m < 40; m++) for (let w = 0; w < 5; w++) if (w === 0 || (m + w) % 3 !== 0) rows.push(`u${m},${iso(Date.UTC(2026, 2, 2) + w * 7 * DAY)}T10:00:00Z,opened`);
    const f = join(tempDir(), 'e.csv');
    writeFileSync(f, rows.join('\n'));
    const rules = parseRules('grain: week\nlapseLimit: 1\n');
    const { waist } = await runOnLog(await readEvents([f], { rules }), rules);
    return buildReport(waist, o);
  }

  it('defaults to the latest period against the one before, and every dated finding names it', async () => {
    const m = await model();
    expect(m.comparison).toEqual({ base: '2026-03-23', compare: '2026-03-30', chosen: false });
    for (const l of m.story.filter((x) => x.kind !== 'next')) expect(l.periods).toBe('2026-03-23 → 2026-03-30');
    for (const f of m.findings.filter((x) => x.kind !== 'projection')) expect(f.text).toContain('2026-03-23 → 2026-03-30');
  });

  it('a compare alone is set against the period before it; base and compare as given', async () => {
    expect((await model({ compare: '2026-03-23' })).comparison).toEqual({ base: '2026-03-16', compare: '2026-03-23', chosen: true });
    const m = await model({ base: '2026-03-09', compare: '2026-03-30' });
    expect(m.comparison).toEqual({ base: '2026-03-09', compare: '2026-03-30', chosen: true });
    expect(m.story[0].text).toMatch(/^active users/);
    expect(m.story.length).toBeLessThanOrEqual(5);
  });
});
