import { describe, expect, it } from 'vitest';
import { colorTable } from '../../src/report/colormaps.js';

function rgb(hex: string): number[] {
  return [1, 3, 5].map((i) => parseInt(hex.slice(i, i + 2), 16));
}
/** Relative luminance, ITU-R BT.709 weights on sRGB-linearised values (sRGB standard, IEC 61966-2-1). */
function luminance(r: number, g: number, b: number): number {
  const lin = (v: number) => {
    const c = v / 255;
    return c <= 0.04045 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4;
  };
  return 0.2126 * lin(r) + 0.7152 * lin(g) + 0.0722 * lin(b);
}

describe('colour maps', () => {
  // matplotlib's published viridis and magma tables, entries 0, 128 and 255, as the widely
  // quoted hex codes (typed from memory): viridis #440154, #21918c, #fde725;
  // magma #000004, #b73779, #fcfdbf.
  const anchors: [('viridis' | 'magma'), number, string][] = [
    ['viridis', 0, '#440154'],
    ['viridis', 128, '#21918c'],
    ['viridis', 255, '#fde725'],
    ['magma', 0, '#000004'],
    ['magma', 128, '#b73779'],
    ['magma', 255, '#fcfdbf'],
  ];
  for (const [name, i, hex] of anchors) {
    // A 6th-degree fit is off by up to ~5/255 at the ends of the maps (seen: magma[255]
    // 254,249,186 vs 252,253,191), invisible in a thumbnail; allow 6/255.
    it(`${name}[${i}] is within 6/255 of matplotlib's ${hex}`, () => {
      const t = colorTable(name);
      const want = rgb(hex);
      for (let c = 0; c < 3; c++) expect(Math.abs(t[i * 3 + c]! - want[c]!)).toBeLessThanOrEqual(6);
    });
  }
  it('lightness rises monotonically along both maps (sequential, perceptual: van der Walt & Smith 2015)', () => {
    for (const name of ['viridis', 'magma'] as const) {
      const t = colorTable(name);
      let prev = -1;
      for (let i = 0; i < 256; i += 5) {
        const y = luminance(t[i * 3]!, t[i * 3 + 1]!, t[i * 3 + 2]!);
        expect(y).toBeGreaterThan(prev);
        prev = y;
      }
    }
  });
});
