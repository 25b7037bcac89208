/**
 * Evaluation regions. A pixel can be in several regions at once, so regions are
 * stored as one bit mask per pixel (RegionMap.bits), bit i = RegionMap.names[i]: the
 * built-in regions (REGION_IDS, bits 0-4), then the user's own named regions.
 *
 * - known:    truth is valid (finite)
 * - visible:  known and not occluded in the right view (and not outside its frame)
 * - occluded: known and occluded (or outside the right frame)
 * - flat:     visible and low texture
 * - jump:     visible and near a truth disparity jump
 */
export const REGION_IDS = ['known', 'visible', 'occluded', 'flat', 'jump'] as const;
export type RegionId = (typeof REGION_IDS)[number];

export const REGION_BIT: Readonly<Record<RegionId, number>> = {
  known: 1 << 0,
  visible: 1 << 1,
  occluded: 1 << 2,
  flat: 1 << 3,
  jump: 1 << 4,
};

export interface RegionMap {
  readonly width: number;
  readonly height: number;
  /** Per pixel; bit i set when the pixel is in region names[i] (REGION_BIT for the built-ins). */
  readonly bits: Uint16Array;
  /** Region names in bit order: REGION_IDS, then the user's named regions. */
  readonly names: readonly string[];
  /** Depth band per pixel: 0 = in no band (no true depth), k = bands[k - 1]; null without bands. */
  readonly band: Uint8Array | null;
  /** Band labels in distance order (e.g. `0-0.5m`, ..., `8m+`); empty without bands. */
  readonly bands: readonly string[];
  /**
   * Fine depth bin per pixel for the usable range (src/metrics/depth-profile.ts):
   * floor(PROFILE_BINS_PER_OCTAVE * log2(Z / 1 m)) of the true depth, NO_DEPTH_BIN without
   * one; null without a camera.
   */
  readonly zbin: Int16Array | null;
}

/** zbin of a pixel without a true depth. */
export const NO_DEPTH_BIN = -32768;

/** The band view that holds every pixel of a region, whatever its depth. */
export const ALL_BANDS = 'all';

/** One cell of a pair's scores: a region, whole (`band` = ALL_BANDS) or within one depth band. */
export interface Slice {
  /** Key in PairScore: the region name, with `@<band>` for a band. */
  readonly key: string;
  readonly region: string;
  readonly band: string;
}

/** The PairScore key of a region within a band view. */
export function sliceKey(region: string, band: string): string {
  return band === ALL_BANDS ? region : `${region}@${band}`;
}

/**
 * The slices of a region layout, region-major: each region whole, then within each band.
 * `regions` defaults to REGION_IDS (results written before named regions existed).
 */
export function slicesOf(layout: { readonly regions?: readonly string[]; readonly bands?: readonly string[] }): Slice[] {
  const out: Slice[] = [];
  for (const region of layout.regions ?? REGION_IDS) {
    for (const band of [ALL_BANDS, ...(layout.bands ?? [])]) out.push({ key: sliceKey(region, band), region, band });
  }
  return out;
}

/**
 * The distinct (region bits, band) combinations of a map as dense pattern indices, so
 * that per-pattern sums fit small tables: codes[i] = pattern of pixel i, pattern 0 = in no
 * region. Built once per map (cached).
 */
export interface PatternTable {
  readonly codes: Uint8Array | Uint16Array;
  /** Region bits of each pattern. */
  readonly bits: Uint32Array;
  /** Band index (0 = none) of each pattern. */
  readonly band: Uint8Array;
  /** Number of patterns, pattern 0 included. */
  readonly count: number;
}

const patternCache = new WeakMap<RegionMap, PatternTable>();

export function patternTable(map: RegionMap): PatternTable {
  const hit = patternCache.get(map);
  if (hit) return hit;
  const { bits, band } = map;
  const n = bits.length;
  const shift = map.names.length;
  const lookup = new Int32Array((map.bands.length + 1) << shift).fill(-1);
  const pBits: number[] = [0];
  const pBand: number[] = [0];
  lookup[0] = 0;
  let codes: Uint8Array | Uint16Array = new Uint8Array(n);
  for (let i = 0; i < n; i++) {
    const b = bits[i];
    if (b === 0) continue;
    const key = band === null ? b : b | (band[i] << shift);
    let c = lookup[key];
    if (c < 0) {
      c = lookup[key] = pBits.length;
      pBits.push(b);
      pBand.push(band === null ? 0 : band[i]);
      if (c === 256) codes = Uint16Array.from(codes);
    }
    codes[i] = c;
  }
  const t: PatternTable = { codes, bits: Uint32Array.from(pBits), band: Uint8Array.from(pBand), count: pBits.length };
  patternCache.set(map, t);
  return t;
}

/** Does pattern p belong to the view (band index 0 = all bands)? */
export function inView(t: PatternTable, p: number, view: number): boolean {
  return view === 0 || t.band[p] === view;
}

/** A region map of the built-in regions only, without bands (tests, thumbnails of old runs). */
export function plainRegionMap(width: number, height: number, bits: Uint16Array | Uint8Array): RegionMap {
  return { width, height, bits: bits instanceof Uint16Array ? bits : Uint16Array.from(bits), names: [...REGION_IDS], band: null, bands: [], zbin: null };
}

/** Parameters of the region definitions (README, "Regions and metrics"). */
export interface RegionParams {
  /** Box window side (odd, px) over which the squared horizontal gradient is averaged. */
  flatWindow: number;
  /** Below this mean squared horizontal gradient (intensity units^2, 0-255 scale) a visible pixel is `flat`. */
  flatThreshold: number;
  /** A truth disparity difference between 4-neighbours larger than this (px) is a jump. */
  jumpGap: number;
  /** Jump pixels are dilated by a square of this radius (px, Chebyshev distance). */
  jumpRadius: number;
  /** Occlusion derivation: tolerance in x (px), see dataset/occlusion.ts. */
  occlusionTol: number;
  /** Occlusion derivation: minimum disparity lead (px) of the occluder. */
  occlusionTau: number;
}

/**
 * Defaults. flat and jump: chosen on rendered dock scenes as the values at which each
 * region best separates the pixels where block matching fails (|e| > 1 px or no answer)
 * from those where it succeeds (largest Youden's J); `npm run bench -- regions` measures
 * the whole grid. Measured: flat J = 0.324 at window 7, threshold 0.5 (0.182 at 9 and
 * 4); jump J = 0.072 at gap 1 px, radius 6 px (0.043 at 2 and 4).
 */
export const DEFAULT_REGION_PARAMS: Readonly<RegionParams> = {
  flatWindow: 7,
  flatThreshold: 0.5,
  jumpGap: 1,
  jumpRadius: 6,
  occlusionTol: 0.5,
  occlusionTau: 0.5,
};

/** A slice of one map, with the patterns of its PatternTable that make it up. */
export interface MapSlice extends Slice {
  /** Bit of the region in RegionMap.bits. */
  readonly regionIndex: number;
  /** Band index (0 = all bands). */
  readonly view: number;
  /** Patterns (indices into the PatternTable) whose pixels are in the slice. */
  readonly patterns: Int32Array;
}

const sliceCache = new WeakMap<RegionMap, MapSlice[]>();

/** Every slice of a map (slicesOf order) with its patterns; cached per map. */
export function mapSlices(map: RegionMap): MapSlice[] {
  const hit = sliceCache.get(map);
  if (hit) return hit;
  const t = patternTable(map);
  const views = [ALL_BANDS, ...map.bands];
  const out: MapSlice[] = [];
  map.names.forEach((region, r) => {
    views.forEach((band, view) => {
      const ps: number[] = [];
      for (let p = 1; p < t.count; p++) if ((t.bits[p] >> r) & 1 && inView(t, p, view)) ps.push(p);
      out.push({ key: sliceKey(region, band), region, band, regionIndex: r, view, patterns: Int32Array.from(ps) });
    });
  });
  sliceCache.set(map, out);
  return out;
}
