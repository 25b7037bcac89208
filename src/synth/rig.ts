/**
 * The rectified pinhole stereo rig.
 *
 * Pixel convention: pixel (x, y) has its centre at image coordinates (x, y); the image
 * spans [-0.5, width - 0.5] x [-0.5, height - 0.5]. The default principal point is the
 * image centre ((width - 1) / 2, (height - 1) / 2).
 *
 * Camera frame: x right, y down, z along the optical axis. Both cameras share one
 * orientation (rectified); the right camera's centre is the left one moved by +baselineM
 * along the camera x axis. Its principal point may differ by cxShiftPx = cx_right - cx_left.
 *
 * A point at camera-frame (X, Y, Z) of the left camera projects to
 *   x_left  = cx_left  + f * X / Z
 *   x_right = cx_right + f * (X - B) / Z,   cx_right = cx_left + s
 * so the left-referenced disparity is
 *   d = x_left - x_right = f * B / Z - s,
 * which matches src/core/camera.ts: Z = f * B / (d + cxShiftPx).
 */
import type { Camera } from '../core/camera.js';
import { UsageError } from '../core/errors.js';
import type { Pose, Scene, Vec3 } from './scene.js';

export interface Rig {
  readonly width: number;
  readonly height: number;
  /** Focal length in pixels (square pixels). */
  readonly focalPx: number;
  readonly baselineM: number;
  /** Principal point of the left camera. */
  readonly cx: number;
  readonly cy: number;
  /** cx_right - cx_left in pixels. */
  readonly cxShiftPx: number;
  /**
   * cy_right - cy_left in pixels: a rig out of rectification, whose right image shows
   * every point this much lower (absent = 0, rectified).
   */
  readonly cyShiftPx?: number;
  /** Pose of the left camera in the world. */
  readonly pose: Pose;
}

export interface RigOptions {
  width: number;
  height: number;
  /** Focal length in pixels; default from hfovDeg. */
  focalPx?: number;
  /** Horizontal field of view in degrees when focalPx is not given (default 64). */
  hfovDeg?: number;
  /** Baseline in metres (default 0.12). */
  baselineM?: number;
  cxShiftPx?: number;
  /** Right camera's principal point row minus the left's (a misaligned rig; default 0). */
  cyShiftPx?: number;
  cx?: number;
  cy?: number;
  pose?: Pose;
}

export const DEFAULT_POSE: Pose = { position: [0, 0, 0], yawRad: 0, pitchRad: 0 };

export function makeRig(o: RigOptions): Rig {
  if (!(Number.isInteger(o.width) && o.width > 0 && Number.isInteger(o.height) && o.height > 0)) {
    throw new UsageError('width/height', `image size must be positive integers, got ${o.width}x${o.height}`);
  }
  const hfov = o.hfovDeg ?? 64;
  const focalPx = o.focalPx ?? o.width / 2 / Math.tan((hfov * Math.PI) / 360);
  const baselineM = o.baselineM ?? 0.12;
  if (!(focalPx > 0) || !(baselineM > 0)) {
    throw new UsageError('rig', `focal length and baseline must be positive, got ${focalPx} px and ${baselineM} m`);
  }
  return {
    width: o.width,
    height: o.height,
    focalPx,
    baselineM,
    cx: o.cx ?? (o.width - 1) / 2,
    cy: o.cy ?? (o.height - 1) / 2,
    cxShiftPx: o.cxShiftPx ?? 0,
    ...(o.cyShiftPx ? { cyShiftPx: o.cyShiftPx } : {}),
    pose: o.pose ?? DEFAULT_POSE,
  };
}

/** The rig's camera as the rest of parallax sees it. */
export function cameraOf(rig: Rig): Camera {
  return { focalPx: rig.focalPx, baselineM: rig.baselineM, cxShiftPx: rig.cxShiftPx };
}

/** A rig looking from the scene's suggested viewpoint. */
export function rigForScene(scene: Scene, o: Omit<RigOptions, 'pose'>): Rig {
  return makeRig({ ...o, pose: scene.view ?? DEFAULT_POSE });
}

/**
 * Camera axes in world coordinates for a pose: right, down (image y) and forward (optical
 * axis). Pitch turns the optical axis down, yaw turns it to the right (toward +x).
 */
export function cameraAxes(pose: Pose): { right: Vec3; down: Vec3; forward: Vec3 } {
  const cy = Math.cos(pose.yawRad);
  const sy = Math.sin(pose.yawRad);
  const cp = Math.cos(pose.pitchRad);
  const sp = Math.sin(pose.pitchRad);
  return {
    right: [cy, 0, -sy],
    down: [-sp * sy, -cp, -sp * cy],
    forward: [cp * sy, -sp, cp * cy],
  };
}

/** One view of the rig (left or right camera), as the ray caster needs it. */
export interface View {
  readonly width: number;
  readonly height: number;
  readonly focalPx: number;
  readonly cx: number;
  readonly cy: number;
  /** Optical centre in world coordinates. */
  readonly centre: Vec3;
  readonly right: Vec3;
  readonly down: Vec3;
  readonly forward: Vec3;
}

export function viewOf(rig: Rig, which: 'left' | 'right'): View {
  const ax = cameraAxes(rig.pose);
  const p = rig.pose.position;
  const b = which === 'right' ? rig.baselineM : 0;
  return {
    width: rig.width,
    height: rig.height,
    focalPx: rig.focalPx,
    cx: which === 'right' ? rig.cx + rig.cxShiftPx : rig.cx,
    cy: which === 'right' ? rig.cy + (rig.cyShiftPx ?? 0) : rig.cy,
    centre: [p[0] + b * ax.right[0], p[1] + b * ax.right[1], p[2] + b * ax.right[2]],
    right: ax.right,
    down: ax.down,
    forward: ax.forward,
  };
}

