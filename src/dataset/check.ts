/**
 * `parallax dataset check`: find every problem of a dataset, one line each.
 * Looks at the manifest (schema, duplicate ids, paths), then every pair: missing or
 * unreadable files (images, truth, occlusion, ignore and named masks), size mismatches,
 * truth outside disparityRange, and a share of invalid truth above a threshold (not for
 * truth declared sparse). The summary gives the depth range of pairs with a camera.
 *
 * Geometry and photometry (rectification.ts), per pair whose two images are readable
 * and of one size: the residual vertical misalignment of the right image against the
 * left, its spread over the image (rotation, scale), and the gain and offset between
 * the cameras. Beyond the limits they are warnings: the data can be scored, but the
 * matchers are judged on pairs that break their assumptions.
 */
import { existsSync } from 'node:fs';
import { relative } from 'node:path';
import { isParallaxError } from '../core/errors.js';
import { readImageFile, readMaskFile } from '../io/files.js';
import type { Manifest } from './manifest.js';
import { manifestPath, pairCamera, readManifestBytes, validateManifest } from './manifest.js';
import { readTruth } from './load.js';
import { depthRangeOf, joined, trueDepths } from './depth-range.js';
import type { PairEntry } from '../core/pair.js';
import { toLuminance, type RasterImage } from '../core/image.js';
import { estimateRectification, NO_ESTIMATE, type RectificationEstimate } from './rectification.js';

export interface CheckOptions {
  /** Largest acceptable share of invalid (unknown) truth pixels per pair, in % (default 50). */
  maxInvalidPercent?: number;
  maxPixels?: number;
  /** The folder the manifest's paths are relative to (`--data-root`). */
  dataRoot?: string;
  /** Estimate each pair's rectification and photometry (default true). */
  rectification?: boolean;
  /** Warn when |vshift| + spread exceeds this, px (default 0.5). */
  maxVshiftPx?: number;
  /** Warn when the gain (right over left) differs from 1 by more than this, % (default 10). */
  maxGainPercent?: number;
  /** Warn when the offset exceeds this in grey levels (default 10). */
  maxOffset?: number;
}

/** One pair's figures in `dataset check --json`: its rectification estimate (null figures when it could not be made: unreadable images, too little texture). */
export type PairCheck = { id: string } & RectificationEstimate;

export const DEFAULT_MAX_VSHIFT_PX = 0.5;
export const DEFAULT_MAX_GAIN_PERCENT = 10;
export const DEFAULT_MAX_OFFSET = 10;

export interface CheckReport {
  manifestFile: string;
  /** Dataset name when the manifest could be read. */
  name?: string;
  pairCount: number;
  /** One line per problem, each starting with the file it concerns. */
  problems: string[];
  /** Short OK summary (meaningful when there are no problems). */
  summary: string;
  /** Lines about pairs that can be scored but break a matcher's assumptions (misaligned rows, camera gain). */
  warnings: string[];
  /** Per pair figures, in manifest order. */
  pairs: PairCheck[];
}

export const DEFAULT_MAX_INVALID_PERCENT = 50;

function errorText(e: unknown): string {
  if (isParallaxError(e)) return e.message;
  return (e as Error)?.message?.split('\n')[0] ?? String(e);
}

interface Sized {
  width: number;
  height: number;
}

/** Range statistics of a truth map: invalid count, out-of-range count, finite min/max. */
export function truthStats(data: Float32Array, lo: number, hi: number): { invalid: number; outside: number; min: number; max: number } {
  let invalid = 0;
  let outside = 0;
  let min = Infinity;
  let max = -Infinity;
  for (let i = 0; i < data.length; i++) {
    const d = data[i];
    if (!Number.isFinite(d)) {
      invalid++;
      continue;
    }
    if (d < lo || d > hi) outside++;
    if (d < min) min = d;
    if (d > max) max = d;
  }
  return { invalid, outside, min, max };
}

function fmt(v: number): string {
  return Number.isFinite(v) ? String(Math.round(v * 1000) / 1000) : 'n/a';
}

interface CheckTotals {
  sizes: Set<string>;
  knownShare: number[];
  lo: number;
  hi: number;
  /** Sampled true depths of pairs with a camera (m). */
  depths: Float64Array[];
  warnings: string[];
  pairs: PairCheck[];
}

/** About this many truth pixels per pair enter the depth range. */
const DEPTH_SAMPLE_PER_PAIR = 50_000;

/** The files of a pair to read, by kind (masks as `mask <name>`). */
function pairFiles(p: PairEntry): [string, string | undefined][] {
  return [
    ['left', p.left],
    ['right', p.right],
    ['truth', p.truth],
    ['occlusion', p.occlusion],
    ['ignore', p.ignore],
    ...Object.entries(p.masks ?? {}).map(([name, f]): [string, string] => [`mask ${name}`, f]),
  ];
}

async function checkPair(m: Manifest, p: PairEntry, opts: CheckOptions, problems: string[], totals: CheckTotals): Promise<void> {
  const po = opts.maxPixels !== undefined ? { maxPixels: opts.maxPixels } : undefined;
  const rel = (f: string): string => relative(process.cwd(), f) || f;
  const read: { file: string; size: Sized }[] = [];
  const images: Partial<Record<'left' | 'right', RasterImage>> = {};
  let truth: Float32Array | undefined;
  for (const [kind, file] of pairFiles(p)) {
    if (file === undefined || file === '') continue; // optional, or a path already reported
    if (!existsSync(file)) {
      problems.push(`${rel(file)}: missing file (pair ${p.id}, ${kind})`);
      continue;
    }
    try {
      if (kind === 'truth') {
        const t = await readTruth(m, p, opts.maxPixels);
        truth = t.data;
        read.push({ file, size: t });
      } else if (kind === 'left' || kind === 'right') {
        const img = await readImageFile(file, po);
        if (opts.rectification !== false) images[kind] = img;
        read.push({ file, size: img });
      } else {
        read.push({ file, size: await readMaskFile(file, po) });
      }
    } catch (e) {
      const msg = errorText(e);
      problems.push(msg.startsWith(file) ? `${rel(file)}${msg.slice(file.length)}` : `${rel(file)}: ${msg}`);
    }
  }
  const first = read[0];
  if (first) {
    for (const r of read.slice(1)) {
      if (r.size.width !== first.size.width || r.size.height !== first.size.height) {
        problems.push(`${rel(r.file)}: size ${r.size.width}x${r.size.height} differs from ${rel(first.file)} (${first.size.width}x${first.size.height}) (pair ${p.id})`);
      }
    }
    totals.sizes.add(`${first.size.width}x${first.size.height}`);
  }
  if (opts.rectification !== false) checkGeometry(m, p, images, opts, totals);
  if (!truth) return;
  const [rlo, rhi] = m.disparityRange;
  const s = truthStats(truth, rlo, rhi);
  if (s.outside > 0) {
    problems.push(`${rel(p.truth)}: ${s.outside} truth pixel(s) outside disparityRange [${rlo}, ${rhi}] (truth spans ${fmt(s.min)} to ${fmt(s.max)}; pair ${p.id})`);
  }
  const invalidPct = truth.length ? (100 * s.invalid) / truth.length : 100;
  const maxInvalid = opts.maxInvalidPercent ?? DEFAULT_MAX_INVALID_PERCENT;
  if (invalidPct > maxInvalid && !m.sparseTruth) {
    problems.push(`${rel(p.truth)}: ${fmt(invalidPct)}% of truth pixels are invalid, above the limit of ${maxInvalid}% (pair ${p.id}; declare "sparseTruth": true if the truth is sparse by design)`);
  }
  totals.knownShare.push(100 - invalidPct);
  if (s.min < totals.lo) totals.lo = s.min;
  if (s.max > totals.hi) totals.hi = s.max;
  const camera = pairCamera(m, p);
  if (camera) totals.depths.push(trueDepths(truth, camera, Math.max(1, Math.floor(truth.length / DEPTH_SAMPLE_PER_PAIR))));
}

const f2 = (v: number): string => v.toFixed(2);

/** The rectification and photometric estimate of a pair, with its warnings (see the file comment). */
function checkGeometry(m: Manifest, p: PairEntry, images: Partial<Record<'left' | 'right', RasterImage>>, opts: CheckOptions, totals: CheckTotals): void {
  const { left, right } = images;
  const e: RectificationEstimate =
    left && right && left.width === right.width && left.height === right.height
      ? estimateRectification(toLuminance(left), toLuminance(right), left.width, left.height, { minDisparity: m.disparityRange[0], maxDisparity: m.disparityRange[1] })
      : NO_ESTIMATE;
  totals.pairs.push({ id: p.id, ...e });
  const rel = relative(process.cwd(), p.right) || p.right;
  const maxV = opts.maxVshiftPx ?? DEFAULT_MAX_VSHIFT_PX;
  if (e.vshift_px !== null && Math.abs(e.vshift_px) + (e.vshift_spread_px ?? 0) > maxV) {
    const where = e.vshift_px >= 0 ? 'lower' : 'higher';
    totals.warnings.push(`${rel}: rows misaligned: the right image's content sits ${f2(Math.abs(e.vshift_px))} px ${where} than the left's (median of ${e.points} points; ±${f2(e.vshift_spread_px ?? 0)} px over the image, rotation ${f2(e.rotation_mrad ?? 0)} mrad), above ${maxV} px (pair ${p.id})`);
  }
  if (e.gain === null || e.offset === null || !e.grey_range) return;
  // Gain and offset trade against each other over a narrow grey range: a limit counts only
  // where the brightness difference the fit predicts, at either end of that range, exceeds the offset limit.
  const maxG = opts.maxGainPercent ?? DEFAULT_MAX_GAIN_PERCENT;
  const maxO = opts.maxOffset ?? DEFAULT_MAX_OFFSET;
  const [g0, g1] = e.grey_range;
  const diff = Math.max(...[g0, g1].map((v) => Math.abs(e.gain! * v + e.offset! - v)));
  const beyond = [Math.abs(e.gain - 1) * 100 > maxG ? `gain beyond ±${maxG} %` : '', Math.abs(e.offset) > maxO ? `offset beyond ±${maxO}` : ''].filter(Boolean);
  if (beyond.length && diff > maxO) {
    totals.warnings.push(`${rel}: cameras differ in brightness: right = ${f2(e.gain)} x left ${e.offset < 0 ? '-' : '+'} ${f2(Math.abs(e.offset))} grey levels (${beyond.join(', ')}; up to ${f2(diff)} grey levels apart over grey ${Math.round(g0)}-${Math.round(g1)}) (pair ${p.id})`);
  }
}

/** The depth range in words: "depth 1.87 to 13.7 m (2nd-98th percentile 2.11 to 12.3 m)". */
function depthText(depths: Float64Array[]): string {
  const r = depthRangeOf(joined(depths));
  const m = (v: number): string => String(Number(v.toPrecision(3)));
  return r ? `, depth ${m(r.min)} to ${m(r.max)} m (2nd-98th percentile ${m(r.near)} to ${m(r.far)} m)` : '';
}

/** The worst vertical misalignment and gain in words: ", rows within 0.04 px (worst pair crates-02), gain 0.99 to 1.01". */
function geometryText(pairs: readonly PairCheck[]): string {
  const est = pairs.filter((p) => p.vshift_px !== null);
  if (!est.length) return '';
  const worst = est.reduce((a, b) => (Math.abs(b.vshift_px!) + (b.vshift_spread_px ?? 0) > Math.abs(a.vshift_px!) + (a.vshift_spread_px ?? 0) ? b : a));
  const gains = est.map((p) => p.gain).filter((g): g is number => g !== null);
  const gainText = gains.length ? `, gain right/left ${f2(Math.min(...gains))} to ${f2(Math.max(...gains))}` : '';
  return `, rows aligned within ${f2(Math.abs(worst.vshift_px!) + (worst.vshift_spread_px ?? 0))} px (worst pair ${worst.id}; ${est.length} of ${pairs.length} pair(s) estimated)${gainText}`;
}

/** Check a dataset folder or manifest. Never throws for dataset problems: they are listed. */
export async function checkDataset(pathOrDir: string, opts: CheckOptions = {}): Promise<CheckReport> {
  const file = manifestPath(pathOrDir);
  const shownFile = relative(process.cwd(), file) || file;
  const problems: string[] = [];
  let text: string;
  try {
    text = readManifestBytes(file).toString('utf8');
  } catch (e) {
    return { manifestFile: file, pairCount: 0, problems: [errorText(e)], summary: '', warnings: [], pairs: [] };
  }
  const v = validateManifest(text, file, opts.dataRoot !== undefined ? { dataRoot: opts.dataRoot } : {});
  for (const pr of v.problems) problems.push(`${shownFile}: ${pr}`);
  const m = v.manifest ?? v.partial;
  if (!m) return { manifestFile: file, pairCount: 0, problems, summary: '', warnings: [], pairs: [] };
  const st: CheckTotals = { sizes: new Set(), knownShare: [], lo: Infinity, hi: -Infinity, depths: [], warnings: [], pairs: [] };
  for (const p of m.pairs) await checkPair(m, p, opts, problems, st);
  const meanKnown = st.knownShare.length ? st.knownShare.reduce((a, b) => a + b, 0) / st.knownShare.length : 0;
  const summary =
    `${m.name}: ${m.pairs.length} pair(s), size ${[...st.sizes].join(', ') || 'n/a'}, ` +
    `disparityRange [${m.disparityRange[0]}, ${m.disparityRange[1]}], truth spans ${fmt(st.lo)} to ${fmt(st.hi)}, ` +
    `known truth ${fmt(meanKnown)}% on average${m.sparseTruth ? ' (sparse by design)' : ''}` +
    depthText(st.depths);
  return { manifestFile: file, name: m.name, pairCount: m.pairs.length, problems, summary: summary + geometryText(st.pairs), warnings: st.warnings, pairs: st.pairs };
}
