import { describe, expect, it } from 'vitest';
import { PNG } from 'pngjs';
import { encodePalettePng } from '../../src/report/png-palette.js';
import { colorizeError, colorizeDisparity, HATCH_DARK, HATCH_LIGHT, NO_TRUTH } from '../../src/report/thumbs.js';

describe('indexed PNG writer', () => {
  it('decodes with pngjs (an independent PNG decoder) to the palette colours', () => {
    const palette = Uint8Array.from([255, 0, 0, 0, 255, 0, 0, 0, 255]);
    const index = Uint8Array.from([0, 1, 2, 2, 1, 0]);
    const png = PNG.sync.read(encodePalettePng({ width: 3, height: 2, index, palette }));
    expect([png.width, png.height]).toEqual([3, 2]);
    const rgb = Array.from({ length: 6 }, (_, i) => Array.from(png.data.subarray(i * 4, i * 4 + 3)));
    // By hand: index 0 red, 1 green, 2 blue.
    expect(rgb).toEqual([[255, 0, 0], [0, 255, 0], [0, 0, 255], [0, 0, 255], [0, 255, 0], [255, 0, 0]]);
  });

  it('error thumbnails: grey without truth, hatched without prediction, clipped above the stated value', () => {
    const truth = { width: 4, height: 1, data: Float32Array.from([NaN, 5, 5, 5]) };
    const pred = { width: 4, height: 1, data: Float32Array.from([5, NaN, 5, 50]) };
    const img = colorizeError(pred, truth, 4);
    const png = PNG.sync.read(encodePalettePng(img));
    const px = (i: number) => Array.from(png.data.subarray(i * 4, i * 4 + 3));
    expect(px(0)).toEqual([...NO_TRUTH]);
    // (x + y) & 3 < 2 at x = 1 -> dark stripe (the hatch definition in thumbs.ts).
    expect(px(1)).toEqual([...HATCH_DARK]);
    // Zero error is the first magma colour (near black), 45 px is clipped to the last (pale yellow).
    expect(px(2)[0] + px(2)[1] + px(2)[2]).toBeLessThan(30);
    expect(px(3)[0]).toBeGreaterThan(240);
    const d = colorizeDisparity({ width: 3, height: 1, data: Float32Array.from([0, NaN, 10]) }, 0, 10);
    expect(d.index[1]).not.toBe(d.index[0]);
    expect([...HATCH_LIGHT]).not.toEqual([...HATCH_DARK]);
  });
});
