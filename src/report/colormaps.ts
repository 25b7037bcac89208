/**
 * Perceptually uniform, colour-blind safe colour maps as 6th-degree polynomial fits of
 * matplotlib's published tables: viridis (disparity) by van der Walt & Smith (2015,
 * matplotlib 1.5), and magma (absolute error), from the same family. The fit
 * coefficients are M. Zucker's least-squares fits of those tables (CC0), written here
 * from memory; test/report/colormaps.test.ts checks them against matplotlib's
 * published end and middle colours. No rainbow map, no logarithmic error scale.
 */
type Poly = readonly [number, number, number][];

const VIRIDIS: Poly = [
  [0.2777273272234177, 0.005407344544966578, 0.3340998053353061],
  [0.1050930431085774, 1.404613529898575, 1.384590162594685],
  [-0.3308618287255563, 0.214847559468213, 0.09509516302823659],
  [-4.634230498983486, -5.799100973351585, -19.33244095627987],
  [6.228269936347081, 14.17993336680509, 56.69055260068105],
  [4.776384997670288, -13.74514537774601, -65.35303263337234],
  [-5.435455855934631, 4.645852612178535, 26.3124352495832],
];

const MAGMA: Poly = [
  [-0.002136485053939582, -0.000749655052795221, -0.005386127855323933],
  [0.2516605407371642, 0.6775232436837668, 2.494026599312351],
  [8.353717279216625, -3.577719514958484, 0.3144679030132573],
  [-27.66873308576866, 14.26473078096533, -13.64921318813922],
  [52.17613981234068, -27.94360607168351, 12.94416944238394],
  [-50.76852536473588, 29.04658282127291, 4.23415299384598],
  [18.65570506591883, -11.48977351997711, -5.601961508734096],
];

export type ColorMapName = 'viridis' | 'magma';

/** A 256-entry RGB lookup table (Uint8Array of 768) sampled from a fit. */
function table(poly: Poly): Uint8Array {
  const out = new Uint8Array(256 * 3);
  for (let i = 0; i < 256; i++) {
    const t = i / 255;
    for (let c = 0; c < 3; c++) {
      let v = 0;
      for (let k = poly.length - 1; k >= 0; k--) v = v * t + poly[k]![c]!;
      out[i * 3 + c] = Math.round(Math.min(1, Math.max(0, v)) * 255);
    }
  }
  return out;
}

const TABLES: Record<ColorMapName, Uint8Array> = { viridis: table(VIRIDIS), magma: table(MAGMA) };

/** The 256 x RGB table of a map. */
export function colorTable(name: ColorMapName): Uint8Array {
  return TABLES[name];
}

/** `#rrggbb` of a map at t in [0, 1] (clamped). */
export function colorHex(name: ColorMapName, t: number): string {
  const i = Math.round(Math.min(1, Math.max(0, t)) * 255) * 3;
  const tb = TABLES[name];
  return `#${[tb[i]!, tb[i + 1]!, tb[i + 2]!].map((v) => v.toString(16).padStart(2, '0')).join('')}`;
}

/** Okabe & Ito (2008) colour-blind safe categorical colours, for configurations in charts. */
export const CATEGORICAL: readonly string[] = ['#0072B2', '#E69F00', '#009E73', '#CC79A7', '#56B4E9', '#D55E00', '#F0E442', '#000000'];
