/**
 * Sparse truth (a lidar's points): the scene's shape for the region rules.
 *
 * The jump and occlusion rules look at neighbouring truth pixels, which sparse truth
 * rarely has. For a dataset that declares `sparseTruth`, both rules run on the truth
 * filled by its nearest known sample (Euclidean distance, ties to the first found):
 * a Voronoi tiling of the samples, whose cell borders between two surfaces sit within
 * about half the sample spacing of the real edge. Unknown pixels farther than
 * FILL_SPACINGS sample spacings (spacing = 1 / sqrt(known share)) from every sample stay
 * unknown, so a large hole (the sky) does not become a surface. The regions themselves
 * still hold known pixels only; the filled values are never scored.
 *
 * The nearest sample is found by two raster passes that propagate each pixel's nearest
 * seed from its 8 neighbours (a vector-propagation distance transform; it can miss the
 * exact nearest seed by a fraction of a pixel in rare configurations, harmless here).
 */

/** A pixel farther than this many sample spacings from every known sample stays unknown. */
export const FILL_SPACINGS = 4;

export function nearestFill(truth: Float32Array, width: number, height: number): Float32Array {
  const n = width * height;
  const seed = new Int32Array(n).fill(-1);
  const dist = new Float64Array(n).fill(Infinity);
  let known = 0;
  for (let i = 0; i < n; i++) {
    const d = truth[i];
    if (d - d === 0) {
      seed[i] = i;
      dist[i] = 0;
      known++;
    }
  }
  const out = new Float32Array(n).fill(NaN);
  if (known === 0) return out;
  const spacing = 1 / Math.sqrt(known / n);
  const limit = (FILL_SPACINGS * spacing) ** 2;
  const consider = (i: number, x: number, y: number, j: number): void => {
    const s = seed[j];
    if (s < 0) return;
    const dx = (s % width) - x;
    const dy = ((s / width) | 0) - y;
    const dd = dx * dx + dy * dy;
    if (dd < dist[i]) {
      dist[i] = dd;
      seed[i] = s;
    }
  };
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const i = y * width + x;
      if (x > 0) consider(i, x, y, i - 1);
      if (y > 0) {
        if (x > 0) consider(i, x, y, i - width - 1);
        consider(i, x, y, i - width);
        if (x + 1 < width) consider(i, x, y, i - width + 1);
      }
    }
  }
  for (let y = height - 1; y >= 0; y--) {
    for (let x = width - 1; x >= 0; x--) {
      const i = y * width + x;
      if (x + 1 < width) consider(i, x, y, i + 1);
      if (y + 1 < height) {
        if (x + 1 < width) consider(i, x, y, i + width + 1);
        consider(i, x, y, i + width);
        if (x > 0) consider(i, x, y, i + width - 1);
      }
    }
  }
  for (let i = 0; i < n; i++) if (seed[i] >= 0 && dist[i] <= limit) out[i] = truth[seed[i]];
  return out;
}
