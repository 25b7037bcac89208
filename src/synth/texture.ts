/**
 * Procedural textures evaluated at surface coordinates (u, v) in metres. Pure functions of
 * (material parameters, u, v): the same surface point gets the same value in both views.
 */
import { fmix32 } from './prng.js';
import type { Material, Scene } from './scene.js';

export const PAT_PAINT = 0;
export const PAT_NOISE = 1;
export const PAT_SLATS = 2;
export const PAT_DOTS = 3;
export const PAT_PLANKS = 4;

/**
 * Float64 parameters per material: kind, colorA(1..3), colorB(4..6), seed(7), s1..s4(8..11),
 * and the material's offset into the shared noise lattice (12, 13) in lattice cells.
 */
export const MSTRIDE = 14;

export interface CompiledMaterials {
  readonly count: number;
  readonly m: Float64Array;
  /**
   * Per material, the NOISE_SIZE x NOISE_SIZE table of lattice values (a periodic value-noise
   * lattice). All materials share one table (building one per material cost ~1.5 ms each,
   * which dominated bulk sets of small images); each material reads it at its own seeded
   * offset (m[o + 12], m[o + 13]), so different seeds still give different fields.
   */
  readonly tables: readonly Float32Array[];
}

/** Side of the periodic noise lattice (cells). */
export const NOISE_SIZE = 256;
const NOISE_MASK = NOISE_SIZE - 1;

let SHARED: Float32Array | undefined;
/** The lattice table every material reads (built once per process). */
export function sharedTable(): Float32Array {
  SHARED ??= noiseTable(0x51ed270b);
  return SHARED;
}

/** The lattice table of one seed: hash of each (ix, iy) mapped to [0, 1). */
export function noiseTable(seed: number): Float32Array {
  const t = new Float32Array(NOISE_SIZE * NOISE_SIZE);
  for (let iy = 0; iy < NOISE_SIZE; iy++) {
    for (let ix = 0; ix < NOISE_SIZE; ix++) t[iy * NOISE_SIZE + ix] = lattice(ix, iy, seed);
  }
  return t;
}

export function compileMaterials(scene: Scene): CompiledMaterials {
  const mats = scene.materials;
  const m = new Float64Array(Math.max(1, mats.length) * MSTRIDE);
  for (let i = 0; i < mats.length; i++) {
    const q: Material = mats[i];
    const o = i * MSTRIDE;
    m[o + 1] = q.colorA[0];
    m[o + 2] = q.colorA[1];
    m[o + 3] = q.colorA[2];
    m[o + 4] = q.colorB[0];
    m[o + 5] = q.colorB[1];
    m[o + 6] = q.colorB[2];
    m[o + 7] = q.seed >>> 0;
    const pt = q.pattern;
    switch (pt.kind) {
      case 'paint':
        m[o] = PAT_PAINT;
        m[o + 8] = pt.amplitude ?? 0.02;
        m[o + 9] = pt.scale ?? 2;
        break;
      case 'noise':
        m[o] = PAT_NOISE;
        m[o + 8] = pt.scale;
        m[o + 9] = pt.octaves ?? 4;
        m[o + 10] = pt.gain ?? 0.5;
        break;
      case 'slats':
        m[o] = PAT_SLATS;
        m[o + 8] = pt.period;
        m[o + 9] = pt.duty ?? 0.5;
        m[o + 10] = pt.axis === 'v' ? 1 : 0;
        m[o + 11] = pt.grain ?? 0.15;
        break;
      case 'dots':
        m[o] = PAT_DOTS;
        m[o + 8] = pt.scale;
        m[o + 9] = pt.density ?? 0.5;
        m[o + 10] = Math.min(0.5, pt.radius ?? 0.35);
        break;
      case 'planks':
        m[o] = PAT_PLANKS;
        m[o + 8] = pt.period;
        m[o + 9] = pt.grainScale ?? 0.03;
        break;
    }
    for (let s = 8; s < 12; s++) {
      if (!Number.isFinite(m[o + s])) throw new Error(`scene ${scene.name}: material ${i} has a non-finite parameter`);
    }
    if (m[o] !== PAT_PAINT && !(m[o + 8] > 0)) throw new Error(`scene ${scene.name}: material ${i} needs a positive scale/period`);
  }
  for (let i = 0; i < mats.length; i++) {
    const seed = mats[i].seed >>> 0;
    m[i * MSTRIDE + 12] = (fmix32((seed ^ 0x2545f491) >>> 0) / 4294967296) * NOISE_SIZE;
    m[i * MSTRIDE + 13] = (fmix32((seed ^ 0x6a09e667) >>> 0) / 4294967296) * NOISE_SIZE;
  }
  const shared = sharedTable();
  const tables = mats.map(() => shared);
  return { count: mats.length, m, tables };
}

/** Uniform [0, 1) value at an integer lattice point. */
function lattice(ix: number, iy: number, seed: number): number {
  return fmix32((seed ^ Math.imul(ix, 0x27d4eb2d) ^ Math.imul(iy, 0x165667b1)) >>> 0) / 4294967296;
}

/**
 * 2-D value noise in [0, 1) with smoothstep interpolation on a unit lattice whose values
 * come from a periodic table (period NOISE_SIZE cells).
 */
export function valueNoise(table: Float32Array, x: number, y: number): number {
  const fx0 = Math.floor(x);
  const fy0 = Math.floor(y);
  const fx = x - fx0;
  const fy = y - fy0;
  const ix = fx0 & NOISE_MASK;
  const iy = fy0 & NOISE_MASK;
  const ix1 = (ix + 1) & NOISE_MASK;
  const r0 = iy * NOISE_SIZE;
  const r1 = ((iy + 1) & NOISE_MASK) * NOISE_SIZE;
  const sx = fx * fx * (3 - 2 * fx);
  const sy = fy * fy * (3 - 2 * fy);
  const a = table[r0 + ix];
  const b = table[r0 + ix1];
  const c = table[r1 + ix];
  const d = table[r1 + ix1];
  const top = a + (b - a) * sx;
  const bot = c + (d - c) * sx;
  return top + (bot - top) * sy;
}

/**
 * Fractal sum of value noise: octaves at doubling frequency with amplitudes gain^k, each
 * octave shifted by an irrational offset so the octaves' lattices do not line up; [0, 1).
 */
export function fractalNoise(table: Float32Array, x: number, y: number, octaves: number, gain: number): number {
  let sum = 0;
  let norm = 0;
  let amp = 1;
  let f = 1;
  for (let k = 0; k < octaves; k++) {
    sum += amp * valueNoise(table, x * f + k * 37.618, y * f + k * 91.414);
    norm += amp;
    amp *= gain;
    f *= 2;
  }
  return sum / norm;
}

function clamp01(t: number): number {
  return t < 0 ? 0 : t > 1 ? 1 : t;
}

/** Pattern value in [0, 1] of material index mi at (u, v). */
export function patternAt(cm: CompiledMaterials, mi: number, u: number, v: number): number {
  PAT_IO[3] = u;
  PAT_IO[4] = v;
  patternInto(cm, mi, PAT_IO);
  return PAT_IO[5];
}
const PAT_IO = new Float64Array(6);

/**
 * patternAt for the renderer's hot loop: reads (u, v) from io[3], io[4] and writes the value
 * to io[5]. Each pattern has its own small function taking only arrays and integers, so no
 * double crosses a call boundary (V8 boxes doubles passed to or returned from calls it does
 * not inline) and the small helpers inline.
 */
export function patternInto(cm: CompiledMaterials, mi: number, io: Float64Array): void {
  const m = cm.m;
  const o = mi * MSTRIDE;
  const kind = m[o];
  const table = cm.tables[mi];
  if (kind === PAT_NOISE) noiseInto(m, o, table, io);
  else if (kind === PAT_PAINT) paintInto(m, o, table, io);
  else if (kind === PAT_SLATS) slatsInto(m, o, table, io);
  else if (kind === PAT_DOTS) dotsInto(m, o, io);
  else planksInto(m, o, table, io);
}

// The pattern functions below open alike on purpose: each reads (u, v) and its own
// parameters from the packed material row at its own offsets (see MSTRIDE), in locals.
function noiseInto(m: Float64Array, o: number, table: Float32Array, io: Float64Array): void {
  const u = io[3];
  const v = io[4];
  // fractalNoise(table, u / s, v / s, octaves, gain), written out so that no double
  // crosses a call boundary in the hot loop.
  const s = m[o + 8];
  const octaves = m[o + 9];
  const gain = m[o + 10];
  const x0 = u / s;
  const y0 = v / s;
  const ox = m[o + 12];
  const oy = m[o + 13];
  let sum = 0;
  let norm = 0;
  let amp = 1;
  let f = 1;
  for (let k = 0; k < octaves; k++) {
    const x = (x0 + ox) * f + k * 37.618;
    const y = (y0 + oy) * f + k * 91.414;
    const fx0 = Math.floor(x);
    const fy0 = Math.floor(y);
    const fx = x - fx0;
    const fy = y - fy0;
    const ix = fx0 & NOISE_MASK;
    const ix1 = (ix + 1) & NOISE_MASK;
    const r0 = (fy0 & NOISE_MASK) * NOISE_SIZE;
    const r1 = ((fy0 + 1) & NOISE_MASK) * NOISE_SIZE;
    const sx = fx * fx * (3 - 2 * fx);
    const sy = fy * fy * (3 - 2 * fy);
    const a = table[r0 + ix];
    const b = table[r0 + ix1];
    const c = table[r1 + ix];
    const d = table[r1 + ix1];
    const top = a + (b - a) * sx;
    sum += amp * (top + (c + (d - c) * sx - top) * sy);
    norm += amp;
    amp *= gain;
    f *= 2;
  }
  const n = sum / norm;
  const t = 0.5 + (n - 0.5) * 2.2;
  io[5] = t < 0 ? 0 : t > 1 ? 1 : t;
}

function paintInto(m: Float64Array, o: number, table: Float32Array, io: Float64Array): void {
  const u = io[3];
  const v = io[4];
  const s = m[o + 9];
  io[5] = clamp01(0.5 + m[o + 8] * 2 * (valueNoise(table, u / s + m[o + 12], v / s + m[o + 13]) - 0.5));
}

function slatsInto(m: Float64Array, o: number, table: Float32Array, io: Float64Array): void {
  const u = io[3];
  const v = io[4];
  const period = m[o + 8];
  const c = m[o + 10] === 1 ? v : u;
  const f = c / period - Math.floor(c / period);
  const stripe = f < m[o + 9] ? 1 : 0;
  const grain = m[o + 11];
  const ns = period * 0.7;
  io[5] = clamp01(stripe * (1 - grain) + grain * valueNoise(table, u / ns + m[o + 12], v / ns + m[o + 13]));
}

function dotsInto(m: Float64Array, o: number, io: Float64Array): void {
  const u = io[3];
  const v = io[4];
  const seed = m[o + 7];
  const s = m[o + 8];
  const x = u / s;
  const y = v / s;
  const ix = Math.floor(x);
  const iy = Math.floor(y);
  if (lattice(ix, iy, seed) >= m[o + 9]) {
    io[5] = 0;
    return;
  }
  const r = m[o + 10];
  const slack = 0.5 - r;
  const jx = (lattice(ix, iy, (seed ^ 0x68bc21eb) >>> 0) - 0.5) * 2 * slack;
  const jy = (lattice(ix, iy, (seed ^ 0x02e5be93) >>> 0) - 0.5) * 2 * slack;
  const ex = x - ix - 0.5 - jx;
  const ey = y - iy - 0.5 - jy;
  io[5] = ex * ex + ey * ey <= r * r ? 1 : 0;
}

function planksInto(m: Float64Array, o: number, table: Float32Array, io: Float64Array): void {
  const u = io[3];
  const v = io[4];
  const seed = m[o + 7];
  // planks: boards of `period` along v, gaps between them, tint per board, grain along u
  const period = m[o + 8];
  const gs = m[o + 9];
  const bv = v / period;
  const board = Math.floor(bv);
  const f = bv - board;
  if (f < 0.06) {
    io[5] = 0;
    return;
  }
  const tint = lattice(board, 7, seed);
  const grain = valueNoise(table, u / (gs * 8) + m[o + 12], v / gs + m[o + 13]);
  io[5] = clamp01(0.2 + 0.45 * tint + 0.35 * grain);
}
