/**
 * Our PNG encoder against pngjs's on the same rasters (1280x720 RGB 8-bit, 16-bit gray
 * disparity-like data): bytes equal or not, file sizes, and best-of-N times, interleaved.
 * The reason src/io/png/encode.ts is our own is in its header, with these figures.
 *
 *   npm run bench -- png
 */
import { loadavg } from 'node:os';
import pngjs from 'pngjs';
import type { RasterImage } from '../src/core/image.js';
import { decodePng, encodePng } from '../src/io/png.js';

const ROUNDS = Number(process.env.PARALLAX_BENCH_ROUNDS ?? 9);

function raster(channels: 1 | 3, bitDepth: 8 | 16): RasterImage {
  const W = 1280;
  const H = 720;
  const data = bitDepth === 8 ? new Uint8Array(W * H * channels) : new Uint16Array(W * H * channels);
  let s = 11;
  for (let i = 0; i < data.length; i++) {
    s = (s * 1103515245 + 12345) >>> 0;
    const x = Math.floor(i / channels) % W;
    const y = Math.floor(i / channels / W);
    data[i] = bitDepth === 8 ? (x / 6 + y / 9 + (s >>> 29)) & 0xff : Math.round(64 * (20 + 40 * (y / H)) + (s >>> 30));
  }
  return { width: W, height: H, channels, bitDepth, data };
}

function viaPngjs(img: RasterImage): Buffer {
  const png = new pngjs.PNG({ width: img.width, height: img.height, bitDepth: img.bitDepth as 8 | 16, colorType: img.channels === 1 ? 0 : 2, inputColorType: img.channels === 1 ? 0 : 2, inputHasAlpha: false });
  const data = img.bitDepth === 8 ? Buffer.from(img.data.buffer, img.data.byteOffset, img.data.byteLength) : Buffer.from(new Uint8Array(img.data.length * 2).map((_, j) => (j % 2 === 0 ? img.data[j >> 1]! >>> 8 : img.data[j >> 1]! & 0xff)));
  png.data = data;
  return pngjs.PNG.sync.write(png, { colorType: img.channels === 1 ? 0 : 2, inputColorType: img.channels === 1 ? 0 : 2, inputHasAlpha: false, bitDepth: img.bitDepth as 8 | 16 });
}

function time(f: () => unknown): number {
  const t0 = performance.now();
  f();
  return performance.now() - t0;
}

export default async function (): Promise<void> {
  const rows: string[] = [];
  for (const [name, img] of [
    ['1280x720 RGB 8-bit', raster(3, 8)],
    ['1280x720 gray 16-bit', raster(1, 16)],
  ] as const) {
    const ours = encodePng(img);
    const theirs = viaPngjs(img);
    const back = decodePng(theirs, 'pngjs.png');
    const sameSamples = back.data.length === img.data.length && back.data.every((v, i) => v === img.data[i]);
    const a: number[] = [];
    const b: number[] = [];
    for (let r = 0; r < ROUNDS; r++) {
      a.push(time(() => encodePng(img)));
      b.push(time(() => viaPngjs(img)));
    }
    const best = (v: number[]): string => Math.min(...v).toFixed(1);
    const ratio = Math.min(...b) / Math.min(...a);
    rows.push(`| ${name} | ${ours.equals(theirs) ? 'yes' : 'no'} | ${sameSamples ? 'yes' : 'no'} | ${ours.length} | ${theirs.length} | ${best(a)} | ${best(b)} | ${ratio.toFixed(2)} |`);
  }
  process.stdout.write(
    [
      `${ROUNDS} interleaved rounds each, best time; load average ${loadavg().map((v) => v.toFixed(2)).join(' ')}.`,
      '',
      '| raster | same bytes | pngjs decodes to the same samples | ours bytes | pngjs bytes | ours ms | pngjs ms | pngjs / ours |',
      '|---|---|---|---:|---:|---:|---:|---:|',
      ...rows,
      '',
    ].join('\n'),
  );
}
