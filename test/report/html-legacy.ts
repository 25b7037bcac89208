/**
 * Reference for html.test.ts: the report builder as it was before index.html was streamed
 * (commit a0926be, src/report/html.ts, whole page built as one string). Only the imports
 * and this comment differ from that file; the streamed writer must give the same bytes.
 */
/**
 * The HTML report of a run folder: one self-contained index.html (inline CSS, script
 * and SVG; images as data: URIs of small PNGs), which opens offline from file:// and
 * makes no network request (a Content-Security-Policy forbids every fetch but data:
 * images, and allows only the report's own script by its hash).
 *
 * Everything taken from the run (labels, parameters, pair ids, error text) is
 * HTML-escaped where the server writes it, and set with textContent in the browser;
 * the embedded JSON escapes < > & U+2028 U+2029.
 */
import { createHash } from 'node:crypto';
import { mkdir, readFile } from 'node:fs/promises';
import { dirname, join } from 'node:path';
import type { FloatImage } from '../../src/core/image.js';
import { toLuminance } from '../../src/core/image.js';
import type { JobResult, RegionFigures } from '../../src/core/score.js';
import { DEFAULT_REGION_PARAMS, REGION_IDS, type RegionParams } from '../../src/core/regions.js';
import { decodePng, encodePng, readPngHeader } from '../../src/io/png.js';
import { maskFromRaster, readDisparityFile, readFileBytes, writeFileAtomic } from '../../src/io/files.js';
import { loadManifest, type Manifest } from '../../src/dataset/manifest.js';
import { assertSameSize, truthReadOptions } from '../../src/dataset/load.js';
import { buildRegions } from '../../src/dataset/regions.js';
import { aggregate, cmp, latestJobs, sortJobs, type SummaryRow } from '../../src/stats/aggregate.js';
import { DEFAULT_LEVEL } from '../../src/stats/bootstrap.js';
import { metricDirection, metricNames, metricUnit, pooledSpec } from '../../src/stats/metrics.js';
import { thresholdName } from '../../src/metrics/types.js';
import { colorHex, ERROR_MAP, type DisparityMapName } from '../../src/report/colormaps.js';
import { encodePalettePng, type IndexedImage } from '../../src/report/png-palette.js';
import { REPORT_CSS } from '../../src/report/html-style.js';
import { REPORT_JS } from '../../src/report/html-client.js';
import { pairPreviewPaths, previewFactor, readPreview } from '../../src/report/preview.js';
import { readRunFolder, type RunInfoView } from '../../src/report/run-folder.js';
import {
  ERROR_CLIP_PX,
  NO_TRUTH,
  REGION_COLORS,
  blockMeanThumb,
  colorizeDisparity,
  colorizeError,
  colorizeRegions,
  downscaleRaster,
  finiteRange,
  regionsToThumb,
  thumbFactor,
  toThumbGrid,
} from '../../src/report/thumbs.js';

export const REPORT_FILE = 'index.html';

export const SAFETY_CAUTION =
  'Accuracy on a dataset does not make a perception system safe; defer to the applicable functional-safety standards and qualified assessment.';

/** Escape text for HTML element content and quoted attribute values. */
export function escapeHtml(s: unknown): string {
  return String(s).replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;').replace(/'/g, '&#39;');
}

/** JSON that is safe inside a <script> element: < > & and the JS line separators escaped. */
export function scriptSafeJson(value: unknown): string {
  return JSON.stringify(value)
    .replace(/</g, '\\u003c')
    .replace(/>/g, '\\u003e')
    .replace(/&/g, '\\u0026')
    .replace(/\u2028/g, '\\u2028')
    .replace(/\u2029/g, '\\u2029');
}

function indexedUri(img: IndexedImage): string {
  return `data:image/png;base64,${encodePalettePng(img).toString('base64')}`;
}

interface PairJobView {
  label: string;
  status: 'ok' | 'failed';
  error: string | null;
  time_ms: number | null;
  disp: string | null;
  err: string | null;
  fig: Record<'known' | 'visible', { coverage: number | null; epe: number | null; rates: (number | null)[] }>;
}

interface PairView {
  dataset: string;
  pair: string;
  scale: [number, number] | null;
  /** Thumbnail width and height (px). */
  size: [number, number] | null;
  left: string | null;
  truth: string | null;
  regions: string | null;
  note: string | null;
  jobs: PairJobView[];
}

function figView(f: RegionFigures, rateMap: number[]): { coverage: number | null; epe: number | null; rates: (number | null)[] } {
  return { coverage: f.coverage, epe: f.epe, rates: rateMap.map((k) => (k >= 0 ? (f.rates[k] ?? null) : null)) };
}

/** Region parameters of a run (defaults for anything run.json lacks). */
function regionParamsOf(info: RunInfoView): RegionParams {
  const p: RegionParams = { ...DEFAULT_REGION_PARAMS };
  for (const k of Object.keys(p) as (keyof RegionParams)[]) {
    const v = info.config.regions[k];
    if (typeof v === 'number') p[k] = v;
  }
  return p;
}

/** Everything a pair view needs from disk, read ahead of the pair being drawn. */
interface PairInputs {
  /** Truth at the thumbnail grid (block means), or null with `problem` set. */
  truth: { thumb: FloatImage; pf: number; width: number; height: number; f: number } | null;
  problem: string | null;
  /** The runner's (or an earlier report's) stored pair thumbnails: left PNG bytes as stored, region bits. */
  stored: { leftPng: Buffer; regionBits: Uint8Array } | null;
  /** Without stored thumbnails: the full truth and the raw bytes of the left image and occlusion mask. */
  dataset: { truth: FloatImage; truthPath: string; left: Buffer; leftPath: string; occlusion: Buffer | null; occlusionPath: string | null } | null;
  /** Stored preview of each job's output (null: none, e.g. a failed job). */
  previews: (FloatImage | null)[];
}

async function readStoredPairPreview(runDir: string, dataset: string, pair: string, w: number, h: number): Promise<PairInputs['stored']> {
  const paths = pairPreviewPaths(runDir, dataset, pair);
  let lb: Buffer;
  let rb: Buffer;
  try {
    [lb, rb] = await Promise.all([readFile(paths.left), readFile(paths.regions)]);
  } catch {
    return null;
  }
  try {
    const lh = readPngHeader(lb, paths.left);
    if (lh.width !== w || lh.height !== h) return null;
    const r = decodePng(rb, paths.regions);
    if (r.width !== w || r.height !== h || r.channels !== 1 || r.bitDepth !== 8) return null;
    return { leftPng: lb, regionBits: r.data as Uint8Array };
  } catch {
    return null;
  }
}

/** Read (never rejects) what the view of one pair needs. */
async function loadPairInputs(runDir: string, manifest: Manifest | null, manifestProblem: string | null, dataset: string, pair: string, jobs: JobResult[]): Promise<PairInputs> {
  const inputs: PairInputs = { truth: null, problem: null, stored: null, dataset: null, previews: jobs.map(() => null) };
  const entry = manifest?.pairs.find((p) => p.id === pair);
  let truth: FloatImage | null = null;
  if (!manifest) inputs.problem = `Dataset images not shown: ${manifestProblem ?? 'manifest not found'}`;
  else if (!entry) inputs.problem = `Pair ${pair} is no longer in the dataset manifest.`;
  else {
    try {
      truth = await readDisparityFile(entry.truth, truthReadOptions(manifest));
      const f = thumbFactor(truth.width);
      const pf = previewFactor(truth.width);
      inputs.truth = { thumb: blockMeanThumb(truth, pf, f), pf, width: truth.width, height: truth.height, f };
    } catch (e) {
      inputs.problem = `Dataset images not shown: ${(e as Error).message}`;
    }
  }
  const t = inputs.truth;
  if (!t || !truth || !entry) return inputs;
  const [stored, ...previews] = await Promise.all([
    readStoredPairPreview(runDir, dataset, pair, t.thumb.width, t.thumb.height),
    ...jobs.map((j) => (j.status === 'ok' ? readPreview(runDir, j.matcher, dataset, pair).catch(() => null) : Promise.resolve(null))),
  ]);
  inputs.stored = stored;
  inputs.previews = previews;
  if (!stored) {
    try {
      const [left, occlusion] = await Promise.all([readFileBytes(entry.left), entry.occlusion ? readFileBytes(entry.occlusion) : Promise.resolve(null)]);
      inputs.dataset = { truth, truthPath: entry.truth, left, leftPath: entry.left, occlusion, occlusionPath: entry.occlusion ?? null };
    } catch (e) {
      inputs.problem = `Dataset images not shown: ${(e as Error).message}`;
    }
  }
  return inputs;
}

/**
 * Left thumbnail and region bits from the dataset files (decode the left image, rebuild
 * the regions), for runs without stored pair thumbnails; with `store`, they are written to
 * the run folder (previews/@pairs) so that the next report reads them instead.
 */
async function pairThumbsFromDataset(runDir: string, info: RunInfoView, d: NonNullable<PairInputs['dataset']>, dataset: string, pair: string, f: number, store: boolean): Promise<{ leftPng: Buffer; regionBits: Uint8Array }> {
  const { truth } = d;
  const left = decodePng(d.left, d.leftPath);
  assertSameSize(d.truthPath, truth, d.leftPath, left);
  let occ: Uint8Array | undefined;
  if (d.occlusion && d.occlusionPath) {
    const mask = maskFromRaster(decodePng(d.occlusion, d.occlusionPath));
    assertSameSize(d.truthPath, truth, d.occlusionPath, mask);
    occ = mask.data;
  }
  const regions = buildRegions(truth.data, toLuminance(left), occ, truth.width, truth.height, regionParamsOf(info));
  const leftThumb = downscaleRaster(left, f);
  const regionBits = regionsToThumb(regions.bits, truth.width, truth.height, f);
  const leftPng = encodePng(leftThumb);
  if (store) {
    // Best effort: a run folder that cannot take them only makes the next report slower.
    const paths = pairPreviewPaths(runDir, dataset, pair);
    try {
      await mkdir(dirname(paths.left), { recursive: true });
      await writeFileAtomic(paths.left, leftPng);
      await writeFileAtomic(paths.regions, encodePng({ width: leftThumb.width, height: leftThumb.height, channels: 1, bitDepth: 8, data: regionBits }));
    } catch {
      /* not stored */
    }
  }
  return { leftPng, regionBits };
}

function pngBytesUri(png: Uint8Array): string {
  return `data:image/png;base64,${Buffer.from(png.buffer, png.byteOffset, png.byteLength).toString('base64')}`;
}

async function pairView(runDir: string, info: RunInfoView, manifest: Manifest | null, dataset: string, pair: string, jobs: JobResult[], thresholds: number[], inputs: PairInputs, opts: HtmlReportOptions): Promise<PairView> {
  const view: PairView = { dataset, pair, scale: null, size: null, left: null, truth: null, regions: null, note: inputs.problem, jobs: [] };
  const t = inputs.truth;
  const map = opts.disparityMap ?? 'viridis';
  if (t && manifest) {
    const [lo, hi] = finiteRange(t.thumb.data);
    if (Number.isFinite(lo)) view.scale = [lo, hi];
    view.size = [t.thumb.width, t.thumb.height];
    view.truth = indexedUri(colorizeDisparity(t.thumb, lo, hi, map, 'no-truth'));
    try {
      const thumbs = inputs.stored ?? (inputs.dataset ? await pairThumbsFromDataset(runDir, info, inputs.dataset, dataset, pair, t.f, opts.storePairThumbs ?? false) : null);
      if (!thumbs) throw new Error('no left image');
      view.left = pngBytesUri(thumbs.leftPng);
      view.regions = indexedUri(colorizeRegions(thumbs.regionBits, t.thumb.width, t.thumb.height));
    } catch (e) {
      view.note = `Dataset images not shown: ${(e as Error).message}`;
    }
  }
  jobs.forEach((j, k) => {
    const rateMap = thresholds.map((th) => j.thresholds.indexOf(th));
    const jv: PairJobView = {
      label: j.matcher,
      status: j.status,
      error: j.error ?? null,
      time_ms: j.time_ms,
      disp: null,
      err: null,
      fig: { known: figView(j.scores.known.figures, rateMap), visible: figView(j.scores.visible.figures, rateMap) },
    };
    const prev = inputs.previews[k];
    if (t && prev && j.status === 'ok') {
      const pThumb = toThumbGrid(prev, t.pf, t.width, t.height, t.f);
      if (pThumb.width === t.thumb.width && pThumb.height === t.thumb.height) {
        jv.disp = indexedUri(colorizeDisparity(pThumb, view.scale ? view.scale[0] : 0, view.scale ? view.scale[1] : 1, map));
        jv.err = indexedUri(colorizeError(pThumb, t.thumb, ERROR_CLIP_PX));
      }
    }
    view.jobs.push(jv);
  });
  return view;
}

/** summary[dataset][tag or ''][region] = rows (one per configuration). */
function summaryView(rows: SummaryRow[], thresholds: number[]): Record<string, Record<string, Record<string, unknown[]>>> {
  const out: Record<string, Record<string, Record<string, unknown[]>>> = {};
  const names = metricNames(thresholds);
  for (const r of rows) {
    const ds = (out[r.dataset] ??= {});
    const tg = (ds[r.tag ?? ''] ??= {});
    const list = (tg[r.region] ??= []);
    const m: Record<string, (number | null)[]> = {};
    for (const n of names) {
      const s = r.metrics[n]!;
      m[n] = [s.mean, s.meanCi?.lo ?? null, s.meanCi?.hi ?? null, s.n, s.pooled, s.pooledCi?.lo ?? null, s.pooledCi?.hi ?? null];
    }
    list.push({ label: r.matcher, n_pairs: r.n_pairs, n_units: r.n_units, unit: r.unit, n_failed: r.n_failed, m });
  }
  return out;
}

function provenanceHtml(info: RunInfoView, jobs: JobResult[]): string {
  const dl: [string, string][] = [];
  const add = (k: string, v: unknown): void => {
    if (v !== undefined && v !== null && v !== '') dl.push([k, escapeHtml(v)]);
  };
  add('run', info.name);
  add('status', info.status);
  add('started', info.started);
  add('ended', info.ended);
  add('tool', info.tool ? `${info.tool.name ?? 'parallax'} ${info.tool.version ?? ''}` : undefined);
  add('tool commit', info.tool?.git ? `${info.tool.git.commit}${info.tool.git.dirty ? ' (with uncommitted changes)' : ''}` : 'unknown');
  add('node', info.environment?.node);
  add('cpu', info.environment?.cpu ? `${info.environment.cpu.model ?? ''} × ${info.environment.cpu.count ?? '?'}` : undefined);
  add('os', info.environment?.os ? `${info.environment.os.platform ?? ''} ${info.environment.os.release ?? ''} ${info.environment.os.arch ?? ''}` : undefined);
  add('memory', info.environment?.memoryMb !== undefined ? `${info.environment.memoryMb} MiB` : undefined);
  add('thresholds', info.config.thresholds.map((t) => `${t} px`).join(', '));
  add('region parameters', Object.entries(info.config.regions).map(([k, v]) => `${k}=${v}`).join(', '));
  add('jobs', info.jobs ? `${info.jobs.total} (${info.jobs.ok} ok, ${info.jobs.failed} failed)` : `${jobs.length}`);
  for (const [k, v] of Object.entries(info.notes ?? {})) add(k, v);
  const ds = info.config.datasets
    .map((d) => `<tr><td>${escapeHtml(d.name)}</td><td><code>${escapeHtml(d.hash)}</code></td><td>${escapeHtml(d.pairs ?? '')}</td><td>${escapeHtml(d.manifest ?? d.path ?? '')}</td></tr>`)
    .join('');
  const ms = (info.config.matchers ?? [])
    .map(
      (m) =>
        `<tr><td>${escapeHtml(m.label)}</td><td>${escapeHtml(m.matcherId ?? '')}</td><td>${escapeHtml(m.kind ?? '')}</td><td>${escapeHtml(m.version ?? '')}</td><td><code>${escapeHtml(JSON.stringify(m.params ?? {}))}</code></td><td><code>${escapeHtml((m.codeHash ?? '').slice(0, 16))}</code></td></tr>`,
    )
    .join('');
  return `<dl>${dl.map(([k, v]) => `<dt>${escapeHtml(k)}</dt><dd>${v}</dd>`).join('')}</dl>
<h3>Datasets</h3><table><thead><tr><th>name</th><th>hash</th><th>pairs</th><th>manifest</th></tr></thead><tbody>${ds}</tbody></table>
<h3>Configurations</h3><table><thead><tr><th>label</th><th>matcher</th><th>kind</th><th>version</th><th>parameters</th><th>code hash</th></tr></thead><tbody>${ms}</tbody></table>`;
}

export interface HtmlReportOptions {
  /** Bootstrap resamples for the intervals (default that of bootstrap.ts). */
  resamples?: number;
  /** Colour map of disparity (default viridis). */
  disparityMap?: DisparityMapName;
  /**
   * Where a run has no stored pair thumbnails, store the ones made from the dataset
   * (previews/@pairs) so the next report need not decode the dataset images again.
   * writeHtmlReport sets it; buildHtmlReport alone writes nothing by default.
   */
  storePairThumbs?: boolean;
}

/** Pairs whose files are read ahead of the one being drawn. */
const READ_AHEAD = 4;

/** Build the report HTML of a run folder (does not write it). */
export async function buildHtmlReport(runDir: string, opts: HtmlReportOptions = {}): Promise<string> {
  const run = await readRunFolder(runDir);
  const info = run.info;
  const thresholds = [...info.config.thresholds];
  const jobs = sortJobs(latestJobs(run.results));
  const rows = aggregate(jobs, { thresholds, ci: opts.resamples ? { resamples: opts.resamples } : {} });
  const labels = [...new Set(jobs.map((j) => j.matcher))].sort(cmp);
  const datasets = [...new Set(jobs.map((j) => j.dataset))].sort(cmp);
  const tags = [...new Set(rows.flatMap((r) => (r.tag === null ? [] : [r.tag])))].sort(cmp);

  // Manifests of the datasets, for left images, truth and region masks.
  const manifests = new Map<string, { m: Manifest | null; problem: string | null }>();
  for (const d of info.config.datasets) {
    const where = d.manifest ?? d.path;
    if (!where) {
      manifests.set(d.name, { m: null, problem: 'run.json names no manifest' });
      continue;
    }
    try {
      manifests.set(d.name, { m: loadManifest(where), problem: null });
    } catch (e) {
      manifests.set(d.name, { m: null, problem: (e as Error).message });
    }
  }
  const byPair = new Map<string, JobResult[]>();
  for (const j of jobs) {
    const k = `${j.dataset}\u0000${j.pair}`;
    let l = byPair.get(k);
    if (!l) byPair.set(k, (l = []));
    l.push(j);
  }
  const pairKeys = [...byPair.keys()].sort(cmp);
  const pairs: PairView[] = [];
  // Files of the next few pairs are read while this one is drawn (I/O overlaps the
  // CPU work; one thread, a bounded number of pairs in memory).
  const load = (k: string): Promise<PairInputs> => {
    const list = byPair.get(k)!;
    const { dataset, pair } = list[0]!;
    const man = manifests.get(dataset) ?? { m: null, problem: `dataset ${dataset} is not in run.json` };
    return loadPairInputs(runDir, man.m, man.problem, dataset, pair, list);
  };
  const ahead: Promise<PairInputs>[] = pairKeys.slice(0, READ_AHEAD).map(load);
  for (let i = 0; i < pairKeys.length; i++) {
    const inputs = await ahead[i]!;
    delete ahead[i];
    if (i + READ_AHEAD < pairKeys.length) ahead[i + READ_AHEAD] = load(pairKeys[i + READ_AHEAD]!);
    const list = byPair.get(pairKeys[i]!)!;
    const { dataset, pair } = list[0]!;
    pairs.push(await pairView(runDir, info, manifests.get(dataset)?.m ?? null, dataset, pair, list, thresholds, inputs, opts));
  }

  const names = metricNames(thresholds);
  const data = {
    thresholds,
    rateNames: thresholds.map(thresholdName),
    regions: [...REGION_IDS],
    metrics: names,
    units: Object.fromEntries(names.map((n) => [n, metricUnit(n)])),
    better: Object.fromEntries(names.map((n) => [n, metricDirection(n) === 'higher-better' ? 'higher' : metricDirection(n) === 'abs-lower-better' ? 'abs' : 'lower'])),
    pooled: Object.fromEntries(names.map((n) => [n, pooledSpec(n, thresholds) !== null])),
    level: DEFAULT_LEVEL,
    datasets,
    configs: labels,
    summary: summaryView(rows, thresholds),
    dispMap: opts.disparityMap ?? 'viridis',
    dispColors: Array.from({ length: 33 }, (_, i) => colorHex(opts.disparityMap ?? 'viridis', i / 32)),
    errMap: ERROR_MAP,
    errColors: Array.from({ length: 33 }, (_, i) => colorHex(ERROR_MAP, i / 32)),
    errorClip: ERROR_CLIP_PX,
    noTruth: `rgb(${NO_TRUTH.join(',')})`,
    regionKeys: (['visible', 'occluded', 'flat', 'jump', 'unknown'] as const).map((k) => [k === 'unknown' ? 'no truth' : k, `rgb(${REGION_COLORS[k].join(',')})`]),
    pairs,
  };

  const scriptHash = createHash('sha256').update(REPORT_JS, 'utf8').digest('base64');
  const csp = `default-src 'none'; img-src data:; style-src 'unsafe-inline'; script-src 'sha256-${scriptHash}'; base-uri 'none'; form-action 'none'`;
  const title = info.name ? `parallax report: ${info.name}` : 'parallax report';
  const failedJobs = jobs.filter((j) => j.status === 'failed').length;
  const pairList = pairs
    .map((p, i) => {
      const failed = p.jobs.filter((j) => j.status === 'failed').length;
      const st = failed ? `${failed} of ${p.jobs.length} failed` : `${p.jobs.length} configuration${p.jobs.length === 1 ? '' : 's'}`;
      return `<details class="pair" data-index="${i}"><summary>${escapeHtml(p.dataset)} / ${escapeHtml(p.pair)}<span class="st">${escapeHtml(st)}</span></summary><div class="pairbody"></div></details>`;
    })
    .join('\n');
  const opt = (v: string, label = v): string => `<option value="${escapeHtml(v)}">${escapeHtml(label)}</option>`;

  return `<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta http-equiv="Content-Security-Policy" content="${escapeHtml(csp)}">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="referrer" content="no-referrer">
<title>${escapeHtml(title)}</title>
<style>${REPORT_CSS}</style>
</head>
<body>
<header class="top">
<h1>${escapeHtml(title)}</h1>
<div class="sub">${escapeHtml(labels.length)} configuration${labels.length === 1 ? '' : 's'} · ${escapeHtml(pairs.length)} pair${pairs.length === 1 ? '' : 's'} · ${escapeHtml(datasets.join(', '))} · ${escapeHtml(jobs.length)} jobs${failedJobs ? `, ${escapeHtml(failedJobs)} failed` : ''}${info.started ? ` · started ${escapeHtml(info.started)}` : ''}</div>
</header>
<main>
<section class="caution" aria-label="safety caution"><strong>Caution.</strong> ${escapeHtml(SAFETY_CAUTION)}</section>
<section aria-labelledby="h-rank">
<h2 id="h-rank">Ranking</h2>
<div class="controls">
<label>dataset<select id="sel-dataset">${datasets.map((d) => opt(d)).join('')}</select></label>
<label>region<select id="sel-region">${REGION_IDS.map((r) => opt(r)).join('')}</select></label>
${tags.length ? `<label>pairs<select id="sel-tag">${opt('', 'all pairs')}${tags.map((t) => opt(t, `tagged ${t}`)).join('')}</select></label>` : ''}
<label>statistic<select id="sel-stat">${opt('mean', 'mean over pairs')}${opt('pooled', 'pooled over pixels')}</select></label>
</div>
<p class="ci">Each cell: the figure, below it its ${Math.round(DEFAULT_LEVEL * 100)} % BCa bootstrap interval (pairs, or the manifest's groups, resampled) and n = pairs the figure rests on. Rates and coverage in %; sorted by known/epe, lowest first, until you pick a column. Failed jobs count as all-invalid.</p>
<div class="rank"><table id="rank-table"><thead></thead><tbody></tbody></table></div>
<noscript><p>The ranking, charts and pair views need JavaScript; summary.csv holds the same figures.</p></noscript>
</section>
<section aria-labelledby="h-charts">
<h2 id="h-charts">Accuracy, cost and thresholds</h2>
<div class="charts">
<figure><div id="scatter"></div><figcaption id="scatter-caption"></figcaption></figure>
<figure><div id="curves"></div><figcaption>Bad-pixel rate (% of the region's pixels with |error| above the threshold or no prediction) against the threshold, one line per configuration.</figcaption></figure>
</div>
</section>
<section aria-labelledby="h-pairs">
<h2 id="h-pairs">Pairs</h2>
<p class="ci">Open a pair to see its left image, truth, region map and, per configuration, the disparity and the absolute error, each with its legend. Thumbnails are downscaled (block means of valid pixels); the error images compare the downscaled output with the downscaled truth. The figures beside them are the exact per-pair scores.</p>
${pairList}
</section>
<section class="prov" aria-labelledby="h-prov">
<h2 id="h-prov">Provenance</h2>
${provenanceHtml(info, jobs)}
</section>
</main>
<script type="application/json" id="plx-data">${scriptSafeJson(data)}</script>
<script>${REPORT_JS}</script>
</body>
</html>
`;
}

/** Write `<runDir>/index.html` and return its path. */
export async function writeHtmlReport(runDir: string, opts: HtmlReportOptions = {}): Promise<string> {
  const html = await buildHtmlReport(runDir, { storePairThumbs: true, ...opts });
  const path = join(runDir, REPORT_FILE);
  await writeFileAtomic(path, html);
  return path;
}
