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
