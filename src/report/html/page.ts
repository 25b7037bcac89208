/**
 * The page's markup around the data: head (with its Content-Security-Policy), the
 * caution, the ranking, chart and pair sections, and the provenance. Built with the
 * escaping html`` template (markup.ts).
 */
import { createHash } from 'node:crypto';
import type { JobResult } from '../../core/score.js';
import type { RunRecord } from '../../io/run-record.js';
import { DEFAULT_LEVEL } from '../../stats/bootstrap.js';
import { REPORT_CSS } from '../html-style.js';
import { html, joinMarkup, trustedHtml, type Markup } from './markup.js';

export const SAFETY_CAUTION =
  'Accuracy on a dataset does not make a perception system safe; defer to the applicable functional-safety standards and qualified assessment.';

function provenance(info: RunRecord, jobs: readonly JobResult[]): Markup {
  const dl: [string, unknown][] = [];
  const add = (k: string, v: unknown): void => {
    if (v !== undefined && v !== null && v !== '') dl.push([k, v]);
  };
  const env = info.environment;
  add('run', info.name);
  add('status', info.status);
  add('started', info.started);
  add('ended', info.ended);
  add('tool', `${info.tool.name} ${info.tool.version}`);
  add('tool commit', info.tool.git ? `${info.tool.git.commit}${info.tool.git.dirty ? ' (with uncommitted changes)' : ''}` : 'unknown');
  add('node', env.node);
  add('cpu', `${env.cpu.model} × ${env.cpu.count}`);
  add('os', `${env.os.platform} ${env.os.release} ${env.os.arch}`);
  add('memory', `${env.memoryMb} MiB`);
  add('thresholds', info.config.thresholds.map((t) => `${t} px`).join(', '));
  add('quantile levels', info.config.quantiles.map((q) => `${q} %`).join(', '));
  add('region parameters', Object.entries(info.config.regions).map(([k, v]) => `${k}=${v}`).join(', '));
  add('jobs', `${info.jobs.total} (${info.jobs.ok} ok, ${info.jobs.failed} failed; ${jobs.length} in the journal)`);
  for (const [k, v] of Object.entries(info.notes)) add(k, v);
  const ds = info.config.datasets.map((d) => html`<tr><td>${d.name}</td><td><code>${d.hash}</code></td><td>${d.pairs}</td><td>${d.manifest}</td></tr>`);
  const ms = info.config.matchers.map(
    (m) =>
      html`<tr><td>${m.label}</td><td>${m.matcherId}</td><td>${m.kind}</td><td>${m.version ?? ''}</td><td><code>${JSON.stringify(m.params)}</code></td><td><code>${(m.codeHash ?? '').slice(0, 16)}</code></td></tr>`,
  );
  return html`<dl>${dl.map(([k, v]) => html`<dt>${k}</dt><dd>${v}</dd>`)}</dl>
<h3>Datasets</h3><table><thead><tr><th>name</th><th>hash</th><th>pairs</th><th>manifest</th></tr></thead><tbody>${ds}</tbody></table>
<h3>Configurations</h3><table><thead><tr><th>label</th><th>matcher</th><th>kind</th><th>version</th><th>parameters</th><th>code hash</th></tr></thead><tbody>${ms}</tbody></table>`;
}

/** Degradation curves per condition kind and the breaking points. */
function faultSection(kinds: readonly { id: string; unit: string }[]): Markup {
  return html`<section aria-labelledby="h-faults">
<h2 id="h-faults">Camera faults</h2>
<div class="controls"><label>fault<select id="sel-kind">${kinds.map((k) => opt(k.id, `${k.id} (${k.unit})`))}</select></label></div>
<p class="ci">The images the matchers saw were changed by each condition (the files and the truth were not; a lower resolution scales the truth with the images). Choose the figure by sorting the ranking; the region, distance and statistic are the ranking's.</p>
<div class="charts">
<figure><div id="degradation"></div><figcaption id="degradation-caption"></figcaption></figure>
</div>
<div class="rank"><table id="breaking-table"><caption id="breaking-caption"></caption><thead></thead><tbody></tbody></table></div>
</section>`;
}

/** Figures against distance, the depth error against what the disparity error predicts, the usable range. */
function depthSection(): Markup {
  return html`<section aria-labelledby="h-depth">
<h2 id="h-depth">Depth</h2>
<p id="usable-list" class="ci"></p>
<div class="charts">
<figure><div id="by-band"></div><figcaption id="by-band-caption"></figcaption></figure>
<figure><div id="depth-error"></div><figcaption>Depth error by true distance on the chosen region, one colour per configuration (all pairs pooled, fine bins of 1/12 of a doubling): solid, the measured mean |depth error|; dashed, the error its pooled epe predicts, epe · Z²/(f·B) (from Z = f·B/d, a disparity error δ moves the depth by about δ·Z²/(f·B)); dotted, the same for δ = 0.25 px. A solid line above its dashed one means depth errors larger than the disparity accuracy alone explains (e.g. errors concentrated at far pixels).</figcaption></figure>
</div>
</section>`;
}

export interface PageParts {
  info: RunRecord;
  jobs: readonly JobResult[];
  labels: readonly string[];
  datasets: readonly string[];
  tags: readonly string[];
  /** Region names (built-in, then named) and depth band labels of the run. */
  regions: readonly string[];
  bands: readonly string[];
  /** Condition kinds of the run (empty: clean only). */
  kinds: readonly { id: string; unit: string }[];
  /** Conditions of the run, clean first (empty: clean only). */
  conditions: readonly string[];
  /** Pair keys in page order, with the jobs of each pair. */
  pairs: readonly { dataset: string; pair: string; jobs: readonly JobResult[] }[];
  /** The client script, whose hash the Content-Security-Policy allows. */
  script: string;
}

const opt = (v: string, label = v): Markup => html`<option value="${v}">${label}</option>`;

/** Everything before the embedded data's JSON text (which the caller writes next). */
export function pageHead(p: PageParts): string {
  const { info, jobs, labels, datasets, tags } = p;
  const scriptHash = createHash('sha256').update(p.script, 'utf8').digest('base64');
  const csp = `default-src 'none'; img-src data:; style-src 'unsafe-inline'; script-src 'sha256-${scriptHash}'; base-uri 'none'; form-action 'none'`;
  const title = info.name ? `parallax report: ${info.name}` : 'parallax report';
  const failedJobs = jobs.filter((j) => j.status === 'failed').length;
  const plural = (n: number, word: string): string => `${n} ${word}${n === 1 ? '' : 's'}`;
  const pairList = p.pairs.map((pair, i) => {
    const failed = pair.jobs.filter((j) => j.status === 'failed').length;
    const st = failed ? `${failed} of ${pair.jobs.length} failed` : plural(pair.jobs.length, 'configuration');
    return html`<details class="pair" data-index="${i}"><summary>${pair.dataset} / ${pair.pair}<span class="st">${st}</span></summary><div class="pairbody"></div></details>`;
  });
  const sub = `${plural(labels.length, 'configuration')} · ${plural(p.pairs.length, 'pair')} · ${datasets.join(', ')} · ${jobs.length} jobs${failedJobs ? `, ${failedJobs} failed` : ''}${info.started ? ` · started ${info.started}` : ''}`;
  return html`<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta http-equiv="Content-Security-Policy" content="${csp}">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="referrer" content="no-referrer">
<title>${title}</title>
<style>${trustedHtml(REPORT_CSS)}</style>
</head>
<body>
<header class="top">
<h1>${title}</h1>
<div class="sub">${sub}</div>
</header>
<main>
<section class="caution" aria-label="safety caution"><strong>Caution.</strong> ${SAFETY_CAUTION}</section>
<section aria-labelledby="h-rank">
<h2 id="h-rank">Ranking</h2>
<div class="controls">
<label>dataset<select id="sel-dataset">${datasets.map((d) => opt(d))}</select></label>
<label>region<select id="sel-region">${p.regions.map((r) => opt(r))}</select></label>
${p.bands.length ? html`<label>distance<select id="sel-band">${opt('all', 'all distances')}${p.bands.map((b) => opt(b))}</select></label>` : ''}
${p.conditions.length ? html`<label>condition<select id="sel-condition">${opt('', 'all conditions')}${p.conditions.map((c) => opt(c))}</select></label>` : ''}
${tags.length ? html`<label>pairs<select id="sel-tag">${opt('', 'all pairs')}${tags.map((t) => opt(t, `tagged ${t}`))}</select></label>` : ''}
<label>statistic<select id="sel-stat">${opt('mean', 'mean over pairs')}${opt('pooled', 'pooled over pixels')}</select></label>
</div>
<p class="ci">Each cell: the figure, below it its ${Math.round(DEFAULT_LEVEL * 100)} % BCa bootstrap interval (pairs, or the manifest's groups, resampled) and n = pairs the figure rests on. Rates and coverage in %. Failed jobs count as all-invalid.</p>
<div class="rank"><table id="rank-table"><caption id="rank-caption"></caption><thead></thead><tbody></tbody></table></div>
<noscript><p>The ranking, charts and pair views need JavaScript; summary.csv holds the same figures.</p></noscript>
</section>
<section aria-labelledby="h-charts">
<h2 id="h-charts">Accuracy, cost and thresholds</h2>
<div class="charts">
<figure><div id="scatter"></div><figcaption id="scatter-caption"></figcaption></figure>
<figure><div id="curves"></div><figcaption>Bad-pixel rate (% of the region's pixels with |error| above the threshold or no prediction) against the threshold, one line per configuration.</figcaption></figure>
<figure><div id="subpixel"></div><figcaption>Sub-pixel honesty, per configuration: the share of its predictions in each tenth of the fractional part (flat = honest; peaks at 0 and 1 = pulled towards whole pixels, summarised by subpix_lock in the legend), and its mean |error| by the fractional part of the truth.</figcaption></figure>
<figure><div id="flicker"></div><figcaption>Flicker against frame, per configuration, for datasets with sequences (pairs with a group and a frame): the mean over the sequences of |change of the prediction − change of the truth| from the previous frame, in px.</figcaption></figure>
<figure><div id="sparsify"></div><figcaption id="sparsify-caption">Sparsification: epe of the most confident share of the valid predictions kept, from all of them down to 5 %, one solid line per configuration with a confidence map; dashed, the same configuration's oracle (its smallest errors kept), the best any confidence could do. The closer the two, the better the confidence ranks the errors (conf_gap).</figcaption></figure>
</div>
</section>
${p.bands.length ? depthSection() : ''}
${p.kinds.length ? faultSection(p.kinds) : ''}
<section aria-labelledby="h-pairs">
<h2 id="h-pairs">Pairs</h2>
<p class="ci">Open a pair to see its left image, truth, region map and, per configuration, the disparity and the absolute error, each with its legend. Thumbnails are downscaled (block means of valid pixels); the error images compare the downscaled output with the downscaled truth. The figures beside them are the exact per-pair scores.</p>
${joinMarkup(pairList, '\n')}
</section>
<section class="prov" aria-labelledby="h-prov">
<h2 id="h-prov">Provenance</h2>
${provenance(info, jobs)}
</section>
</main>
<script type="application/json" id="plx-data">`.text;
}

/** Everything after the embedded data. */
export function pageTail(script: string): string {
  return `</script>
<script>${script}</script>
</body>
</html>
`;
}
