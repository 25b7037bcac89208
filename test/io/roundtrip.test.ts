/**
 * Round trips: encode then decode gives back the same data, for every format.
 * Source: common practice (a writer and reader of one format must agree); the byte
 * layouts themselves are checked in handmade.test.ts and against numpy/OpenCV in
 * crosscheck.test.ts.
 */
import { describe, expect, it } from 'vitest';
import { decodeNpy, decodePfm, decodePng, decodePngDisparity, encodeNpy, encodePfm, encodePng, encodePngDisparity } from '../../src/io/index.js';
import type { FloatImage, RasterImage } from '../../src/core/image.js';
import { mulberry32 as rng } from '../support/rng.js';

function floatImage(width: number, height: number, seed: number): FloatImage {
  const r = rng(seed);
  const data = new Float32Array(width * height);
  for (let i = 0; i < data.length; i++) data[i] = (r() - 0.3) * 200;
  data[3] = NaN;
  data[7] = -0;
  data[11] = 3.4e38;
  return { width, height, data };
}

/** Bit-exact comparison (NaN equal to NaN, -0 distinct from 0). */
function sameBits(a: Float32Array, b: Float32Array): boolean {
  if (a.length !== b.length) return false;
  const ua = new Uint32Array(a.buffer, a.byteOffset, a.length);
  const ub = new Uint32Array(b.buffer, b.byteOffset, b.length);
  for (let i = 0; i < a.length; i++) {
    if (Number.isNaN(a[i]) && Number.isNaN(b[i])) continue;
    if (ua[i] !== ub[i]) return false;
  }
  return true;
}

describe('PFM round trip', () => {
  for (const littleEndian of [true, false]) {
    it(`${littleEndian ? 'little' : 'big'}-endian, 64x48`, () => {
      const img = floatImage(64, 48, 1);
      const back = decodePfm(encodePfm(img, { littleEndian }), 'rt.pfm');
      expect([back.width, back.height]).toEqual([64, 48]);
      expect(sameBits(back.data, img.data)).toBe(true);
    });
  }
});

describe('.npy round trip', () => {
  it('float32 is bit-exact', () => {
    const img = floatImage(33, 17, 2);
    expect(sameBits(decodeNpy(encodeNpy(img, 'float32'), 'a.npy').data, img.data)).toBe(true);
  });
  it('float64 is bit-exact after widening and narrowing (every float32 is a float64)', () => {
    const img = floatImage(33, 17, 3);
    const back = decodeNpy(encodeNpy(img, 'float64'), 'b.npy');
    expect([back.width, back.height]).toEqual([33, 17]);
    expect(sameBits(back.data, img.data)).toBe(true);
  });
});

describe('PNG round trip', () => {
  const cases: [1 | 2 | 3 | 4, 8 | 16][] = [
    [1, 8],
    [1, 16],
    [2, 8],
    [2, 16],
    [3, 8],
    [3, 16],
    [4, 8],
    [4, 16],
  ];
  for (const [channels, bitDepth] of cases) {
    it(`${channels} channel(s), ${bitDepth} bit`, () => {
      const width = 37;
      const height = 23;
      const r = rng(channels * 100 + bitDepth);
      const n = width * height * channels;
      const max = bitDepth === 16 ? 65536 : 256;
      const data = bitDepth === 16 ? new Uint16Array(n) : new Uint8Array(n);
      // half smooth ramps (exercise the Sub/Up/Average/Paeth filters), half noise
      for (let i = 0; i < n; i++) data[i] = i < n / 2 ? (i * 7) % max : Math.floor(r() * max);
      data[0] = max - 1;
      const img: RasterImage = { width, height, channels, bitDepth, data };
      const back = decodePng(encodePng(img), 'rt.png');
      expect([back.width, back.height, back.channels, back.bitDepth]).toEqual([width, height, channels, bitDepth]);
      expect(back.data.constructor).toBe(data.constructor);
      expect(Array.from(back.data)).toEqual(Array.from(data));
    });
  }
});

describe('disparity PNG round trip', () => {
  it('16 bit, scale 256: values on the 1/256 grid come back exactly, NaN stays NaN', () => {
    // README, "File formats": stored = round(d * scale), invalid code 0 -> NaN.
    const d = Float32Array.from([0.5, 1, 100.25, NaN, 255.99609375, 12.00390625]);
    const back = decodePngDisparity(encodePngDisparity({ width: 3, height: 2, data: d }, { scale: 256 }), 'd.png', { scale: 256 });
    expect(Array.from(back.data)).toEqual(Array.from(d));
  });
  it('8 bit, scale 2, invalid 255: off-grid values round to the nearest 1/scale', () => {
    const d = Float32Array.from([0, 0.2, 0.3, 10.74, NaN, 127]);
    const png = encodePngDisparity({ width: 6, height: 1, data: d }, { scale: 2, invalid: 255, bitDepth: 8 });
    expect(decodePng(png, 'x').bitDepth).toBe(8);
    const back = decodePngDisparity(png, 'd8.png', { scale: 2, invalid: 255 });
    // round(0.2*2)=0 -> 0; round(0.3*2)=1 -> 0.5; round(21.48)=21 -> 10.5 (worked by hand)
    expect(Array.from(back.data)).toEqual([0, 0, 0.5, 10.5, NaN, 127]);
  });
  it('random maps up to 255 px survive within half a step (|error| <= 0.5 / scale)', () => {
    const r = rng(9);
    const data = new Float32Array(64 * 48);
    for (let i = 0; i < data.length; i++) data[i] = r() < 0.1 ? NaN : 0.01 + r() * 255;
    const back = decodePngDisparity(encodePngDisparity({ width: 64, height: 48, data }, { scale: 256 }), 'r.png', { scale: 256 });
    let worst = 0;
    for (let i = 0; i < data.length; i++) {
      if (Number.isNaN(data[i])) expect(back.data[i]).toBeNaN();
      else worst = Math.max(worst, Math.abs(back.data[i] - data[i]));
    }
    expect(worst).toBeLessThanOrEqual(0.5 / 256 + 1e-6);
  });
});
