/// <reference lib="dom" /> -- the page.evaluate callbacks below run in the browser
/**
 * The report in a real browser: Debian's chromium driven by playwright-core, the page
 * opened from disk (file://). Checks: no console errors, no page errors, no dialogs, no
 * network request but the file itself and data: URIs; one ranking row per configuration;
 * sorting by a column orders the rows by that column; a pair view opens and its images
 * decode. chromium.launch starts with a fresh temporary profile. A screenshot is saved to test-artifacts/report.png.
 */
import { existsSync } from 'node:fs';
import { mkdir, mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { chromium, type Browser } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { writeHtmlReport } from '../../src/report/html/index.js';
import { buildSyntheticRun } from '../../bench/synthetic-run.js';

const CHROMIUM = '/usr/bin/chromium';
const CONFIGS = [
  { label: 'block:window=9', noise: 0.9, holes: 0.08, timeMs: 40 },
  { label: 'census:window=7', noise: 0.6, holes: 0.05, timeMs: 90 },
  { label: 'sgm:p2=96', noise: 0.35, holes: 0.02, timeMs: 400, confidenceNoise: 0.3 },
  { label: '<img src=x onerror=alert(1)>', noise: 1.4, holes: 0.2, timeMs: 15, failEvery: 2, error: '</script><script>alert(5)</script>' },
];

let root = '';
let reportUrl = '';
let browser: Browser;

beforeAll(async () => {
  if (!existsSync(CHROMIUM)) throw new Error(`${CHROMIUM} is missing: apt-get install chromium`);
  root = await mkdtemp(join(tmpdir(), 'plx-browser-'));
  const { runDir } = await buildSyntheticRun({ root, pairs: 4, width: 160, height: 120, configs: CONFIGS, tagEven: true });
  reportUrl = pathToFileURL(await writeHtmlReport(runDir, { resamples: 300 })).href;
  browser = await chromium.launch({
    executablePath: CHROMIUM,
    headless: true,
    args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run'],
  });
});

afterAll(async () => {
  await browser?.close();
  await rm(root, { recursive: true, force: true });
});

describe('HTML report in chromium', () => {
  it('loads offline with no errors or requests, sorts, and opens a pair view', async () => {
    const page = await browser.newPage({ viewport: { width: 1280, height: 1000 } });
    const problems: string[] = [];
    const requests: string[] = [];
    page.on('console', (m) => {
      if (m.type() === 'error' || m.type() === 'warning') problems.push(`console ${m.type()}: ${m.text()}`);
    });
    page.on('pageerror', (e) => problems.push(`page error: ${e.message}`));
    page.on('dialog', (d) => {
      problems.push(`dialog: ${d.message()}`);
      void d.dismiss();
    });
    page.on('request', (r) => requests.push(r.url()));
    await page.goto(reportUrl, { waitUntil: 'load' });

    // One row per configuration, default sort known/over2px ascending (a bad-pixel rate, which
    // counts missing answers as errors); aria-sort and the caption say so.
    const rows = page.locator('#rank-table tbody tr');
    await expect.poll(() => rows.count()).toBe(CONFIGS.length);
    expect(await page.locator('#rank-table th[data-col="over2px"]').getAttribute('aria-sort')).toBe('ascending');
    const rate = async () => page.$$eval('#rank-table tbody td[data-metric="over2px"]', (tds) => tds.map((td) => Number(td.getAttribute('data-value'))));
    const r1 = await rate();
    const epe = async () => page.$$eval('#rank-table tbody td[data-metric="epe"]', (tds) => tds.map((td) => Number(td.getAttribute('data-value'))));
    const e1 = await epe();
    expect(r1).toEqual([...r1].sort((a, b) => a - b));
    expect(await page.locator('#rank-caption').textContent()).toMatch(/^Sorted by known\/over2px, lowest first \(a bad-pixel rate: pixels without an answer count as errors/);

    // The hostile label is shown as text in its row header, not as an element.
    const labels = await page.$$eval('#rank-table tbody th', (ths) => ths.map((t) => t.textContent));
    expect(labels).toContain('<img src=x onerror=alert(1)>');
    expect(await page.locator('#rank-table img').count()).toBe(0);

    // Sort by time_ms with the keyboard: focus the header button and press Enter.
    await page.locator('#rank-table th[data-col="time_ms"] button').focus();
    await page.keyboard.press('Enter');
    const times = await page.$$eval('#rank-table tbody td[data-metric="time_ms"]', (tds) => tds.map((td) => Number(td.getAttribute('data-value'))));
    expect(times).toEqual([...times].sort((a, b) => a - b));
    expect(await page.locator('#rank-table th[data-col="time_ms"]').getAttribute('aria-sort')).toBe('ascending');
    // Again: descending.
    await page.keyboard.press('Enter');
    const timesDesc = await page.$$eval('#rank-table tbody td[data-metric="time_ms"]', (tds) => tds.map((td) => Number(td.getAttribute('data-value'))));
    expect(timesDesc).toEqual([...times].reverse());

    // Coverage sorts best (highest) first.
    await page.locator('#rank-table th[data-col="coverage"] button').click();
    const cov = await page.$$eval('#rank-table tbody td[data-metric="coverage"]', (tds) => tds.map((td) => Number(td.getAttribute('data-value'))));
    expect(cov).toEqual([...cov].sort((a, b) => b - a));

    // Region selector changes the figures shown.
    await page.selectOption('#sel-region', 'occluded');
    await page.locator('#rank-table th[data-col="epe"] button').click();
    const occ = await epe();
    expect(occ).toEqual([...occ].sort((a, b) => a - b));
    expect(occ).not.toEqual(e1);
    expect(await page.locator('#rank-caption').textContent()).toMatch(/^Sorted by occluded\/epe, lowest first\./); // the caption follows every change
    await page.selectOption('#sel-region', 'known');

    // Tag selector: only the pairs tagged wet-floor (2 of 4) count.
    await page.selectOption('#sel-tag', 'wet-floor');
    const pairsCol = await page.$$eval('#rank-table tbody tr', (trs) => trs.map((tr) => Number(tr.children[1].firstChild!.textContent)));
    expect(pairsCol).toEqual(CONFIGS.map(() => 2));
    await page.selectOption('#sel-tag', '');

    // Charts: a scatter with a Pareto front and one rate curve per configuration.
    expect(await page.locator('#scatter circle').count()).toBeGreaterThanOrEqual(3);
    expect(await page.locator('#scatter circle[data-front="1"]').count()).toBeGreaterThanOrEqual(1);
    expect(await page.locator('#curves polyline').count()).toBe(CONFIGS.length);
    // Sparsification: the one configuration with a confidence map draws its curve and its dashed oracle.
    expect(await page.locator('#sparsify polyline[data-label="sgm:p2=96"]').count()).toBe(2);
    expect(await page.locator('#sparsify polyline[stroke-dasharray="5 3"]').count()).toBe(1);
    // Sub-pixel honesty: two charts, a line per configuration with answers (the always-failing one included: it answers on half the pairs).
    expect(await page.locator('#subpixel svg').count()).toBe(2);
    expect(await page.locator('#subpixel svg').first().locator('polyline').count()).toBe(CONFIGS.length);

    // Open the second pair (the hostile config failed there) and check every image decodes.
    await page.locator('details.pair').nth(1).locator('summary').click();
    const imgs = page.locator('details.pair').nth(1).locator('img');
    await expect.poll(() => imgs.count()).toBeGreaterThanOrEqual(3 + 2 * 3);
    await page.waitForFunction(() => Array.from(document.querySelectorAll('details.pair[open] img')).every((i) => (i as HTMLImageElement).complete));
    const decoded = await imgs.evaluateAll((list) => list.map((i) => (i as HTMLImageElement).complete && (i as HTMLImageElement).naturalWidth > 0));
    expect(decoded.every(Boolean)).toBe(true);
    // The open pair carries its own legends: the pair's disparity scale in px and the error
    // scale clipped at 4 px (thumbs.ts ERROR_CLIP_PX), both starting at the maps' first
    // colours (viridis #440154, magma #000004: matplotlib's tables, see colormaps.test.ts).
    const legend = page.locator('details.pair').nth(1).locator('.pairlegend');
    const bars = legend.locator('svg');
    expect(await bars.count()).toBe(2);
    const labels2 = await bars.locator('text').allTextContents();
    expect(labels2.filter((t) => / px$/.test(t)).length).toBe(4);
    expect(labels2).toContain('\u2265 4 px');
    const firstStops = await bars.evaluateAll((list) => list.map((s) => s.querySelector('stop')!.getAttribute('stop-color')));
    expect(firstStops).toEqual(['#440154', '#000004']);
    expect(await legend.locator('.swatch.hatch').count()).toBe(1);
    // Hatching is really drawn: the block tile (8 % holes) holds both hatch grays
    // (HATCH_DARK 96,96,96 and HATCH_LIGHT 236,236,236), read back from a canvas.
    const hatch = await page.locator('details.pair').nth(1).locator('img[alt="disparity of block:window=9"]').evaluate((img) => {
      const im = img as HTMLImageElement;
      const c = document.createElement('canvas');
      c.width = im.naturalWidth;
      c.height = im.naturalHeight;
      const g = c.getContext('2d')!;
      g.drawImage(im, 0, 0);
      const d = g.getImageData(0, 0, c.width, c.height).data;
      let dark = 0;
      let light = 0;
      for (let i = 0; i < d.length; i += 4) {
        if (d[i] === 96 && d[i + 1] === 96 && d[i + 2] === 96) dark++;
        if (d[i] === 236 && d[i + 1] === 236 && d[i + 2] === 236) light++;
      }
      return { dark, light };
    });
    expect(hatch.dark).toBeGreaterThan(0);
    expect(hatch.light).toBeGreaterThan(0);
    const failedText = await page.locator('details.pair').nth(1).locator('td.failed').allTextContents();
    expect(failedText.join(' ')).toContain('</script><script>alert(5)</script>');

    await mkdir(resolve('test-artifacts'), { recursive: true });
    await page.screenshot({ path: resolve('test-artifacts/report.png'), fullPage: true });

    // Nothing but the page itself and data: URIs was requested.
    const foreign = requests.filter((u) => u !== reportUrl && !u.startsWith('data:'));
    expect(foreign).toEqual([]);
    expect(problems).toEqual([]);
    await page.close();
  });
});
