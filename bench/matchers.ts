/**
 * `npm run bench -- matchers`: speed and accuracy of the built-in matchers next to
 * OpenCV's StereoBM and StereoSGBM (8 paths, MODE_HH).
 *
 * Pairs: the demo dataset (datasets/demo, rendered into a temporary folder with
 * src/synth's writeDemoDataset when it is missing) and one 1280x720 loading-dock pair
 * with 128 disparity levels rendered here with src/synth.
 * Speed: wall time of the best of 3 matches (bp: 1) after a warm-up run on the same pair (ours: the
 * plugin's match(); OpenCV: the time_ms its long-lived server reports for compute(),
 * after a warm-up request), and million disparity evaluations per second
 * (width * height * levels / time).
 * Accuracy: `visible` over2px (scored by src/metrics scorePair on src/dataset
 * buildRegions), mean over the demo pairs.
 * PARALLAX_BENCH_MATCHERS=sgm,sgbm (ids: block, census, sgm, bp, bm, sgbm) runs a subset.
 */
import { spawn, type ChildProcessWithoutNullStreams } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { cpus, loadavg, tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { createInterface } from 'node:readline';
import { toLuminance, type RasterImage } from '../src/core/image.js';
import { DEFAULT_REGION_PARAMS, type RegionMap } from '../src/core/regions.js';
import { loadPair } from '../src/dataset/load.js';
import { loadManifest, sortedPairs } from '../src/dataset/manifest.js';
import { buildRegions } from '../src/dataset/regions.js';
import { decodePfm } from '../src/io/pfm.js';
import { encodePng } from '../src/io/png.js';
import { scorePair } from '../src/metrics/score.js';
import { withDefaults, type MatcherPlugin, type MatchInput, type ParamValues } from '../src/core/matcher.js';
import { BUILTIN_MATCHERS } from '../matchers/index.js';
import { sgmStageTimes } from '../matchers/sgm/index.js';
import { toolRoot } from '../src/io/package.js';

/** One pair in memory, with the files OpenCV reads. */
interface BenchPair {
  id: string;
  width: number;
  height: number;
  left: Float32Array;
  right: Float32Array;
  leftFile: string;
  rightFile: string;
  truth: Float32Array;
  regions: RegionMap;
  minD: number;
  maxD: number;
}

interface Config {
  label: string;
  id: string;
  params: ParamValues;
}

/** src/synth, imported by name at run time; the few members used here are typed locally. */
const SYNTH: string = '../src/synth/index.js';
interface SynthApi {
  writeDemoDataset(out: string, o?: object): Promise<void>;
  dockScene(variant: string, seed: number): object;
  rigForScene(scene: object, o: { width: number; height: number; hfovDeg?: number; baselineM?: number }): object;
  renderPair(
    scene: object,
    rig: object,
    o?: { seed?: number; samples?: number },
  ): { width: number; height: number; left: RasterImage; right: RasterImage; truth: Float32Array; occlusion: Uint8Array };
}
async function synth(): Promise<SynthApi> {
  return (await import(SYNTH)) as SynthApi;
}

const OURS: Config[] = [
  { label: 'block sad', id: 'block', params: { cost: 'sad' } },
  { label: 'block zncc', id: 'block', params: { cost: 'zncc' } },
  { label: 'census', id: 'census', params: {} },
  { label: 'sgm (8 paths)', id: 'sgm', params: { paths: '8' } },
  { label: 'bp', id: 'bp', params: {} },
];

function repoRoot(): string {
  const root = toolRoot();
  if (!root) throw new Error('bench: package.json not found');
  return root;
}

function fmt(x: number | null | undefined, digits = 1): string {
  return x === null || x === undefined || !Number.isFinite(x) ? 'n/a' : x.toFixed(digits);
}

function regionsOf(truth: Float32Array, gray: Float32Array, occ: Uint8Array | undefined, w: number, h: number): RegionMap {
  return buildRegions({ truth: truth, leftGray: gray, width: w, height: h, occlusion: occ }, { ...DEFAULT_REGION_PARAMS });
}

/** Demo pairs: datasets/demo, or a fresh rendering into `tmp`. */
async function demoPairs(root: string, tmp: string): Promise<{ pairs: BenchPair[]; source: string }> {
  let dir = join(root, 'datasets', 'demo');
  let source = 'datasets/demo';
  if (!existsSync(join(dir, 'dataset.json'))) {
    dir = join(tmp, 'demo');
    await (await synth()).writeDemoDataset(dir, {});
    source = 'rendered with src/synth writeDemoDataset (datasets/demo missing)';
  }
  const m = loadManifest(dir);
  const pairs: BenchPair[] = [];
  for (const e of sortedPairs(m)) {
    const p = await loadPair(m, e);
    pairs.push({
      id: p.id,
      width: p.width,
      height: p.height,
      left: p.leftGray,
      right: p.rightGray,
      leftFile: e.left,
      rightFile: e.right,
      truth: p.truth.data,
      regions: regionsOf(p.truth.data, p.leftGray, p.occlusion, p.width, p.height),
      minD: Math.ceil(p.disparityRange[0]),
      maxD: Math.floor(p.disparityRange[1]),
    });
  }
  return { pairs, source };
}

/** One 1280x720 dock pair with 128 levels [0, 127], rendered with src/synth. */
async function largePair(tmp: string): Promise<BenchPair> {
  const r = await renderLargeDockPair(1280, 720, 127);
  const leftFile = join(tmp, 'large-left.png');
  const rightFile = join(tmp, 'large-right.png');
  writeFileSync(leftFile, encodePng(r.left));
  writeFileSync(rightFile, encodePng(r.right));
  const left = toLuminance(r.left);
  const right = toLuminance(r.right);
  return {
    id: 'dock-1280x720',
    width: r.width,
    height: r.height,
    left,
    right,
    leftFile,
    rightFile,
    truth: r.truth,
    regions: regionsOf(r.truth, left, r.occlusion, r.width, r.height),
    minD: 0,
    maxD: 127,
  };
}

/** Renders the 1280x720 pair (see renderLargeDockPair below). */
async function renderLargeDockPair(
  width: number,
  height: number,
  maxD: number,
): Promise<{ width: number; height: number; left: RasterImage; right: RasterImage; truth: Float32Array; occlusion: Uint8Array }> {
  const s = await synth();
  // a crates scene (clutter and jumps), seed fixed here, rig as the demo set's (64 deg, 0.12 m)
  const scene = s.dockScene('crates', 4242);
  const r = s.renderPair(scene, s.rigForScene(scene, { width, height, hfovDeg: 64, baselineM: 0.12 }), { seed: 4242, samples: 2 });
  let mx = 0;
  for (const v of r.truth) if (v > mx) mx = v;
  if (mx > maxD) throw new Error(`bench: the large pair's truth reaches ${mx.toFixed(1)} px, beyond ${maxD}`);
  return r;
}

function plugin(id: string): MatcherPlugin {
  const p = BUILTIN_MATCHERS.find((m) => m.id === id);
  if (!p) throw new Error(`bench: built-in matcher ${id} not found`);
  return p;
}

async function runOurs(c: Config, p: BenchPair): Promise<{ ms: number; disp: Float32Array }> {
  const pl = plugin(c.id);
  const params = withDefaults(pl.params, c.params);
  const input: MatchInput = {
    width: p.width,
    height: p.height,
    left: p.left,
    right: p.right,
    minDisparity: p.minD,
    maxDisparity: p.maxD,
  };
  const signal = new AbortController().signal;
  const t0 = performance.now();
  const out = await pl.match(input, params, signal);
  const ms = performance.now() - t0;
  const disp = out instanceof Float32Array ? out : out.disparity;
  return { ms, disp };
}

/** OpenCV's long-lived example server (matchers/examples/opencv_stereo.py). */
class OpenCvServer {
  private proc: ChildProcessWithoutNullStreams;
  private lines: AsyncIterableIterator<string>;
  private n = 0;
  constructor(script: string) {
    this.proc = spawn('/usr/bin/python3', [script, '--serve'], { stdio: ['pipe', 'pipe', 'pipe'] });
    this.proc.stderr.resume();
    this.lines = createInterface({ input: this.proc.stdout })[Symbol.asyncIterator]();
  }
  async match(
    p: BenchPair,
    params: Record<string, string | number>,
    out: string,
  ): Promise<{ ms: number; disp: Float32Array }> {
    const id = `r${this.n++}`;
    const req = { id, left: p.leftFile, right: p.rightFile, out, minDisparity: p.minD, maxDisparity: p.maxD, params };
    this.proc.stdin.write(`${JSON.stringify(req)}\n`);
    const next = await this.lines.next();
    if (next.done) throw new Error('opencv_stereo.py ended');
    const reply = JSON.parse(next.value) as { ok: boolean; time_ms?: number; error?: string };
    if (!reply.ok) throw new Error(`opencv_stereo.py: ${reply.error}`);
    const img = decodePfm(readFileSync(out), out);
    return { ms: reply.time_ms ?? NaN, disp: img.data };
  }
  close(): void {
    this.proc.stdin.end();
  }
}

function visibleOver2(disp: Float32Array, p: BenchPair): number | null {
  const s = scorePair(disp, p.truth, p.regions, { thresholds: [2], quantiles: [] });
  return s.visible.figures.rates[0];
}

function mdeps(p: BenchPair, ms: number): number {
  return (p.width * p.height * (p.maxD - p.minD + 1)) / (ms * 1000);
}

export default async function (): Promise<void> {
  const root = repoRoot();
  const tmp = mkdtempSync(join(tmpdir(), 'parallax-bench-matchers-'));
  const log = (s: string): void => void process.stdout.write(`${s}\n`);
  try {
    const load0 = loadavg()[0];
    const demo = await demoPairs(root, tmp);
    const large = await largePair(tmp);
    const script = resolve(root, 'matchers', 'examples', 'opencv_stereo.py');
    const haveCv = existsSync(script) && existsSync('/usr/bin/python3');
    const cv = haveCv ? new OpenCvServer(script) : null;
    const CV: Config[] = [
      { label: 'OpenCV StereoBM', id: 'bm', params: { algo: 'bm', blockSize: 9 } },
      { label: 'OpenCV StereoSGBM (MODE_HH)', id: 'sgbm', params: { algo: 'sgbm', blockSize: 5 } },
    ];
    log(`Machine: ${cpus().length} cores (${cpus()[0]?.model ?? '?'}), Node ${process.version}; ` +
      `load average ${fmt(load0, 2)} at the start (the machine may be shared with other work).`);
    log(`Demo pairs: ${demo.pairs.length} (${demo.source}); large pair: ${large.width}x${large.height}, ` +
      `levels ${large.maxD - large.minD + 1}. Times: best of 3 runs (bp: 1) after a warm-up run on the same pair.`);
    log('');

    type Row = { label: string; demoMs: number; demoMde: number; largeMs: number; largeMde: number; over2: number };
    const rows: Row[] = [];
    let sgmStages = '';
    // PARALLAX_BENCH_MATCHERS=sgm,sgbm limits the run to those ids (block, census, sgm, bp, bm, sgbm)
    const onlyText = process.env.PARALLAX_BENCH_MATCHERS?.trim();
    const only = onlyText ? onlyText.split(',').map((x) => x.trim()) : undefined;
    const all = [...OURS.map((c) => ({ c, ours: true })), ...(cv ? CV.map((c) => ({ c, ours: false })) : [])].filter(
      ({ c }) => !only || only.includes(c.id),
    );
    for (const { c, ours } of all) {
      let demoMs = 0;
      let demoMde = 0;
      let over2Sum = 0;
      let over2N = 0;
      const run = async (p: BenchPair): Promise<{ ms: number; disp: Float32Array }> =>
        ours ? runOurs(c, p) : cv!.match(p, c.params as Record<string, string | number>, join(tmp, `${c.id}-${p.id}.pfm`));
      // best of `reps` timed runs after one warm-up run (the machine may be shared)
      const reps = c.id === 'bp' ? 1 : 3;
      const timed = async (p: BenchPair): Promise<{ ms: number; disp: Float32Array }> => {
        await run(p); // warm-up
        let best = await run(p);
        for (let i = 1; i < reps; i++) {
          const r = await run(p);
          if (r.ms < best.ms) best = r;
        }
        return best;
      };
      for (const p of demo.pairs) {
        const r = await timed(p);
        demoMs += r.ms;
        demoMde += mdeps(p, r.ms);
        const v = visibleOver2(r.disp, p);
        if (v !== null) {
          over2Sum += v;
          over2N++;
        }
      }
      const r = await timed(large);
      if (c.id === 'sgm') {
        sgmStages = Object.entries(sgmStageTimes)
          .map(([k, v]) => `${k} ${v.toFixed(0)} ms`)
          .join(', ');
      }
      rows.push({
        label: c.label,
        demoMs: demoMs / demo.pairs.length,
        demoMde: demoMde / demo.pairs.length,
        largeMs: r.ms,
        largeMde: mdeps(large, r.ms),
        over2: over2N ? over2Sum / over2N : NaN,
      });
      process.stderr.write(`bench matchers: ${c.label} done\n`);
    }
    cv?.close();

    log('| matcher | demo: ms per pair | demo: M disparities/s | 1280x720x128: ms | 1280x720x128: M disparities/s | demo `visible` over2px, mean % |');
    log('|---|---:|---:|---:|---:|---:|');
    for (const r of rows) {
      log(`| ${r.label} | ${fmt(r.demoMs, 0)} | ${fmt(r.demoMde)} | ${fmt(r.largeMs, 0)} | ${fmt(r.largeMde)} | ${fmt(r.over2, 2)} |`);
    }
    log('');
    if (sgmStages) log(`sgm stages on the large pair: ${sgmStages}.`);
    const get = (label: string) => rows.find((r) => r.label === label);
    const sgm = get('sgm (8 paths)');
    const sgbm = get('OpenCV StereoSGBM (MODE_HH)');
    const bm = get('OpenCV StereoBM');
    const blk = get('block sad');
    if (!cv) {
      log('OpenCV comparison skipped: matchers/examples/opencv_stereo.py or /usr/bin/python3 missing.');
      return;
    }
    log('');
    log('| comparison | demo time ratio (ours / OpenCV) | large-pair time ratio | target | met |');
    log('|---|---:|---:|---|---|');
    if (sgm && sgbm) {
      const q = sgm.largeMs / sgbm.largeMs;
      log(`| sgm 8 paths / SGBM MODE_HH | ${fmt(sgm.demoMs / sgbm.demoMs, 2)} | ${fmt(q, 2)} | <= 3 | ${q <= 3 ? 'yes' : 'no'} |`);
    }
    if (blk && bm) {
      const q = blk.largeMs / bm.largeMs;
      log(`| block sad / StereoBM | ${fmt(blk.demoMs / bm.demoMs, 2)} | ${fmt(q, 2)} | <= 5 | ${q <= 5 ? 'yes' : 'no'} |`);
    }
    if (sgm && sgbm) {
      log('');
      const ok = sgm.over2 <= sgbm.over2;
      log(`Accuracy on the demo set (\`visible\` over2px, mean over pairs, lower is better): sgm ${fmt(sgm.over2, 2)} % ` +
        `vs SGBM ${fmt(sgbm.over2, 2)} % — target "no worse": ${ok ? 'met' : 'not met'}.`);
    }
  } finally {
    rmSync(tmp, { recursive: true, force: true });
  }
}
