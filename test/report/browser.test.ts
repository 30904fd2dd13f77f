/// <reference lib="dom" />
/**
 * The report in a real browser: Debian's chromium driven by playwright-core (never a downloaded
 * browser). In CI (CI=true) a missing browser fails the test; elsewhere it is skipped with a notice.
 *
 * Two reports — the demo, and one on a daily log invented here that crosses a new year (fixtures.ts,
 * `inventedLog`) — each at 1280 px (a laptop) and 390 px (a phone). Every assertion reads the page's
 * own geometry (bounding boxes), never pixels: the page does not scroll sideways; every chart and
 * every label inside it lies within the viewport; a chart that scrolls sideways opens with its latest
 * period in view; colour keys are not cut off. Full-page screenshots go to test/artifacts/ for a
 * person to look at.
 */
import { existsSync, mkdirSync, mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { chromium, type BrowserContext } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { demoEvents, inventedLog, runCli, tempDir } from './fixtures.js';

const CANDIDATES = ['/usr/bin/chromium', '/usr/lib/chromium/chromium', '/usr/bin/chromium-browser'];
const executable = CANDIDATES.find((p) => existsSync(p));
const inCi = process.env.CI === 'true';
const ARTIFACTS = resolve('test/artifacts');
const ARGS = ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'];

if (!executable && !inCi) {
  console.warn('browser test skipped: no chromium found (install Debian\'s chromium to run it; in CI it is required)');
}

/** "23 Nov": how a period's start date is labelled on a time axis, written with Intl's month names (an independent formatter). */
const dayLabel = (period: string) => `${new Date(`${period}T00:00:00Z`).getUTCDate()} ${new Date(`${period}T00:00:00Z`).toLocaleDateString('en-US', { month: 'short', timeZone: 'UTC' })}`;

interface ChartGeometry {
  id: string;
  latest: string | null;
  scroll: boolean;
  box: { left: number; right: number; width: number };
  svg: { left: number; right: number; top: number; bottom: number; width: number; height: number };
  /** Text inside the SVG that pokes out of it (px beyond each side), with the text. */
  outside: { text: string; by: number }[];
  /** The rightmost label of the x axis, when the chart has one. */
  lastXLabel: { text: string; left: number; right: number } | null;
}

describe.runIf(executable || inCi)('the report in chromium', () => {
  let ctx: BrowserContext;
  const urls: Record<string, string> = {};
  const latest: Record<string, string> = {};

  beforeAll(async () => {
    if (!executable) throw new Error(`CI=true but no chromium at ${CANDIDATES.join(', ')}: .ci/run must install it (apt-get install -y chromium)`);
    const work = tempDir('tidemark-browser-');
    const demo = demoEvents(work);
    const r1 = await runCli(['report', '--events', demo.file, '--out', join(work, 'demo'), '--base', '2026-08-10', '--compare', '2026-09-14', '--by', 'channel', '--quiet']);
    expect(r1.code, r1.err).toBe(0);
    urls.demo = pathToFileURL(join(work, 'demo', 'index.html')).href;
    latest.demo = '2026-11-23';
    const inv = inventedLog(work);
    const r2 = await runCli(['report', '--events', inv.file, '--rules', resolve('rules/daily.yaml'), '--out', join(work, 'invented'), '--by', 'region', '--quiet']);
    expect(r2.code, r2.err).toBe(0);
    urls.invented = pathToFileURL(join(work, 'invented', 'index.html')).href;
    latest.invented = inv.last;
    mkdirSync(ARTIFACTS, { recursive: true });
    ctx = await chromium.launchPersistentContext(mkdtempSync(join(tmpdir(), 'tidemark-chromium-')), { executablePath: executable, args: ARGS, viewport: { width: 1280, height: 900 } });
  }, 180_000);

  afterAll(async () => {
    await ctx?.close();
  });

  async function open(report: string, width: number) {
    const page = await ctx.newPage();
    await page.setViewportSize({ width, height: 900 });
    const errors: string[] = [];
    page.on('console', (m) => {
      if (m.type() === 'error') errors.push(m.text());
    });
    page.on('pageerror', (e) => errors.push(String(e)));
    page.on('request', (req) => {
      if (!req.url().startsWith('file:')) errors.push(`network request: ${req.url()}`);
    });
    await page.goto(urls[report], { waitUntil: 'load' });
    return { page, errors };
  }

  /** The geometry of every chart as drawn (the frame the window shows). */
  async function charts(page: import('playwright-core').Page): Promise<ChartGeometry[]> {
    return page.$$eval('figure.chart', (figs) => figs.map((fig) => {
      const frame = [...fig.querySelectorAll('.frame')].find((f) => getComputedStyle(f).display !== 'none')!;
      const svg = frame.querySelector('svg.marks')!;
      const b = frame.getBoundingClientRect();
      const s = svg.getBoundingClientRect();
      const outside = [...svg.querySelectorAll('text')].flatMap((t) => {
        const r = t.getBoundingClientRect();
        if (r.width === 0 || !t.textContent?.trim()) return [];
        const by = Math.max(s.left - r.left, r.right - s.right, s.top - r.top, r.bottom - s.bottom);
        return by > 1 ? [{ text: t.textContent, by }] : [];
      });
      const xAxis = [...svg.querySelectorAll('g[aria-roledescription="axis"]')].find((g) => (g.getAttribute('aria-label') ?? '').startsWith('X-axis'));
      const labels = xAxis ? [...xAxis.querySelectorAll('.role-axis-label text')].map((t) => ({ t, r: t.getBoundingClientRect() })).filter((x) => x.r.width > 0) : [];
      const last = labels.sort((a, c) => c.r.right - a.r.right)[0];
      return {
        id: fig.id,
        latest: fig.getAttribute('data-latest'),
        scroll: frame.classList.contains('scroll'),
        box: { left: b.left, right: b.right, width: b.width },
        svg: { left: s.left, right: s.right, top: s.top, bottom: s.bottom, width: s.width, height: s.height },
        outside,
        // the first line of a label that has the year on a second line
        lastXLabel: last ? { text: (last.t.querySelector('tspan')?.textContent ?? last.t.textContent ?? '').trim(), left: last.r.left, right: last.r.right } : null,
      };
    }));
  }

  describe.each(['demo', 'invented'])('the %s report', (report) => {
    it.each([1280, 390])('at %i px: every chart whole, inside the window, the latest period in view, legends whole, no sideways scroll', async (width) => {
      const { page, errors } = await open(report, width);
      const viewport = await page.evaluate(() => document.documentElement.clientWidth);
      // the page itself never scrolls sideways
      expect(await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth)).toBeLessThanOrEqual(0);
      const all = await charts(page);
      expect(all.length).toBeGreaterThanOrEqual(6);
      for (const c of all) {
        expect(c.box.left, c.id).toBeGreaterThanOrEqual(0);
        expect(c.box.right, c.id).toBeLessThanOrEqual(viewport + 0.5);
        expect(c.svg.height, c.id).toBeGreaterThan(100);
        // no label or text of the chart is cut off at the SVG's edge
        expect(c.outside, c.id).toEqual([]);
        if (c.scroll) {
          // drawn wider than the screen, in a box that opens at its right end: the latest period
          expect(c.svg.width, c.id).toBeGreaterThan(c.box.width);
          expect(Math.abs(c.svg.right - c.box.right), c.id).toBeLessThanOrEqual(1);
        } else {
          expect(c.svg.left, c.id).toBeGreaterThanOrEqual(c.box.left - 0.5);
          expect(c.svg.right, c.id).toBeLessThanOrEqual(c.box.right + 0.5);
          expect(c.svg.width, c.id).toBeGreaterThan(Math.min(300, viewport - 60));
        }
        if (c.latest) {
          // a time chart labels its latest period, and that label is in view without scrolling: the
          // data's latest period, or for the projection charts the end of the forecast after it
          if (c.id === 'projection' || c.id === 'scenarios') expect(c.latest > latest[report], c.id).toBe(true);
          else expect(c.latest).toBe(latest[report]);
          expect(c.lastXLabel?.text, c.id).toBe(dayLabel(c.latest));
          expect(c.lastXLabel!.left, c.id).toBeGreaterThanOrEqual(c.box.left - 0.5);
          expect(c.lastXLabel!.right, c.id).toBeLessThanOrEqual(Math.min(c.box.right, viewport) + 0.5);
        }
      }
      // at 1280 px a chart uses the page's width, not two thirds of it
      if (width === 1280) expect(Math.max(...all.map((c) => c.svg.width))).toBeGreaterThanOrEqual(900);
      // on a phone the charts sit in one column at readable size: no chart text is scaled below 85%
      if (width === 390) {
        const scales = await page.$$eval('.frame.narrow svg.marks', (svgs) => svgs.map((s) => s.getBoundingClientRect().width / Number(s.getAttribute('width'))));
        for (const s of scales) expect(s).toBeGreaterThanOrEqual(0.85);
      }
      // colour keys wrap instead of being cut: every entry lies inside its list and the window
      const legends = await page.$$eval('ul.legend li', (lis) => lis.filter((li) => li.getBoundingClientRect().width > 0).map((li) => {
        const r = li.getBoundingClientRect();
        const u = li.parentElement!.getBoundingClientRect();
        return { text: li.textContent, left: r.left, right: r.right, ulLeft: u.left, ulRight: u.right, clipped: li.scrollWidth > li.clientWidth + 1 };
      }));
      expect(legends.length).toBeGreaterThan(5);
      for (const l of legends) {
        expect(l.left, l.text ?? '').toBeGreaterThanOrEqual(Math.max(0, l.ulLeft) - 0.5);
        expect(l.right, l.text ?? '').toBeLessThanOrEqual(Math.min(viewport, l.ulRight) + 0.5);
        expect(l.clipped, l.text ?? '').toBe(false);
      }
      const findings = await page.$eval('#findings', (el) => el.getBoundingClientRect().right);
      expect(findings).toBeLessThanOrEqual(viewport);
      if (width === 390) expect(await page.evaluate(() => parseFloat(getComputedStyle(document.body).fontSize))).toBeGreaterThanOrEqual(14);
      await page.screenshot({ path: join(ARTIFACTS, `report-${report}-${width}.png`), fullPage: true });
      expect(errors).toEqual([]);
      await page.close();
    }, 60_000);
  });
});
