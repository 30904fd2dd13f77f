/// <reference lib="dom" />
/**
 * The demo report in a real browser: Debian's chromium driven by playwright-core (never a
 * downloaded browser). In CI (CI=true) a missing browser fails the test; elsewhere it is skipped
 * with a notice. Screenshots are saved to test/artifacts/.
 */
import { existsSync, mkdirSync, mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { chromium, type BrowserContext } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { demoEvents, runCli, tempDir } from './fixtures.js';

const CANDIDATES = ['/usr/bin/chromium', '/usr/lib/chromium/chromium', '/usr/bin/chromium-browser'];
const executable = CANDIDATES.find((p) => existsSync(p));
const inCi = process.env.CI === 'true';
const ARTIFACTS = resolve('test/artifacts');
const ARGS = ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'];

if (!executable && !inCi) {
  console.warn('browser test skipped: no chromium found (install Debian\'s chromium to run it; in CI it is required)');
}

describe.runIf(executable || inCi)('the demo report in chromium', () => {
  let ctx: BrowserContext;
  let url: string;

  beforeAll(async () => {
    if (!executable) throw new Error(`CI=true but no chromium at ${CANDIDATES.join(', ')}: .ci/run must install it (apt-get install -y chromium)`);
    const work = tempDir('tidemark-browser-');
    const ev = demoEvents(work);
    const out = join(work, 'report');
    const r = await runCli(['report', '--events', ev.file, '--out', out, '--base', '2026-08-10', '--compare', '2026-09-14', '--by', 'channel', '--quiet']);
    expect(r.code).toBe(0);
    url = pathToFileURL(join(out, 'index.html')).href;
    mkdirSync(ARTIFACTS, { recursive: true });
    ctx = await chromium.launchPersistentContext(mkdtempSync(join(tmpdir(), 'tidemark-chromium-')), { executablePath: executable, args: ARGS, viewport: { width: 1280, height: 900 } });
  }, 120_000);

  afterAll(async () => {
    await ctx?.close();
  });

  async function open(width: number) {
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
    await page.goto(url, { waitUntil: 'load' });
    return { page, errors };
  }

  it('at 1280 px: no console errors, every chart drawn with size, no horizontal overflow', async () => {
    const { page, errors } = await open(1280);
    const charts = await page.$$eval('figure.chart svg', (svgs) => svgs.map((s) => s.getBoundingClientRect()).map((r) => ({ w: r.width, h: r.height })));
    expect(charts.length).toBeGreaterThanOrEqual(6);
    for (const c of charts) {
      expect(c.w).toBeGreaterThan(100);
      expect(c.h).toBeGreaterThan(100);
    }
    const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
    expect(overflow).toBeLessThanOrEqual(0);
    await page.screenshot({ path: join(ARTIFACTS, 'report-1280.png'), fullPage: true });
    expect(errors).toEqual([]);
    await page.close();
  }, 60_000);

  it('at 390 px: the page does not overflow and chart text stays readable', async () => {
    const { page, errors } = await open(390);
    const overflow = await page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth);
    expect(overflow).toBeLessThanOrEqual(0);
    // charts are drawn at no less than 80% of their natural size (11 px chart text stays ≥ 8.8 px)
    const scales = await page.$$eval('figure.chart svg', (svgs) => svgs.map((s) => s.getBoundingClientRect().width / Number(s.getAttribute('width'))));
    for (const s of scales) expect(s).toBeGreaterThanOrEqual(0.8);
    const bodyFont = await page.evaluate(() => parseFloat(getComputedStyle(document.body).fontSize));
    expect(bodyFont).toBeGreaterThanOrEqual(14);
    const findings = await page.$eval('#findings', (el) => el.getBoundingClientRect().width);
    expect(findings).toBeLessThanOrEqual(390);
    await page.screenshot({ path: join(ARTIFACTS, 'report-390.png'), fullPage: true });
    expect(errors).toEqual([]);
    await page.close();
  }, 60_000);
});
