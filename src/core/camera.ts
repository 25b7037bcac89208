/**
 * The rectified stereo camera, as far as depth needs it.
 * Depth Z = focalPx * baselineM / (d + cxShiftPx), with cxShiftPx = cx_right - cx_left.
 */
export interface Camera {
  readonly focalPx: number;
  readonly baselineM: number;
  /** cx_right - cx_left in pixels (0 for the usual rectification). */
  readonly cxShiftPx: number;
}

/**
 * Truth with d + cxShiftPx <= this (px) has no true depth: a numerical guard against
 * division by ~0 only (raise it for scenes with far-away truth).
 */
export const DEFAULT_DEPTH_EPS = 1e-6;

/** Depth in metres for a disparity; NaN where d + cxShiftPx <= 0 or d is invalid. */
export function depthFromDisparity(cam: Camera, d: number): number {
  const den = d + cam.cxShiftPx;
  if (!(den > 0)) return NaN;
  return (cam.focalPx * cam.baselineM) / den;
}

/** Disparity in pixels for a depth in metres (inverse of depthFromDisparity). */
export function disparityFromDepth(cam: Camera, z: number): number {
  return (cam.focalPx * cam.baselineM) / z - cam.cxShiftPx;
}

/** Metres per unit of a depth file. */
export const DEPTH_UNIT_METRES: Readonly<Record<'m' | 'mm', number>> = { m: 1, mm: 0.001 };

/**
 * A depth map (in `unit`) turned into disparity in place: d = focalPx * baselineM / Z -
 * cxShiftPx, Z in metres. Z that is not finite and positive (0 is the usual "no return"
 * of a depth sensor) becomes NaN, unknown truth.
 */
export function depthToDisparityInPlace(data: Float32Array, cam: Camera, unit: 'm' | 'mm'): void {
  const fb = cam.focalPx * cam.baselineM;
  const k = DEPTH_UNIT_METRES[unit];
  for (let i = 0; i < data.length; i++) {
    const z = data[i] * k;
    data[i] = z > 0 && z < Infinity ? fb / z - cam.cxShiftPx : NaN;
  }
}
