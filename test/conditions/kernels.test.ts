/**
 * The camera-fault kernels against outside references:
 * - blur: OpenCV's GaussianBlur (Debian's python3-opencv) with the same kernel size and
 *   sigma and its default border (BORDER_REFLECT_101), which samples the same
 *   exp(-x^2 / 2 sigma^2) kernel (OpenCV documentation of getGaussianKernel);
 * - sub-pixel shift and rotation: OpenCV's warpAffine, INTER_LINEAR, BORDER_REPLICATE.
 *   OpenCV rounds source positions to 1/32 px (INTER_BITS = 5, from its documentation),
 *   so the shifts tested are multiples of 1/32 and the rotation has a looser tolerance;
 * - area downscaling: OpenCV's resize with INTER_AREA;
 * - noise: the applied noise's mean and standard deviation within sampling error of the
 *   stated model (standard error of a mean s/sqrt(n) and of a standard deviation
 *   ~ s/sqrt(2n), textbook results for normal samples);
 * - compression: jpeg-js's own decode of its own encode.
 */
import { describe, expect, it } from 'vitest';
import jpeg from 'jpeg-js';
import { areaResample, blurPlane, faultWarp, gaussianRadius, noiseField, noiseSigmaAt, warpAffinePlane } from '../../src/conditions/kernels.js';
import { applyCondition, jpegRoundTrip, scaledPair } from '../../src/conditions/apply.js';
import { depthFromDisparity } from '../../src/core/camera.js';
import { toLuminance } from '../../src/core/image.js';
import type { LoadedPair } from '../../src/core/pair.js';
import { mulberry32 } from '../../src/core/prng.js';
import { DEBIAN_PYTHON, runPython } from '../support/python.js';

const W = 41;
const H = 29;

function randomImage(seed: number, w = W, h = H): Float32Array {
  const r = mulberry32(seed);
  return Float32Array.from({ length: w * h }, () => r() * 255);
}

/** A smooth image (sums of sines): bilinear rounding errors stay small on it. */
function smoothImage(w = W, h = H): Float32Array {
  const out = new Float32Array(w * h);
  for (let y = 0; y < h; y++) for (let x = 0; x < w; x++) out[y * w + x] = 128 + 60 * Math.sin(x / 5) + 40 * Math.cos(y / 4 + x / 9);
  return out;
}

function opencv(code: string, img: Float32Array, w = W, h = H): Float32Array {
  const out = runPython({
    python: DEBIAN_PYTHON,
    files: { 'img.f32': img },
    code: `import sys, numpy as np, cv2
img = np.fromfile(sys.argv[1] + '/img.f32', dtype=np.float32).reshape(${h}, ${w})
${code}
sys.stdout.write(out.astype(np.float32).tobytes().hex())`,
  });
  const buf = Buffer.from(out.trim(), 'hex');
  return new Float32Array(buf.buffer, buf.byteOffset, buf.byteLength / 4);
}

function maxAbsDiff(a: Float32Array, b: Float32Array): number {
  expect(a.length).toBe(b.length);
  let m = 0;
  for (let i = 0; i < a.length; i++) m = Math.max(m, Math.abs(a[i] - b[i]));
  return m;
}

describe('defocus blur', () => {
  it.each([0.8, 1.5, 2.5])('equals OpenCV GaussianBlur at sigma %s', (sigma) => {
    const img = randomImage(7);
    const k = 2 * gaussianRadius(sigma) + 1;
    const ref = opencv(`out = cv2.GaussianBlur(img, (${k}, ${k}), ${sigma}, sigmaY=${sigma}, borderType=cv2.BORDER_REFLECT_101)`, img);
    expect(maxAbsDiff(blurPlane(img, W, H, sigma), ref)).toBeLessThan(2e-3);
  });
});

describe('vertical shift and rotation', () => {
  it.each([0.25, -0.40625, 1.5])('a shift of %s px equals OpenCV warpAffine', (v) => {
    const img = randomImage(11);
    const m = faultWarp(W, H, v, 0);
    // Our map sends output pixels to source positions: OpenCV's WARP_INVERSE_MAP takes that form.
    const ref = opencv(`M = np.array([${m.slice(0, 3).join(',')}, ${m.slice(3).join(',')}], dtype=np.float64).reshape(2, 3)
out = cv2.warpAffine(img, M, (${W}, ${H}), flags=cv2.INTER_LINEAR | cv2.WARP_INVERSE_MAP, borderMode=cv2.BORDER_REPLICATE)`, img);
    expect(maxAbsDiff(warpAffinePlane(img, W, H, m), ref)).toBeLessThan(2e-3);
  });

  it('content moves down for a positive shift', () => {
    const img = new Float32Array(W * H);
    img[10 * W + 5] = 100;
    const out = warpAffinePlane(img, W, H, faultWarp(W, H, 1, 0));
    expect(out[11 * W + 5]).toBeCloseTo(100, 5);
    expect(out[10 * W + 5]).toBeCloseTo(0, 5);
  });

  it('a rotation of 20 mrad equals OpenCV warpAffine (to its 1/32 px rounding)', () => {
    const img = smoothImage();
    const m = faultWarp(W, H, 0, 20);
    const ref = opencv(`M = np.array([${m.join(',')}], dtype=np.float64).reshape(2, 3)
out = cv2.warpAffine(img, M, (${W}, ${H}), flags=cv2.INTER_LINEAR | cv2.WARP_INVERSE_MAP, borderMode=cv2.BORDER_REPLICATE)`, img);
    // Largest gradient of smoothImage ~ 60/5 + 40/4 + 40/9 ~ 26 grey levels/px; 1/64 px of rounding -> ~0.4.
    expect(maxAbsDiff(warpAffinePlane(img, W, H, m), ref)).toBeLessThan(0.5);
  });

  it('rotates counter-clockwise on screen for a positive angle', () => {
    // A point right of the centre moves up (smaller y) under a counter-clockwise turn with y down.
    const w = 101;
    const h = 101;
    const img = new Float32Array(w * h);
    img[50 * w + 90] = 100;
    const out = warpAffinePlane(img, w, h, faultWarp(w, h, 0, Math.atan(1 / 40) * 1000));
    let best = 0;
    for (let i = 1; i < out.length; i++) if (out[i] > out[best]) best = i;
    expect([Math.floor(best / w), best % w]).toEqual([49, 90]);
  });
});

describe('area downscaling', () => {
  it.each([
    [20, 14],
    [16, 12],
  ])('equals OpenCV resize INTER_AREA to %sx%s', (w2, h2) => {
    const img = randomImage(3);
    const ref = opencv(`out = cv2.resize(img, (${w2}, ${h2}), interpolation=cv2.INTER_AREA)`, img);
    expect(maxAbsDiff(areaResample(img, W, H, w2, h2), ref)).toBeLessThan(2e-3);
  });
});

describe('sensor noise', () => {
  it.each([
    [4, 64],
    [4, 200],
    [10, 0],
  ])('sigma %s at grey %s: mean 0 and the model sigma within sampling error', (s, grey) => {
    const n = 200_000;
    const field = noiseField(new Float32Array(n).fill(grey), s, mulberry32(5));
    let sum = 0;
    let sq = 0;
    for (const v of field) {
      sum += v;
      sq += v * v;
    }
    const mean = sum / n;
    const sd = Math.sqrt(sq / n - mean * mean);
    const sigma = noiseSigmaAt(s, grey);
    expect(sigma).toBeCloseTo(Math.sqrt((s * s) / 2 * (1 + grey / 128)), 12);
    expect(Math.abs(mean)).toBeLessThan((5 * sigma) / Math.sqrt(n));
    expect(Math.abs(sd - sigma)).toBeLessThan((5 * sigma) / Math.sqrt(2 * n));
  });

  it('is the stated sigma at mid grey', () => {
    expect(noiseSigmaAt(4, 128)).toBeCloseTo(4, 12);
  });
});

describe('compression', () => {
  it("equals jpeg-js's decode of its encode, and loses more at lower quality", () => {
    const w = 48;
    const h = 32;
    const gray = randomImage(9, w, h).map((v, i) => 0.5 * v + 60 * Math.sin(i / 7));
    const data = Uint8Array.from(gray, (v) => Math.max(0, Math.min(255, Math.round(v))));
    const img = { width: w, height: h, channels: 1 as const, bitDepth: 8 as const, data };
    const rgba = Buffer.alloc(w * h * 4);
    for (let i = 0; i < w * h; i++) rgba.set([data[i], data[i], data[i], 255], i * 4);
    const errs: number[] = [];
    for (const q of [90, 30]) {
      const ref = jpeg.decode(jpeg.encode({ width: w, height: h, data: rgba }, q).data, { useTArray: true });
      const got = jpegRoundTrip(img, q);
      expect(got.channels).toBe(1);
      for (let i = 0; i < w * h; i++) expect(got.data[i]).toBe(ref.data[i * 4]);
      errs.push(data.reduce((a, v, i) => a + Math.abs(v - got.data[i]), 0) / data.length);
    }
    expect(errs[1]).toBeGreaterThan(errs[0]);
  });
});

describe('a pair under a condition', () => {
  function pair(): LoadedPair {
    const w = 8;
    const h = 6;
    const data = Uint8Array.from({ length: w * h * 3 }, (_, i) => (i * 37) % 200);
    const img = { width: w, height: h, channels: 3 as const, bitDepth: 8 as const, data };
    const truth = Float32Array.from({ length: w * h }, (_, i) => 4 + (i % w));
    const f = '/nonexistent';
    return {
      dataset: 'd',
      id: 'p',
      width: w,
      height: h,
      left: img,
      right: { ...img, data: data.slice() },
      leftGray: toLuminance(img),
      rightGray: toLuminance(img),
      truth: { width: w, height: h, data: truth },
      occlusion: Uint8Array.from({ length: w * h }, (_, i) => (i % 3 === 0 ? 1 : 0)),
      camera: { focalPx: 100, baselineM: 0.1, cxShiftPx: 2 },
      disparityRange: [0, 13],
      files: { id: 'p', left: f, right: f, truth: f },
    };
  }

  it('scale: half size, disparities halved, the depth of every sampled truth pixel unchanged (Z = f B / (d + s))', () => {
    const p = pair();
    const s = scaledPair(p, 0.5);
    expect([s.width, s.height, s.left.width, s.truth.width]).toEqual([4, 3, 4, 4]);
    // Output pixel (x, y) samples source pixel (2x + 1, 2y + 1): the source pixel under its centre.
    for (let y = 0; y < 3; y++) {
      for (let x = 0; x < 4; x++) {
        const src = (2 * y + 1) * 8 + 2 * x + 1;
        expect(s.truth.data[y * 4 + x]).toBeCloseTo(p.truth.data[src] / 2, 6);
        expect(s.occlusion![y * 4 + x]).toBe(p.occlusion![src]);
        expect(depthFromDisparity(s.camera!, s.truth.data[y * 4 + x])).toBeCloseTo(depthFromDisparity(p.camera!, p.truth.data[src]), 9);
      }
    }
    expect(s.disparityRange).toEqual([0, 7]);
  });

  it('gain touches the right camera only, deterministically, and not the truth', () => {
    const p = pair();
    const a = applyCondition(p, 'gain=1.2', 1);
    expect(a.left).toBe(p.left);
    expect(a.truth).toBe(p.truth);
    expect(a.condition).toBe('gain=1.2');
    for (let i = 0; i < p.right.data.length; i++) expect(a.right.data[i]).toBe(Math.min(255, Math.round(p.right.data[i] * 1.2)));
  });

  it('noise: the same seed gives the same images, another seed others', () => {
    const p = pair();
    const a = applyCondition(p, 'noise=4', 1);
    expect(applyCondition(p, 'noise=4', 1).right.data).toEqual(a.right.data);
    expect(applyCondition(p, 'noise=4', 2).right.data).not.toEqual(a.right.data);
    expect(a.left.data).not.toEqual(p.left.data);
  });
});
