import { existsSync } from 'node:fs';
import { mkdtemp, readFile, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { buildHtmlReport, escapeHtml, scriptSafeJson, writeHtmlReport } from '../../src/report/html/index.js';
import { pairPreviewPaths } from '../../src/report/preview.js';
import { buildSyntheticRun } from '../../bench/synthetic-run.js';

const EVIL_LABEL = '<img src=x onerror=alert(1)>';
const EVIL_SCRIPT = 'sgm</script><script>alert(2)</script>';
const EVIL_PAIR = '<img src=x onerror=alert(3)>';

let root = '';
let html = '';
beforeAll(async () => {
  root = await mkdtemp(join(tmpdir(), 'plx-html-'));
  const { runDir } = await buildSyntheticRun({
    root,
    pairs: 3,
    width: 96,
    height: 64,
    configs: [
      { label: EVIL_LABEL, noise: 0.4, holes: 0.05, timeMs: 20 },
      { label: EVIL_SCRIPT, noise: 1.5, holes: 0.1, timeMs: 5, failEvery: 3, error: '</script><b onmouseover=alert(4)>boom' },
    ],
    resultPairIds: ['p000', EVIL_PAIR, 'p002\u2028x'],
  });
  html = await readFile(await writeHtmlReport(runDir, { resamples: 200 }), 'utf8');
});
afterAll(async () => {
  await rm(root, { recursive: true, force: true });
});

describe('HTML report (text checks)', () => {
  it('escapes HTML special characters (OWASP XSS prevention rule 1)', () => {
    expect(escapeHtml(`<a href="x" onclick='y'>&</a>`)).toBe('&lt;a href=&quot;x&quot; onclick=&#39;y&#39;&gt;&amp;&lt;/a&gt;');
  });

  it('embeds JSON that cannot close the script element (OWASP: JSON in script blocks)', () => {
    const s = scriptSafeJson({ a: '</script><!--', b: '\u2028\u2029&' });
    expect(s).not.toMatch(/[<>&\u2028\u2029]/);
    // Still the same value when parsed (JSON escapes are standard, RFC 8259).
    expect(JSON.parse(s)).toEqual({ a: '</script><!--', b: '\u2028\u2029&' });
  });

  it('never contains the hostile names raw, only escaped', () => {
    expect(html).not.toContain(EVIL_LABEL);
    expect(html).not.toContain(EVIL_PAIR);
    expect(html).not.toContain('<script>alert');
    expect(html).not.toContain('<b onmouseover');
    // Exactly our two script elements close.
    expect(html.split('</script>').length - 1).toBe(2);
    // The pair list (server-rendered) shows the escaped pair id.
    expect(html).toContain('&lt;img src=x onerror=alert(3)&gt;');
  });

  it('is self-contained: no external URL in src/href, a CSP that forbids fetching, the safety caution', () => {
    expect(html).not.toMatch(/\s(src|href)=["']?(https?:|\/\/)/i);
    expect(html).not.toMatch(/url\((?!#)/i);
    expect(html).toMatch(/Content-Security-Policy" content="default-src &#39;none&#39;; img-src data:/);
    expect(html).toContain('Accuracy on a dataset does not make a perception system safe; defer to the applicable functional-safety standards and qualified assessment.');
  });
});

describe('HTML report without stored pair thumbnails', () => {
  it('makes them from the dataset (same pictures as the runner-written ones), stores them, and reads them next time', async () => {
    const dir = await mkdtemp(join(tmpdir(), 'plx-html-thumbs-'));
    try {
      const { runDir } = await buildSyntheticRun({
        root: dir,
        pairs: 2,
        width: 80,
        height: 60,
        configs: [{ label: 'block:window=9', noise: 0.5, holes: 0.05, timeMs: 10 }],
      });
      const paths = pairPreviewPaths(runDir, 'dock-yard', 'p001');
      // 1: thumbnails written by the synthetic run as the runner would (writePairPreview).
      const withStored = await buildHtmlReport(runDir, { resamples: 200 });
      await rm(join(runDir, 'previews', '@pairs'), { recursive: true, force: true });
      // 2: build alone writes nothing into the run folder.
      const fromDataset = await buildHtmlReport(runDir, { resamples: 200 });
      expect(existsSync(paths.left)).toBe(false);
      // 3: writeHtmlReport stores them; 4: the next render reads them.
      const written = await readFile(await writeHtmlReport(runDir, { resamples: 200 }), 'utf8');
      expect(existsSync(paths.left) && existsSync(paths.regions)).toBe(true);
      const again = await readFile(await writeHtmlReport(runDir, { resamples: 200 }), 'utf8');
      // Common practice: a cache (or its absence) must not change the output.
      expect(fromDataset).toBe(withStored);
      expect(written).toBe(withStored);
      expect(again).toBe(withStored);
    } finally {
      await rm(dir, { recursive: true, force: true });
    }
  });

  it('uses cividis for disparity when asked, and says so to the page script', async () => {
    const dir = await mkdtemp(join(tmpdir(), 'plx-html-cividis-'));
    try {
      const { runDir } = await buildSyntheticRun({ root: dir, pairs: 2, width: 64, height: 48, configs: [{ label: 'a', noise: 0.5, holes: 0.05, timeMs: 10 }] });
      const v = await buildHtmlReport(runDir, { resamples: 200 });
      const c = await buildHtmlReport(runDir, { resamples: 200, disparityMap: 'cividis' });
      expect(v).toContain('"dispMap":"viridis"');
      expect(c).toContain('"dispMap":"cividis"');
      // cividis starts at (0, 34, 78) = #00224e (matplotlib's table, colormaps.test.ts).
      expect(c).toContain('"#00224e"');
      expect(v).not.toContain('"#00224e"');
    } finally {
      await rm(dir, { recursive: true, force: true });
    }
  });
});
