/**
 * Inputs for outside programs: the images a program reads (written as 8-bit PNGs
 * when they must be converted, padded or resized) and the mapping of its output
 * back to the pair's frame.
 */
import type { RasterImage } from '../core/image.js';
import { encodePng } from '../io/png.js';
import type { MatchInput } from '../core/matcher.js';
import { cropTopLeft, padEdge, resampleBilinear, resampleDisparity, roundUpTo } from './resample.js';

/** Sizes and disparity range as the program sees them. */
export interface ProgramFrame {
  /** Pair size. */
  width: number;
  height: number;
  /** After resizing (before padding). */
  scaledW: number;
  scaledH: number;
  /** What the program gets (after padding). */
  progW: number;
  progH: number;
  /** Disparity range in program pixels, our sign convention. */
  minDisparity: number;
  maxDisparity: number;
}

export function programFrame(
  width: number,
  height: number,
  minD: number,
  maxD: number,
  resize: number | undefined,
  pad: number | undefined,
): ProgramFrame {
  const s = resize ?? 1;
  const scaledW = s === 1 ? width : Math.max(1, Math.round(width * s));
  const scaledH = s === 1 ? height : Math.max(1, Math.round(height * s));
  const progW = pad ? roundUpTo(scaledW, pad) : scaledW;
  const progH = pad ? roundUpTo(scaledH, pad) : scaledH;
  const sx = scaledW / width;
  const minDisparity = s === 1 ? minD : Math.floor(minD * sx);
  const maxDisparity = s === 1 ? maxD : Math.ceil(maxD * sx);
  return { width, height, scaledW, scaledH, progW, progH, minDisparity, maxDisparity };
}

/** Gray 0-255 float -> 8-bit PNG of the program frame (resampled, padded). */
export function grayPngForProgram(gray: Float32Array, f: ProgramFrame): Buffer {
  let img = gray;
  if (f.scaledW !== f.width || f.scaledH !== f.height) img = resampleBilinear(img, f.width, f.height, 1, f.scaledW, f.scaledH);
  if (f.progW !== f.scaledW || f.progH !== f.scaledH) img = padEdge(img, f.scaledW, f.scaledH, 1, f.progW, f.progH);
  const bytes = new Uint8Array(img.length);
  for (let i = 0; i < img.length; i++) {
    const v = Math.round(img[i]);
    bytes[i] = v < 0 ? 0 : v > 255 ? 255 : v;
  }
  return writePng8(bytes, f.progW, f.progH, 1);
}

/** Colour raster -> 8-bit PNG (gray or RGB; alpha dropped, 16-bit divided by 257) of the program frame. */
export function colorPngForProgram(src: RasterImage, f: ProgramFrame): Buffer {
  const n = src.width * src.height;
  const outC = src.channels >= 3 ? 3 : 1;
  const k = src.bitDepth === 16 ? 1 / 257 : 1;
  let img: Uint8Array = new Uint8Array(n * outC);
  for (let i = 0, j = 0; i < n; i++, j += src.channels) {
    for (let c = 0; c < outC; c++) img[i * outC + c] = Math.round(src.data[j + c] * k);
  }
  if (f.scaledW !== f.width || f.scaledH !== f.height) img = resampleBilinear(img, f.width, f.height, outC, f.scaledW, f.scaledH);
  if (f.progW !== f.scaledW || f.progH !== f.scaledH) img = padEdge(img, f.scaledW, f.scaledH, outC, f.progW, f.progH);
  return writePng8(img, f.progW, f.progH, outC as 1 | 3);
}

function writePng8(data: Uint8Array, width: number, height: number, channels: 1 | 3): Buffer {
  return encodePng({ width, height, channels, bitDepth: 8, data });
}

/**
 * The program's raw output (program frame, program units) -> our disparity in the
 * pair's frame: sentinel -> NaN, times sign and scale, crop the padding, resample
 * back and divide by the resize factor. Non-finite values become NaN.
 */
export function outputToPairFrame(
  raw: Float32Array,
  f: ProgramFrame,
  sign: 1 | -1,
  scale: number,
  sentinel: number | undefined,
): Float32Array {
  const k = sign * scale;
  const vals = new Float32Array(raw.length);
  for (let i = 0; i < raw.length; i++) {
    const v = raw[i];
    vals[i] = v === sentinel || !Number.isFinite(v) ? NaN : v * k;
  }
  return backToPair(vals, f, f.width / f.scaledW);
}

/** A program's confidence map back in the pair's frame: padding cropped, resampled, values kept (non-finite = none). */
export function confidenceToPairFrame(raw: Float32Array, f: ProgramFrame): Float32Array {
  return backToPair(raw.map((v) => (Number.isFinite(v) ? v : NaN)), f, 1);
}

/** Crop the padding, then resample to the pair's size, multiplying values by `valueScale`. */
function backToPair(vals: Float32Array, f: ProgramFrame, valueScale: number): Float32Array {
  let img: Float32Array = vals;
  if (f.progW !== f.scaledW || f.progH !== f.scaledH) img = cropTopLeft(img, f.progW, f.scaledW, f.scaledH);
  if (f.scaledW !== f.width || f.scaledH !== f.height) img = resampleDisparity(img, f.scaledW, f.scaledH, f.width, f.height, valueScale);
  return img;
}

/** Does the job need image files written for the program (instead of the originals)? */
export function needsWrittenInputs(
  input: MatchInput,
  mode: 'gray' | 'color',
  f: ProgramFrame,
): boolean {
  return mode === 'gray' || !input.source || input.source.condition !== undefined || f.progW !== f.width || f.progH !== f.height;
}
