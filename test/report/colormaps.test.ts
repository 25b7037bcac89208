import { execFileSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { colorHex, colorTable, type ColorMapName } from '../../src/report/colormaps.js';

const MAPS: ColorMapName[] = ['viridis', 'cividis', 'magma'];

/**
 * matplotlib's own tables, read now from Debian's python3-matplotlib (an independent
 * copy of the published data: matplotlib/_cm_listed.py), as floats in [0, 1].
 */
function matplotlibTables(): Record<string, number[][]> {
  const script = [
    'import json, numpy as np, matplotlib',
    `names = ${JSON.stringify(MAPS)}`,
    'print(json.dumps({n: matplotlib.colormaps[n](np.arange(256))[:, :3].tolist() for n in names}))',
  ].join('\n');
  const out = execFileSync('/usr/bin/python3', ['-c', script], { encoding: 'utf8', timeout: 20000 });
  return JSON.parse(out) as Record<string, number[][]>;
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
  const ref = matplotlibTables();

  for (const name of MAPS) {
    it(`${name}: all 256 entries equal matplotlib's table rounded to the nearest 1/255`, () => {
      const t = colorTable(name);
      expect(t.length).toBe(768);
      const want = ref[name];
      expect(want.length).toBe(256);
      let worst = 0;
      for (let i = 0; i < 256; i++) {
        for (let c = 0; c < 3; c++) {
          const f = want[i][c] * 255;
          // Exact rounding of matplotlib's float (source: matplotlib, read above).
          expect(t[i * 3 + c], `${name}[${i}][${c}]`).toBe(Math.round(f));
          worst = Math.max(worst, Math.abs(t[i * 3 + c] - f));
        }
      }
      expect(worst).toBeLessThanOrEqual(0.5);
    });
  }

  it('the well-known end colours (typed from memory: viridis #440154..#fde725, magma #000004..#fcfdbf)', () => {
    // Independent of the python run above: the hex codes quoted in matplotlib's docs.
    expect(colorHex('viridis', 0)).toBe('#440154');
    expect(colorHex('viridis', 1)).toBe('#fde725');
    expect(colorHex('magma', 0)).toBe('#000004');
    expect(colorHex('magma', 1)).toBe('#fcfdbf');
    // colorHex clamps outside [0, 1] (common practice for a colour scale).
    expect(colorHex('viridis', -3)).toBe('#440154');
    expect(colorHex('viridis', 7)).toBe('#fde725');
  });

  it('lightness rises monotonically along every map (sequential, perceptual: van der Walt & Smith 2015; Nuñez et al. 2018)', () => {
    for (const name of MAPS) {
      const t = colorTable(name);
      let prev = -1;
      for (let i = 0; i < 256; i += 4) {
        const y = luminance(t[i * 3], t[i * 3 + 1], t[i * 3 + 2]);
        expect(y, `${name}[${i}]`).toBeGreaterThan(prev);
        prev = y;
      }
    }
  });
});
