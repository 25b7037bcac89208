import type { Camera } from './camera.js';
import type { DisparityMap, RasterImage } from './image.js';

/** Inclusive disparity search range [min, max] in pixels. */
export type DisparityRange = readonly [number, number];

/** A pair as described by a manifest, with paths resolved to absolute paths. */
export interface PairEntry {
  readonly id: string;
  readonly left: string;
  readonly right: string;
  readonly truth: string;
  readonly occlusion?: string;
  /** Mask of pixels that leave every region (the pair's own, else the dataset's). */
  readonly ignore?: string;
  /** The user's own regions: name -> mask file (the dataset's, with the pair's added). */
  readonly masks?: Readonly<Record<string, string>>;
  readonly camera?: Camera;
  readonly group?: string;
  /** Index within the group's sequence. */
  readonly frame?: number;
  readonly tags?: readonly string[];
}

/** A pair's sequence and tag fields as a job result carries them (absent ones left out). */
export function pairFields(p: { readonly group?: string; readonly frame?: number; readonly tags?: readonly string[] }): { group?: string; frame?: number; tags?: string[] } {
  return {
    ...(p.group !== undefined ? { group: p.group } : {}),
    ...(p.frame !== undefined ? { frame: p.frame } : {}),
    ...(p.tags ? { tags: [...p.tags] } : {}),
  };
}

/** A pair decoded into memory, ready for matching and scoring. */
export interface LoadedPair {
  readonly dataset: string;
  readonly id: string;
  readonly width: number;
  readonly height: number;
  readonly left: RasterImage;
  readonly right: RasterImage;
  /** Luminance 0-255 (BT.601), float32, row-major. */
  readonly leftGray: Float32Array;
  readonly rightGray: Float32Array;
  readonly truth: DisparityMap;
  /** Non-zero = occluded in the right view; undefined when the dataset has no mask. */
  readonly occlusion?: Uint8Array;
  /** Non-zero = ignored (leaves every region). */
  readonly ignore?: Uint8Array;
  /** The user's own regions of the dataset, in order, with this pair's mask (absent: the pair has none). */
  readonly masks?: readonly { readonly name: string; readonly data: Uint8Array | null }[];
  /** The truth is sparse: regions are found from the known samples (dataset/regions.ts). */
  readonly sparseTruth?: boolean;
  readonly camera?: Camera;
  readonly disparityRange: DisparityRange;
  readonly group?: string;
  readonly frame?: number;
  readonly tags?: readonly string[];
  /** Source files, for program plugins and provenance. */
  readonly files: PairEntry;
  /**
   * The camera-fault condition the images (and for `scale` the truth) were changed by
   * (src/conditions); absent = clean, the files as they are.
   */
  readonly condition?: string;
}
