/**
 * Evaluation regions. A pixel can be in several regions at once, so regions are
 * stored as one bit mask per pixel (RegionMap.bits), bit i = REGION_IDS[i].
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
  /** One byte per pixel; bit REGION_BIT[r] set when the pixel is in region r. */
  readonly bits: Uint8Array;
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
