/**
 * Ray-casting renderer for a rectified stereo rig.
 *
 * - Shading: n x n stratified, jittered samples per pixel (seeded hash of pixel, sample and
 *   seed), each shaded as albedo(u, v) * (ambient + (1 - ambient) * max(0, n . l)); the pixel
 *   is the mean (a box filter over the pixel footprint). Lambert shading is view-independent,
 *   so both cameras see the same radiance on the same point.
 * - Truth: the centre ray of each left pixel; d = f * B / Z - cxShiftPx (core/camera.ts), Z the
 *   depth along the optical axis. A ray that hits nothing has NaN truth (the dock scenes are
 *   closed rooms, so every ray hits a wall, floor or ceiling).
 * - Occlusion: the point seen by a left pixel centre is occluded when it projects outside the
 *   right image ([-0.5, width - 0.5] x [-0.5, height - 0.5]), lies behind the right camera, or
 *   the segment from the right camera centre to it hits a surface before it (parameter
 *   t < 1 - occlusionEpsilon along the segment).
 * - Culling: each primitive's convex hull is clipped to the near plane and projected; its
 *   screen bounding box (plus one pixel) lists it in the 8x8 pixel tiles it covers.
 */
import { disparityFromDepth, type Camera } from '../core/camera.js';
import { UsageError } from '../core/errors.js';
import type { RasterImage } from '../core/image.js';
import { compileGeometry, intersectPrimitive, newRay, surfaceAt, KIND_RECT, PSTRIDE, RAY_T, type CompiledGeometry } from './intersect.js';
import { subSeed, fmix32 } from './prng.js';
import { cameraOf, viewOf, type Rig, type View } from './rig.js';
import type { Scene } from './scene.js';
import { applySensor, type SensorModel } from './sensor.js';
import { buildTiles, NEAR, TILE, type Tiles } from './tiles.js';
import { compileMaterials, patternInto, MSTRIDE, type CompiledMaterials } from './texture.js';

export interface RenderOptions {
  /** Samples per pixel side: n x n stratified jittered samples (default 3). */
  samples?: number;
  /** Seed of the sample jitter and the sensor noise (default 1). */
  seed?: number;
  /** Sensor models; default the scene's suggestion, else DEFAULT_SENSOR. */
  left?: SensorModel;
  right?: SensorModel;
  /** Relative tolerance along the right camera's ray to the point (default 1e-6). */
  occlusionEpsilon?: number;
}

export interface StereoRender {
  readonly width: number;
  readonly height: number;
  readonly left: RasterImage;
  readonly right: RasterImage;
  /** Left-referenced truth disparity, NaN where the centre ray hits nothing. */
  readonly truth: Float32Array;
  /** 1 = occluded in the right view or outside its frame, 0 = visible (or no truth). */
  readonly occlusion: Uint8Array;
  readonly camera: Camera;
}

const RAY = newRay();
const SURF = new Float64Array(6);

/** A view's ray frame as one array: centre, right, down, forward (3 values each). */
function frameOf(view: View): Float64Array {
  return Float64Array.of(...view.centre, ...view.right, ...view.down, ...view.forward);
}

/** Points RAY from the frame's centre through image-plane offsets (a, b) (pixel offset / focal length), over (NEAR, Infinity). */
function aimRay(fr: Float64Array, a: number, b: number): void {
  RAY[0] = fr[0]!;
  RAY[1] = fr[1]!;
  RAY[2] = fr[2]!;
  RAY[3] = a * fr[3]! + b * fr[6]! + fr[9]!;
  RAY[4] = a * fr[4]! + b * fr[7]! + fr[10]!;
  RAY[5] = a * fr[5]! + b * fr[8]! + fr[11]!;
  RAY[6] = NEAR;
  RAY[7] = Infinity;
}

function nearest(g: CompiledGeometry, list: Int32Array, s0: number, s1: number, ray: Float64Array): number {
  const ox = ray[0];
  const oy = ray[1];
  const oz = ray[2];
  const dx = ray[3];
  const dy = ray[4];
  const dz = ray[5];
  const tmin = ray[6];
  let best = ray[7];
  let bi = -1;
  const kind = g.kind;
  const p = g.p;
  for (let s = s0; s < s1; s++) {
    const k = list[s];
    if (kind[k] === KIND_RECT) {
      // Inlined rect test (the common case: walls, floor, ceiling, panels).
      const o = k * PSTRIDE;
      const nx = p[o + 9];
      const ny = p[o + 10];
      const nz = p[o + 11];
      const den = dx * nx + dy * ny + dz * nz;
      if (den === 0) continue;
      const wx = p[o] - ox;
      const wy = p[o + 1] - oy;
      const wz = p[o + 2] - oz;
      const t = (wx * nx + wy * ny + wz * nz) / den;
      if (!(t > tmin && t < best)) continue;
      const qx = t * dx - wx;
      const qy = t * dy - wy;
      const qz = t * dz - wz;
      const a = qx * p[o + 12] + qy * p[o + 13] + qz * p[o + 14];
      if (a < 0 || a > 1) continue;
      const b = qx * p[o + 15] + qy * p[o + 16] + qz * p[o + 17];
      if (b < 0 || b > 1) continue;
      best = t;
      bi = k;
    } else {
      ray[7] = best;
      if (intersectPrimitive(g, k, ray)) {
        best = ray[RAY_T];
        bi = k;
      }
    }
  }
  ray[RAY_T] = best;
  return bi;
}

/** Linear RGB radiance of one view, 3 floats per pixel. */
function shadeView(
  scene: Scene,
  g: CompiledGeometry,
  cm: CompiledMaterials,
  view: View,
  tiles: Tiles,
  samples: number,
  seed: number,
): Float32Array {
  const W = view.width;
  const H = view.height;
  const out = new Float32Array(W * H * 3);
  const fr = frameOf(view);
  const inF = 1 / view.focalPx;
  const cx = view.cx;
  const cy = view.cy;
  const [lx, ly, lz] = scene.lightDir;
  const amb = scene.ambient;
  const dif = 1 - amb;
  const m = cm.m;
  const gm = g.material;
  const inN = 1 / samples;
  const norm = 1 / (samples * samples);
  const list = tiles.list;
  const start = tiles.start;
  const s32 = seed >>> 0;
  for (let ty = 0; ty < tiles.tilesY; ty++) {
    const yEnd = Math.min(H, (ty + 1) * TILE);
    for (let tx = 0; tx < tiles.tilesX; tx++) {
      const ti = ty * tiles.tilesX + tx;
      const s0 = start[ti];
      const s1 = start[ti + 1];
      const xEnd = Math.min(W, (tx + 1) * TILE);
      for (let y = ty * TILE; y < yEnd; y++) {
        for (let x = tx * TILE; x < xEnd; x++) {
          let ar = 0;
          let ag = 0;
          let ab = 0;
          for (let k = 0; k < samples * samples; k++) {
            const si = k % samples;
            const sj = (k - si) * inN;
            const h = fmix32((s32 ^ Math.imul(x, 0x27d4eb2d) ^ Math.imul(y, 0x165667b1) ^ Math.imul(k + 1, 0x9e3779b1)) >>> 0);
            const jx = (h & 0xffff) / 65536;
            const jy = (h >>> 16) / 65536;
            const a = (x - 0.5 + (si + jx) * inN - cx) * inF;
            const b = (y - 0.5 + (sj + jy) * inN - cy) * inF;
            aimRay(fr, a, b);
            const pk = nearest(g, list, s0, s1, RAY);
            if (pk < 0) continue;
            surfaceAt(g, pk, RAY, SURF);
            const mi = gm[pk];
            patternInto(cm, mi, SURF);
            const pv = SURF[5];
            const lam = SURF[0] * lx + SURF[1] * ly + SURF[2] * lz;
            const shade = amb + (lam > 0 ? dif * lam : 0);
            const mo = mi * MSTRIDE;
            ar += shade * (m[mo + 1] + (m[mo + 4] - m[mo + 1]) * pv);
            ag += shade * (m[mo + 2] + (m[mo + 5] - m[mo + 2]) * pv);
            ab += shade * (m[mo + 3] + (m[mo + 6] - m[mo + 3]) * pv);
          }
          const o = (y * W + x) * 3;
          out[o] = ar * norm;
          out[o + 1] = ag * norm;
          out[o + 2] = ab * norm;
        }
      }
    }
  }
  return out;
}

/** Depth Z (along the optical axis) of each left pixel centre's hit; Infinity for none. */
function centreDepths(g: CompiledGeometry, view: View, tiles: Tiles): Float64Array {
  const W = view.width;
  const H = view.height;
  const depth = new Float64Array(W * H);
  const fr = frameOf(view);
  const inF = 1 / view.focalPx;
  for (let y = 0; y < H; y++) {
    const b = (y - view.cy) * inF;
    const trow = Math.floor(y / TILE) * tiles.tilesX;
    for (let x = 0; x < W; x++) {
      const a = (x - view.cx) * inF;
      const ti = trow + Math.floor(x / TILE);
      aimRay(fr, a, b);
      depth[y * W + x] = nearest(g, tiles.list, tiles.start[ti], tiles.start[ti + 1], RAY) < 0 ? Infinity : RAY[RAY_T];
    }
  }
  return depth;
}

/** Occlusion of each left pixel centre's point as seen from the right camera. */
function occlusionMask(g: CompiledGeometry, left: View, right: View, rtiles: Tiles, depth: Float64Array, eps: number): Uint8Array {
  const W = left.width;
  const H = left.height;
  const occ = new Uint8Array(W * H);
  const [ox, oy, oz] = left.centre;
  const [qx, qy, qz] = right.centre;
  const [rx, ry, rz] = left.right;
  const [ex, ey, ez] = left.down;
  const [fx, fy, fz] = left.forward;
  const inF = 1 / left.focalPx;
  const f = right.focalPx;
  const list = rtiles.list;
  const start = rtiles.start;
  for (let y = 0; y < H; y++) {
    const b = (y - left.cy) * inF;
    for (let x = 0; x < W; x++) {
      const i = y * W + x;
      const t = depth[i];
      if (t === Infinity) continue;
      const a = (x - left.cx) * inF;
      // The world point, then the segment from the right centre to it.
      const px = ox + t * (a * rx + b * ex + fx);
      const py = oy + t * (a * ry + b * ey + fy);
      const pz = oz + t * (a * rz + b * ez + fz);
      const sx = px - qx;
      const sy = py - qy;
      const sz = pz - qz;
      const Zr = sx * fx + sy * fy + sz * fz;
      if (!(Zr > NEAR)) {
        occ[i] = 1;
        continue;
      }
      const xr = right.cx + (f * (sx * rx + sy * ry + sz * rz)) / Zr;
      const yr = right.cy + (f * (sx * ex + sy * ey + sz * ez)) / Zr;
      if (xr < -0.5 || xr > right.width - 0.5 || yr < -0.5 || yr > right.height - 0.5) {
        occ[i] = 1;
        continue;
      }
      const cxr = Math.min(right.width - 1, Math.max(0, Math.round(xr)));
      const cyr = Math.min(right.height - 1, Math.max(0, Math.round(yr)));
      const ti = Math.floor(cyr / TILE) * rtiles.tilesX + Math.floor(cxr / TILE);
      const s1 = start[ti + 1];
      RAY[0] = qx;
      RAY[1] = qy;
      RAY[2] = qz;
      RAY[3] = sx;
      RAY[4] = sy;
      RAY[5] = sz;
      RAY[6] = NEAR / Zr;
      for (let s = start[ti]; s < s1; s++) {
        RAY[7] = 1 - eps;
        if (intersectPrimitive(g, list[s], RAY)) {
          occ[i] = 1;
          break;
        }
      }
    }
  }
  return occ;
}

/** Render the left and right images, truth disparity and occlusion mask of a scene. */
export function renderPair(scene: Scene, rig: Rig, opts: RenderOptions = {}): StereoRender {
  const samples = opts.samples ?? 3;
  if (!(Number.isInteger(samples) && samples >= 1 && samples <= 16)) {
    throw new UsageError('samples', `must be an integer in 1..16, got ${samples}`);
  }
  const seed = (opts.seed ?? 1) >>> 0;
  const g = compileGeometry(scene);
  const cm = compileMaterials(scene);
  for (let i = 0; i < g.count; i++) {
    if (g.material[i] < 0 || g.material[i] >= cm.count) throw new Error(`scene ${scene.name}: primitive ${i} has no material ${g.material[i]}`);
  }
  const lv = viewOf(rig, 'left');
  const rv = viewOf(rig, 'right');
  const lt = buildTiles(scene, lv);
  const rt = buildTiles(scene, rv);
  const lrad = shadeView(scene, g, cm, lv, lt, samples, subSeed(seed, 1));
  const rrad = shadeView(scene, g, cm, rv, rt, samples, subSeed(seed, 2));
  const depth = centreDepths(g, lv, lt);
  const W = rig.width;
  const H = rig.height;
  const truth = new Float32Array(W * H);
  const cam = cameraOf(rig);
  for (let i = 0; i < W * H; i++) {
    const z = depth[i];
    truth[i] = z === Infinity ? NaN : disparityFromDepth(cam, z);
  }
  const occlusion = occlusionMask(g, lv, rv, rt, depth, opts.occlusionEpsilon ?? 1e-6);
  const left = applySensor(lrad, W, H, opts.left ?? scene.sensors?.left, subSeed(seed, 3));
  const right = applySensor(rrad, W, H, opts.right ?? scene.sensors?.right, subSeed(seed, 4));
  return { width: W, height: H, left, right, truth, occlusion, camera: cam };
}
