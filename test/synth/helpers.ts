/** Shared helpers of the synth tests (no test cases here). */
import type { Material, Primitive, Scene } from '../../src/synth/index.js';
import { lightFrom } from '../../src/synth/index.js';
import { runPython as runPy } from '../support/python.js';

/** A scene of the given primitives with one matte noise material (index 0) and a paint one (1). */
export function testScene(primitives: Primitive[], extra: Material[] = []): Scene {
  return {
    name: 'test',
    ambient: 0.4,
    lightDir: lightFrom(50, 20),
    materials: [
      { pattern: { kind: 'noise', scale: 0.3, octaves: 3 }, colorA: [0.1, 0.1, 0.1], colorB: [0.85, 0.8, 0.75], seed: 17 },
      { pattern: { kind: 'paint', amplitude: 0.02 }, colorA: [0.5, 0.5, 0.5], colorB: [0.52, 0.52, 0.52], seed: 18 },
      ...extra,
    ],
    primitives,
  };
}

/**
 * Least-squares fit d ~ a*x + b*y + c over finite samples, by the normal equations in
 * float64 (3x3 solved by Cramer's rule). Returns the coefficients and max |residual|.
 */
export function fitAffine(d: Float32Array, width: number, height: number): { a: number; b: number; c: number; maxRes: number; rms: number } {
  let sxx = 0, sxy = 0, sx = 0, syy = 0, sy = 0, n = 0, sxd = 0, syd = 0, sd = 0;
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const v = d[y * width + x];
      if (!Number.isFinite(v)) continue;
      sxx += x * x; sxy += x * y; sx += x; syy += y * y; sy += y; n++;
      sxd += x * v; syd += y * v; sd += v;
    }
  }
  const det3 = (m: number[]): number =>
    m[0] * (m[4] * m[8] - m[5] * m[7]) - m[1] * (m[3] * m[8] - m[5] * m[6]) + m[2] * (m[3] * m[7] - m[4] * m[6]);
  const M = [sxx, sxy, sx, sxy, syy, sy, sx, sy, n];
  const D = det3(M);
  const a = det3([sxd, sxy, sx, syd, syy, sy, sd, sy, n]) / D;
  const b = det3([sxx, sxd, sx, sxy, syd, sy, sx, sd, n]) / D;
  const c = det3([sxx, sxy, sxd, sxy, syy, syd, sx, sy, sd]) / D;
  let maxRes = 0;
  let ss = 0;
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const v = d[y * width + x];
      if (!Number.isFinite(v)) continue;
      const r = Math.abs(v - (a * x + b * y + c));
      ss += r * r;
      if (r > maxRes) maxRes = r;
    }
  }
  return { a, b, c, maxRes, rms: Math.sqrt(ss / n) };
}

/** Run a Python snippet with files in a temp dir; returns stdout. */
export function runPython(python: string, code: string, files: Record<string, Uint8Array>): string {
  return runPy({ code, python, files });
}

export function bytesOf(a: Float32Array | Uint8Array | Uint16Array): Uint8Array {
  return new Uint8Array(a.buffer, a.byteOffset, a.byteLength);
}

/** Luminance (BT.601) of an 8-bit RGB or gray raster as float64. */
export function luma(img: { width: number; height: number; channels: number; data: Uint8Array | Uint16Array }): Float64Array {
  const n = img.width * img.height;
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    if (img.channels === 1) out[i] = img.data[i];
    else out[i] = 0.299 * img.data[i * img.channels] + 0.587 * img.data[i * img.channels + 1] + 0.114 * img.data[i * img.channels + 2];
  }
  return out;
}
