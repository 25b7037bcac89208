import { describe, expect, test } from 'vitest';
import { compileMaterials } from '../../src/synth/index.js';
import { NOISE_SIZE, fractalNoise, noiseTable, patternAt, valueNoise } from '../../src/synth/texture.js';
import type { Material, Scene } from '../../src/synth/index.js';

function mats(...m: Material[]): ReturnType<typeof compileMaterials> {
  const scene: Scene = { name: 't', materials: m, primitives: [], lightDir: [0, 1, 0], ambient: 0.5 };
  return compileMaterials(scene);
}
const grey = { colorA: [0, 0, 0] as const, colorB: [1, 1, 1] as const };

describe('procedural textures (checks against their definitions, worked by hand)', () => {
  test('slats are periodic with the given period and bright for the duty fraction', () => {
    const cm = mats({ ...grey, pattern: { kind: 'slats', period: 0.08, duty: 0.3, grain: 0 }, seed: 1 });
    // Sample one period at 800 points (0.0001 m apart, offset half a step): value 1 where
    // frac(u / period) < duty -> 240 of 800 samples (0.3 * 800).
    let bright = 0;
    for (let k = 0; k < 800; k++) {
      const u = 5 + (k + 0.5) * 0.0001;
      const v = patternAt(cm, 0, u, 1.234);
      expect(v === 0 || v === 1).toBe(true);
      if (v === 1) bright++;
      expect(patternAt(cm, 0, u + 0.08 * 7, 9.9)).toBe(v); // period 0.08 m, independent of v
    }
    expect(Math.abs(bright - 240)).toBeLessThanOrEqual(1);
  });

  test('random dots cover density * pi * r^2 of the area', () => {
    // Each cell holds a disc of radius r (in cell units) with probability `density`:
    // expected cover 0.5 * pi * 0.35^2 = 0.19242. 40000 points on a grid whose step is an
    // irrational fraction of the cell (so positions spread over the cell) across ~23000
    // cells: the standard error from cell-to-cell variation is about 0.003.
    const cm = mats({ ...grey, pattern: { kind: 'dots', scale: 0.1, density: 0.5, radius: 0.35 }, seed: 2 });
    let on = 0;
    const n = 200;
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) on += patternAt(cm, 0, (i + 0.37) * 0.0754877666, (j + 0.61) * 0.0569840291);
    expect(Math.abs(on / (n * n) - 0.5 * Math.PI * 0.35 * 0.35)).toBeLessThan(0.012);
  });

  test('value noise interpolates the lattice table and wraps with its period', () => {
    const t = noiseTable(77);
    // At lattice points the noise equals the table entry (smoothstep weights are 0 or 1).
    for (const [i, j] of [[0, 0], [3, 5], [255, 17], [100, 255]] as const) {
      expect(valueNoise(t, i, j)).toBeCloseTo(t[j * NOISE_SIZE + i], 7);
    }
    // Halfway between two lattice points along x the smoothstep weight is 1/2: the mean.
    expect(valueNoise(t, 3.5, 5)).toBeCloseTo((t[5 * NOISE_SIZE + 3] + t[5 * NOISE_SIZE + 4]) / 2, 7);
    // Periodic with NOISE_SIZE cells, and continuous (no jump across a cell edge).
    expect(valueNoise(t, 12.3 + NOISE_SIZE, 40.7 - NOISE_SIZE)).toBeCloseTo(valueNoise(t, 12.3, 40.7), 6);
    expect(Math.abs(valueNoise(t, 6 - 1e-9, 2.5) - valueNoise(t, 6 + 1e-9, 2.5))).toBeLessThan(1e-6);
    // A different seed gives a different table.
    expect(noiseTable(78)).not.toEqual(t);
  });

  test('the noise pattern is the contrast-stretched fractal sum of its lattice table', () => {
    // Definition (src/synth/texture.ts): clamp(0.5 + 2.2 * (fractalNoise(u/s + ox, v/s + oy) - 0.5))
    // with the material's lattice offset (ox, oy); the renderer's written-out loop must
    // equal the reference function fractalNoise.
    const cm = mats({ ...grey, pattern: { kind: 'noise', scale: 0.3, octaves: 5, gain: 0.55 }, seed: 11 });
    const table = cm.tables[0];
    const ox = cm.m[12];
    const oy = cm.m[13];
    for (let k = 0; k < 500; k++) {
      const u = -20 + k * 0.0917;
      const v = 3 - k * 0.0533;
      const n = fractalNoise(table, u / 0.3 + ox, v / 0.3 + oy, 5, 0.55);
      const want = Math.min(1, Math.max(0, 0.5 + (n - 0.5) * 2.2));
      expect(patternAt(cm, 0, u, v)).toBeCloseTo(want, 12);
    }
  });

  test('materials with different seeds read the shared lattice at different offsets', () => {
    const cm = mats(
      { ...grey, pattern: { kind: 'noise', scale: 0.3 }, seed: 1 },
      { ...grey, pattern: { kind: 'noise', scale: 0.3 }, seed: 2 },
    );
    let diff = 0;
    for (let k = 0; k < 100; k++) diff += Math.abs(patternAt(cm, 0, k * 0.13, 1) - patternAt(cm, 1, k * 0.13, 1));
    expect(diff / 100).toBeGreaterThan(0.05);
  });

  test('flat paint stays within its amplitude; noise spans the range', () => {
    const cm = mats(
      { ...grey, pattern: { kind: 'paint', amplitude: 0.02 }, seed: 3 },
      { ...grey, pattern: { kind: 'noise', scale: 0.2, octaves: 4 }, seed: 4 },
    );
    let lo = 1;
    let hi = 0;
    let plo = 1;
    let phi = 0;
    for (let i = 0; i < 100; i++) {
      for (let j = 0; j < 100; j++) {
        const p = patternAt(cm, 0, i * 0.07, j * 0.07);
        plo = Math.min(plo, p);
        phi = Math.max(phi, p);
        const q = patternAt(cm, 1, i * 0.07, j * 0.07);
        lo = Math.min(lo, q);
        hi = Math.max(hi, q);
      }
    }
    // Paint: 0.5 +- amplitude (definition in src/synth/texture.ts).
    expect(plo).toBeGreaterThanOrEqual(0.48);
    expect(phi).toBeLessThanOrEqual(0.52);
    // Textured noise uses most of [0, 1] (contrast-stretched fractal sum).
    expect(lo).toBeLessThan(0.15);
    expect(hi).toBeGreaterThan(0.85);
  });
});
