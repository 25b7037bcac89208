/**
 * Writing synthetic datasets to disk in the manifest form of the README's "Datasets":
 *   <outDir>/dataset.json
 *   <outDir>/<pair id>/left.png, right.png     8-bit RGB (dock) or gray (random dots)
 *   <outDir>/<pair id>/truth.pfm               float32 left-referenced disparity
 *   <outDir>/<pair id>/occluded.png            8-bit gray, 255 = not visible in the right view
 * Pair files are written first and the manifest last (all atomically), so a folder with a
 * manifest is complete.
 */
import { mkdir } from 'node:fs/promises';
import { join } from 'node:path';
import type { Camera } from '../core/camera.js';
import { UsageError } from '../core/errors.js';
import { encodePfm, encodePng, encodePngDisparity, writeFileAtomic } from '../io/index.js';
import { DOCK_TAGS, DOCK_VARIANTS, dockScene, type DockVariant } from './dock.js';
import { randomDotPair } from './dots.js';
import { hash32, subSeed } from './prng.js';
import { renderPair, type StereoRender } from './render.js';
import { cameraAxes, cameraOf, DEFAULT_POSE, rigForScene } from './rig.js';
import type { Scene } from './scene.js';

export const DEMO_NAME = 'dock-demo';
export const DEMO_WIDTH = 480;
export const DEMO_HEIGHT = 360;
/** Largest demo image (the demo must render in seconds). */
export const DEMO_MAX_WIDTH = 640;
export const DEMO_MAX_HEIGHT = 480;
/** Horizontal field of view and baseline of the dock rig. */
export const DOCK_HFOV_DEG = 64;
export const DOCK_BASELINE_M = 0.12;

/** One pair of the demo set: a dock variant (with a seed offset) or the random-dot pair. */
export interface DemoPairSpec {
  readonly id: string;
  readonly kind: DockVariant | 'dots';
  readonly seedOffset: number;
  readonly group: string;
  /** Frame of a sequence: the same scene, the vehicle this many steps further forward. */
  readonly frame?: number;
}

/** How far the vehicle moves forward between the frames of the demo sequence, m. */
export const DRIVE_STEP_M = 0.25;

/** The standard demo list: seven dock pairs, one random-dot pair, and a three-frame drive towards the crates. */
export const DEMO_PAIRS: readonly DemoPairSpec[] = [
  { id: 'crates-01', kind: 'crates', seedOffset: 0, group: 'crates' },
  { id: 'crates-02', kind: 'crates', seedOffset: 1, group: 'crates' },
  { id: 'wall-01', kind: 'bare-wall', seedOffset: 2, group: 'wall' },
  { id: 'ramp-01', kind: 'ramp', seedOffset: 3, group: 'ramp' },
  { id: 'posts-01', kind: 'posts', seedOffset: 4, group: 'posts' },
  { id: 'shelving-01', kind: 'shelving', seedOffset: 5, group: 'shelving' },
  { id: 'mismatch-01', kind: 'mismatch', seedOffset: 6, group: 'mismatch' },
  { id: 'dots-01', kind: 'dots', seedOffset: 7, group: 'dots' },
  { id: 'drive-00', kind: 'crates', seedOffset: 8, group: 'drive', frame: 0 },
  { id: 'drive-01', kind: 'crates', seedOffset: 8, group: 'drive', frame: 1 },
  { id: 'drive-02', kind: 'crates', seedOffset: 8, group: 'drive', frame: 2 },
];

export interface DemoOptions {
  /** Base seed (default 1). */
  seed?: number;
  width?: number;
  height?: number;
  /**
   * Number of pairs (default: the standard list of 8). Fewer takes the first ones of the
   * list; more adds dock pairs of variants drawn from the seed (ids `extra-NN`).
   */
  pairs?: number;
  /** Samples per pixel side (default 3, i.e. 3x3). */
  samples?: number;
  /** Also write the depth-truth sets (DEPTH_DEMO_SETS) in sub-folders (default true). */
  depthSets?: boolean;
  onProgress?: (done: number, total: number) => void;
}

/**
 * The demo's depth-truth datasets, each in a sub-folder of the demo folder with its own
 * manifest (truth kind and sparseness are per dataset): the same crates scene, its truth
 * written as depth in millimetres in a 16-bit PNG (0 = no return), once dense with the
 * occlusion mask, once sparse as a scanning lidar would give it (LIDAR_ROWS scan lines,
 * every LIDAR_COLUMN_STEP-th column; no occlusion mask, so occluded is derived from the
 * samples).
 */
export const DEPTH_DEMO_SETS = [
  { folder: 'depth', name: 'dock-depth', sparse: false, id: 'crates-mm' },
  { folder: 'lidar', name: 'dock-lidar', sparse: true, id: 'crates-lidar' },
] as const;
export const LIDAR_ROWS = 48;
export const LIDAR_COLUMN_STEP = 2;
/** Seed offset of the depth sets' scene (not used by the standard list). */
const DEPTH_SEED_OFFSET = 20;

export interface SyntheticOptions {
  count: number;
  seed: number;
  width: number;
  height: number;
  name: string;
  samples?: number;
  onProgress?: (done: number, total: number) => void;
}

interface ManifestPair {
  id: string;
  left: string;
  right: string;
  truth: string;
  occlusion: string;
  tags: string[];
  group: string;
  frame?: number;
  camera?: Camera;
}

function checkSize(width: number, height: number, maxW: number, maxH: number, what: string): void {
  if (!(Number.isInteger(width) && width >= 16 && width <= maxW)) {
    throw new UsageError('width', `${what} width must be an integer in 16..${maxW}, got ${width}`);
  }
  if (!(Number.isInteger(height) && height >= 16 && height <= maxH)) {
    throw new UsageError('height', `${what} height must be an integer in 16..${maxH}, got ${height}`);
  }
}

/** Write one rendered pair's files under outDir/id/: the images, and the disparity truth and occlusion mask unless left out. */
async function writePairFiles(outDir: string, id: string, r: StereoRender, only: { truth: boolean; occlusion: boolean } = { truth: true, occlusion: true }): Promise<void> {
  const dir = join(outDir, id);
  await mkdir(dir, { recursive: true });
  const occ = new Uint8Array(r.width * r.height);
  for (let i = 0; i < occ.length; i++) occ[i] = r.occlusion[i] ? 255 : 0;
  await writeFileAtomic(join(dir, 'left.png'), encodePng(r.left));
  await writeFileAtomic(join(dir, 'right.png'), encodePng(r.right));
  if (only.truth) await writeFileAtomic(join(dir, 'truth.pfm'), encodePfm({ width: r.width, height: r.height, data: r.truth }));
  if (only.occlusion) await writeFileAtomic(join(dir, 'occluded.png'), encodePng({ width: r.width, height: r.height, channels: 1, bitDepth: 8, data: occ }));
}

function pairEntry(id: string, tags: readonly string[], group: string, camera?: Camera): ManifestPair {
  const e: ManifestPair = {
    id,
    left: `${id}/left.png`,
    right: `${id}/right.png`,
    truth: `${id}/truth.pfm`,
    occlusion: `${id}/occluded.png`,
    tags: [...tags],
    group,
  };
  if (camera) e.camera = camera;
  return e;
}

/** Track the truth's extent for the manifest's disparityRange. */
function extent(truth: Float32Array, acc: { min: number; max: number }): void {
  for (let i = 0; i < truth.length; i++) {
    const d = truth[i];
    if (d < acc.min) acc.min = d;
    if (d > acc.max) acc.max = d;
  }
}

/** [min, max] covering all truth: min floored (0 if no truth is negative), max rounded up to a multiple of 16. */
export function rangeCovering(min: number, max: number): [number, number] {
  const lo = min >= 0 ? 0 : Math.floor(min);
  const hi = Math.max(16, Math.ceil((Math.max(max, 0) + 1e-6) / 16) * 16);
  return [lo, hi];
}

/** The scene seen from its view moved `metres` along the camera's forward axis (a vehicle driving on). */
function drivenForward(scene: Scene, metres: number): Scene {
  if (metres === 0) return scene;
  const pose = scene.view ?? DEFAULT_POSE;
  const f = cameraAxes(pose).forward;
  const p = pose.position;
  // Level driving: the optical axis' horizontal part only, so the camera height stays.
  const h = Math.hypot(f[0], f[2]) || 1;
  return { ...scene, view: { ...pose, position: [p[0] + (metres * f[0]) / h, p[1], p[2] + (metres * f[2]) / h] } };
}

/** Write the bundled demo dataset (`dock-demo`) into outDir. */
export async function writeDemoDataset(outDir: string, opts: DemoOptions = {}): Promise<void> {
  const seed = (opts.seed ?? 1) >>> 0;
  const width = opts.width ?? DEMO_WIDTH;
  const height = opts.height ?? DEMO_HEIGHT;
  checkSize(width, height, DEMO_MAX_WIDTH, DEMO_MAX_HEIGHT, 'demo image');
  const count = opts.pairs ?? DEMO_PAIRS.length;
  if (!(Number.isInteger(count) && count >= 1 && count <= 1000)) {
    throw new UsageError('pairs', `number of demo pairs must be an integer in 1..1000, got ${count}`);
  }
  const specs: DemoPairSpec[] = DEMO_PAIRS.slice(0, count);
  for (let i = DEMO_PAIRS.length; i < count; i++) {
    const kind = DOCK_VARIANTS[hash32(i, 0, 0, seed) % DOCK_VARIANTS.length];
    specs.push({ id: `extra-${String(i + 1).padStart(2, '0')}`, kind, seedOffset: i, group: kind });
  }
  await mkdir(outDir, { recursive: true });
  const pairs: ManifestPair[] = [];
  const acc = { min: Infinity, max: -Infinity };
  let camera: Camera | undefined;
  const samples = opts.samples ?? 3;
  for (let i = 0; i < specs.length; i++) {
    const s = specs[i];
    const pairSeed = subSeed(seed, 1000 + s.seedOffset);
    let r: StereoRender;
    if (s.kind === 'dots') {
      r = randomDotPair({ width, height, seed: pairSeed, noiseSigma: 1 });
      pairs.push(pairEntry(s.id, ['random-dots'], s.group, r.camera));
    } else {
      const scene = drivenForward(dockScene(s.kind, pairSeed), (s.frame ?? 0) * DRIVE_STEP_M);
      const rig = rigForScene(scene, { width, height, hfovDeg: DOCK_HFOV_DEG, baselineM: DOCK_BASELINE_M });
      camera = cameraOf(rig);
      // Frames of a sequence get their own sensor noise, as consecutive exposures do.
      r = renderPair(scene, rig, { seed: subSeed(pairSeed, 9 + (s.frame ?? 0)), samples });
      pairs.push({ ...pairEntry(s.id, DOCK_TAGS[s.kind], s.group), ...(s.frame !== undefined ? { frame: s.frame } : {}) });
    }
    extent(r.truth, acc);
    await writePairFiles(outDir, s.id, r);
    opts.onProgress?.(i + 1, specs.length);
  }
  const manifest = {
    name: DEMO_NAME,
    description: 'Synthetic loading dock seen by a warehouse vehicle stereo camera, plus a random-dot pair (generated by parallax).',
    ...(camera ? { camera } : {}),
    disparityRange: rangeCovering(acc.min, acc.max),
    pairs,
  };
  await writeFileAtomic(join(outDir, 'dataset.json'), JSON.stringify(manifest, null, 2) + '\n');
  if (opts.depthSets ?? true) await writeDepthDemoSets(outDir, { seed, width, height, samples });
}

/** Depth (mm) of a disparity truth, NaN where unknown or not in front of the camera. */
export function depthMillimetres(truth: Float32Array, cam: Camera): Float32Array {
  const fb = cam.focalPx * cam.baselineM;
  return truth.map((d) => (d + cam.cxShiftPx > 0 ? (1000 * fb) / (d + cam.cxShiftPx) : NaN));
}

/** Keep the lidar's samples of a map (LIDAR_ROWS evenly spaced rows, every LIDAR_COLUMN_STEP-th column); NaN elsewhere. */
export function lidarSamples(z: Float32Array, width: number, height: number): Float32Array {
  const out = new Float32Array(z.length).fill(NaN);
  const step = height / LIDAR_ROWS;
  for (let k = 0; k < LIDAR_ROWS; k++) {
    const y = Math.min(height - 1, Math.floor((k + 0.5) * step));
    for (let x = 0; x < width; x += LIDAR_COLUMN_STEP) out[y * width + x] = z[y * width + x];
  }
  return out;
}

/** Write DEPTH_DEMO_SETS under outDir (see its comment). */
async function writeDepthDemoSets(outDir: string, o: { seed: number; width: number; height: number; samples: number }): Promise<void> {
  const scene = dockScene('crates', subSeed(o.seed, 1000 + DEPTH_SEED_OFFSET));
  const rig = rigForScene(scene, { width: o.width, height: o.height, hfovDeg: DOCK_HFOV_DEG, baselineM: DOCK_BASELINE_M });
  const camera = cameraOf(rig);
  const r = renderPair(scene, rig, { seed: subSeed(o.seed, 1000 + DEPTH_SEED_OFFSET + 9), samples: o.samples });
  const acc = { min: Infinity, max: -Infinity };
  extent(r.truth, acc);
  const zmm = depthMillimetres(r.truth, camera);
  for (const set of DEPTH_DEMO_SETS) {
    const dir = join(outDir, set.folder);
    await writePairFiles(dir, set.id, r, { truth: false, occlusion: !set.sparse });
    const truth = set.sparse ? lidarSamples(zmm, r.width, r.height) : zmm;
    await writeFileAtomic(join(dir, set.id, 'depth.png'), encodePngDisparity({ width: r.width, height: r.height, data: truth }, { scale: 1, invalid: 0, bitDepth: 16 }));
    const pair = { id: set.id, left: `${set.id}/left.png`, right: `${set.id}/right.png`, truth: `${set.id}/depth.png`, ...(set.sparse ? {} : { occlusion: `${set.id}/occluded.png` }), tags: ['depth-truth'], group: 'crates' };
    const manifest = {
      name: set.name,
      description: set.sparse
        ? 'The loading-dock crates with sparse depth truth as a scanning lidar gives it, millimetres in a 16-bit PNG (generated by parallax).'
        : 'The loading-dock crates with dense depth truth in millimetres, a 16-bit PNG (generated by parallax).',
      camera,
      truthKind: 'depth',
      depthUnit: 'mm',
      ...(set.sparse ? { sparseTruth: true } : {}),
      truthEncoding: { scale: 1, invalid: 0 },
      disparityRange: rangeCovering(acc.min, acc.max),
      pairs: [pair],
    };
    await writeFileAtomic(join(dir, 'dataset.json'), JSON.stringify(manifest, null, 2) + '\n');
  }
}

/** Write `count` dock pairs of variants drawn from the seed (bulk sets, held-out seeds). */
export async function writeSyntheticDataset(outDir: string, opts: SyntheticOptions): Promise<void> {
  const { count, width, height, name } = opts;
  const seed = opts.seed >>> 0;
  if (!(Number.isInteger(count) && count >= 1)) throw new UsageError('count', `must be a positive integer, got ${count}`);
  checkSize(width, height, 4096, 4096, 'synthetic image');
  const digits = Math.max(4, String(count).length);
  await mkdir(outDir, { recursive: true });
  const pairs: ManifestPair[] = [];
  const acc = { min: Infinity, max: -Infinity };
  let camera: Camera | undefined;
  for (let i = 0; i < count; i++) {
    const pairSeed = subSeed(seed, 5000 + i);
    const variant = DOCK_VARIANTS[hash32(i, 1, 0, seed) % DOCK_VARIANTS.length];
    const scene = dockScene(variant, pairSeed);
    const rig = rigForScene(scene, { width, height, hfovDeg: DOCK_HFOV_DEG, baselineM: DOCK_BASELINE_M });
    camera = cameraOf(rig);
    const r = renderPair(scene, rig, { seed: subSeed(pairSeed, 9), samples: opts.samples ?? 3 });
    const id = `syn-${String(i).padStart(digits, '0')}`;
    extent(r.truth, acc);
    await writePairFiles(outDir, id, r);
    pairs.push(pairEntry(id, DOCK_TAGS[variant], variant));
    opts.onProgress?.(i + 1, count);
  }
  const manifest = {
    name,
    description: `Synthetic loading-dock pairs, seed ${seed} (generated by parallax).`,
    ...(camera ? { camera } : {}),
    disparityRange: rangeCovering(acc.min, acc.max),
    pairs,
  };
  await writeFileAtomic(join(outDir, 'dataset.json'), JSON.stringify(manifest, null, 2) + '\n');
}
