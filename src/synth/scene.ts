/**
 * Scene description for the synthetic renderer.
 *
 * World frame: x to the right, y up, z forward (away from the vehicle), metres.
 * Scenes are plain data (JSON-friendly); render.ts compiles them into flat typed arrays.
 */
import type { SensorModel } from './sensor.js';

export type Vec3 = readonly [number, number, number];

/**
 * Procedural surface patterns, all defined in the surface's own (u, v) coordinates in
 * metres, so both cameras see the same texture on the same point.
 *
 * - paint:  flat paint, only a faint low-frequency variation of `amplitude` (low texture)
 * - noise:  multi-octave value noise (fractal sum), cell `scale` metres, `octaves` levels
 * - slats:  periodic stripes of `period` metres, `duty` fraction bright, along u or v
 * - dots:   random discs on a jittered grid of `scale` metres, `density` in [0, 1]
 * - planks: boards of `period` metres along v, each with its own tint, plus fine grain
 */
export type Pattern =
  | { kind: 'paint'; amplitude?: number; scale?: number }
  | { kind: 'noise'; scale: number; octaves?: number; gain?: number }
  | { kind: 'slats'; period: number; duty?: number; axis?: 'u' | 'v'; grain?: number }
  | { kind: 'dots'; scale: number; density?: number; radius?: number }
  | { kind: 'planks'; period: number; grainScale?: number };

export interface Material {
  readonly pattern: Pattern;
  /** Linear albedo where the pattern value is 0 and where it is 1 (RGB, 0-1). */
  readonly colorA: Vec3;
  readonly colorB: Vec3;
  /** Seed of the pattern's random field. */
  readonly seed: number;
}

/**
 * Primitives. Rect: the parallelogram origin + a*u + b*v, a, b in [0, 1] (u and v need not be
 * orthogonal; two-sided). Box: axis-aligned, min/max corners. Cylinder: vertical (axis along
 * world y) with centre (cx, cz), radius, from y0 to y1, with caps.
 */
export type Primitive =
  | { kind: 'rect'; origin: Vec3; u: Vec3; v: Vec3; material: number }
  | { kind: 'box'; min: Vec3; max: Vec3; material: number }
  | { kind: 'cylinder'; cx: number; cz: number; radius: number; y0: number; y1: number; material: number };

/** A camera pose: optical centre of the left camera, yaw (to the right, rad) and pitch (down, rad). */
export interface Pose {
  readonly position: Vec3;
  readonly yawRad: number;
  readonly pitchRad: number;
}

export interface Scene {
  readonly name: string;
  readonly materials: readonly Material[];
  readonly primitives: readonly Primitive[];
  /** Unit vector toward the (directional) light, world frame. */
  readonly lightDir: Vec3;
  /** Ambient share of the shading, 0-1; the Lambert term gets the rest. */
  readonly ambient: number;
  /** Suggested viewpoint (used by rigForScene). */
  readonly view?: Pose;
  /** Suggested per-camera sensors (used by renderPair unless its options override). */
  readonly sensors?: { readonly left?: SensorModel; readonly right?: SensorModel };
  /** Tags describing what makes this scene hard (for manifests). */
  readonly tags?: readonly string[];
}

export function add(a: Vec3, b: Vec3): Vec3 {
  return [a[0] + b[0], a[1] + b[1], a[2] + b[2]];
}
export function sub(a: Vec3, b: Vec3): Vec3 {
  return [a[0] - b[0], a[1] - b[1], a[2] - b[2]];
}
export function scale(a: Vec3, k: number): Vec3 {
  return [a[0] * k, a[1] * k, a[2] * k];
}
export function dot(a: Vec3, b: Vec3): number {
  return a[0] * b[0] + a[1] * b[1] + a[2] * b[2];
}
export function cross(a: Vec3, b: Vec3): Vec3 {
  return [a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0]];
}
export function normalize(a: Vec3): Vec3 {
  const n = Math.hypot(a[0], a[1], a[2]);
  return n > 0 ? [a[0] / n, a[1] / n, a[2] / n] : [0, 0, 0];
}

/** A rectangle from its centre, two unit-free half-edge vectors. */
export function rectAround(centre: Vec3, halfU: Vec3, halfV: Vec3, material: number): Primitive {
  return {
    kind: 'rect',
    origin: sub(sub(centre, halfU), halfV),
    u: scale(halfU, 2),
    v: scale(halfV, 2),
    material,
  };
}

/** An axis-aligned box from its floor centre [x, y0, z] and its size [width x, height y, depth z]. */
export function boxOnFloor(floorCentre: Vec3, size: Vec3, material: number): Primitive {
  const [x, y0, z] = floorCentre;
  const [w, h, d] = size;
  return { kind: 'box', min: [x - w / 2, y0, z - d / 2], max: [x + w / 2, y0 + h, z + d / 2], material };
}

/** Light direction from elevation and azimuth (degrees), pointing toward the light. */
export function lightFrom(elevationDeg: number, azimuthDeg: number): Vec3 {
  const e = (elevationDeg * Math.PI) / 180;
  const a = (azimuthDeg * Math.PI) / 180;
  return normalize([Math.cos(e) * Math.sin(a), Math.sin(e), -Math.cos(e) * Math.cos(a)]);
}
