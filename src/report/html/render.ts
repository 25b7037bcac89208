/**
 * Rendering the HTML report of a run folder: one self-contained index.html (inline CSS, script
 * and SVG; images as data: URIs of small PNGs), which opens offline from file:// and
 * makes no network request (a Content-Security-Policy forbids every fetch but data:
 * images, and allows only the report's own script by its hash).
 *
 * Everything taken from the run (labels, parameters, pair ids, error text) is
 * HTML-escaped where the server writes it (markup.ts), and set with textContent in the
 * browser; the embedded JSON escapes < > & U+2028 U+2029.
 *
 * Files: inputs.ts reads a pair's files, view-model.ts makes the data object and the
 * pair views, page.ts the markup, write.ts the atomic streamed write; the client script
 * is src/report/client/report.ts, compiled by the build (client-script.ts loads it).
 */
import { compareConditions, conditionOf, configLabel } from '../../conditions/spec.js';
import type { JobResult } from '../../core/score.js';
import { readRunFolder, readRunRecordAsync } from '../run-folder.js';
import { metricSetOf, type RunRecord } from '../../io/run-record.js';
import { loadManifest, type Manifest } from '../../dataset/manifest.js';
import { aggregate, cmp, latestJobs, sortJobs } from '../../stats/aggregate.js';
import { byNatural, groupBy } from '../../core/order.js';
import type { DisparityMapName } from '../colormaps.js';
import { loadPairInputs, type PairInputs } from './inputs.js';
import { pageHead, pageTail } from './page.js';
import { conditionsView, bandNamesOf, depthView, flickerView, pairView, regionNamesOf, reportData, sparsifyView, subpixelView } from './view-model.js';
import { scriptSafeJson } from './markup.js';
import { reportScript } from './client-script.js';

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
  /**
   * The run's results as already read from its results.jsonl (the runner passes the
   * journal it has just read), so the report does not read and hold a second copy.
   */
  results?: readonly JobResult[];
}

/** Receives the page in order, piece by piece; the next piece waits for the returned promise. */
export type HtmlSink = (chunk: string) => void | Promise<void>;

/** Build the report HTML of a run folder as one string (does not write it; tests and small runs). */
export async function buildHtmlReport(runDir: string, opts: HtmlReportOptions = {}): Promise<string> {
  const parts: string[] = [];
  await renderHtmlReport(runDir, (c) => void parts.push(c), opts);
  return parts.join('');
}

/**
 * Render the report of a run folder into `sink`, in page order: the head, overview,
 * pair list and provenance first (they need only the results), then the embedded data
 * with one pair view at a time (its thumbnails drawn, written, dropped), then the
 * script. Memory holds the results and a few pairs' files, whatever the number of pairs.
 * The pieces joined are the page buildHtmlReport returns.
 */
export async function renderHtmlReport(runDir: string, sink: HtmlSink, opts: HtmlReportOptions = {}): Promise<void> {
  if (opts.results) return renderRun(runDir, await readRunRecordAsync(runDir), opts.results, sink, opts);
  const run = await readRunFolder(runDir);
  return renderRun(runDir, run.info, run.results, sink, opts);
}

type ManifestSlot = { m: Manifest | null; problem: string | null };

/** Manifests of the run's datasets, for left images, truth and region masks. */
function runManifests(info: RunRecord): Map<string, ManifestSlot> {
  const out = new Map<string, ManifestSlot>();
  for (const d of info.config.datasets) {
    try {
      out.set(d.name, { m: loadManifest(d.manifest), problem: null });
    } catch (e) {
      out.set(d.name, { m: null, problem: (e as Error).message });
    }
  }
  return out;
}

/** Jobs grouped by pair, in sorted pair order. */
function jobsByPair(jobs: readonly JobResult[]): { dataset: string; pair: string; jobs: JobResult[] }[] {
  const byPair = groupBy(jobs, (j) => `${j.dataset}\u0000${j.pair}`);
  return [...byPair.keys()].sort(cmp).map((k) => {
    const list = byPair.get(k)!;
    return { dataset: list[0].dataset, pair: list[0].pair, jobs: list };
  });
}

/** Pairs whose files are read ahead of the one being drawn. */
const READ_AHEAD = 4;

async function renderRun(runDir: string, info: RunRecord, results: readonly JobResult[], sink: HtmlSink, opts: HtmlReportOptions): Promise<void> {
  const set = metricSetOf(info);
  const jobs = sortJobs(latestJobs(results));
  const rows = aggregate(jobs, { ...set, ci: opts.resamples ? { resamples: opts.resamples } : {} });
  const labels = [...new Set(jobs.map((j) => configLabel(j)))].sort(byNatural);
  const datasets = [...new Set(jobs.map((j) => j.dataset))].sort(cmp);
  const tags = [...new Set(rows.flatMap((r) => (r.tag === null ? [] : [r.tag])))].sort(cmp);
  const manifests = runManifests(info);
  const pairs = jobsByPair(jobs);
  const disparityMap = opts.disparityMap ?? 'viridis';
  const script = reportScript();

  // The data object ends with its `pairs` array, written one view at a time: JSON.stringify
  // of the whole object is the head's text without its closing brace, then ,"pairs":[,
  // the views joined by commas, then ]}. (scriptSafeJson escapes single characters only,
  // so escaping the pieces is escaping the whole.)
  const regions = regionNamesOf(jobs);
  const bands = bandNamesOf(rows);
  const views = { sparsify: sparsifyView(jobs, labels), subpixel: subpixelView(jobs, labels), flicker: flickerView(jobs, labels), depth: depthView(jobs, labels), regions, bands, conditions: conditionsView(jobs, set) };
  const dataHead = scriptSafeJson(reportData(rows, set, datasets, labels, disparityMap, views));
  const kinds = views.conditions.kinds;
  const conditions = kinds.length ? [...new Set(jobs.map(conditionOf))].sort(compareConditions) : [];
  await sink(pageHead({ info, jobs, labels, datasets, tags, regions, bands, kinds, conditions, pairs, script }) + `${dataHead.slice(0, -1)},"pairs":[`);

  // Files of the next few pairs are read while this one is drawn (I/O overlaps the
  // CPU work; one thread, a bounded number of pairs in memory).
  const load = (i: number): Promise<PairInputs> => {
    const { dataset, pair, jobs: list } = pairs[i];
    const man = manifests.get(dataset) ?? { m: null, problem: `dataset ${dataset} is not in run.json` };
    return loadPairInputs(runDir, man.m, man.problem, dataset, pair, list);
  };
  const ahead: Promise<PairInputs>[] = [];
  for (let i = 0; i < Math.min(READ_AHEAD, pairs.length); i++) ahead[i] = load(i);
  for (let i = 0; i < pairs.length; i++) {
    const inputs = await ahead[i];
    delete ahead[i];
    if (i + READ_AHEAD < pairs.length) ahead[i + READ_AHEAD] = load(i + READ_AHEAD);
    const { dataset, pair, jobs: list } = pairs[i];
    const view = await pairView({
      runDir,
      info,
      manifest: manifests.get(dataset)?.m ?? null,
      dataset,
      pair,
      jobs: list,
      thresholds: set.thresholds,
      inputs,
      disparityMap,
      storePairThumbs: opts.storePairThumbs ?? false,
    });
    await sink(i ? `,${scriptSafeJson(view)}` : scriptSafeJson(view));
  }
  await sink(`]}${pageTail(script)}`);
}
