/**
 * Planes placed by what the camera should see, for calibration scenes and tests.
 *
 * A plane n . P = 1 in the left camera frame has 1/Z = n . (X/Z, Y/Z, 1), and with
 * X/Z = (x - cx)/f, Y/Z = (y - cy)/f its disparity d = f*B/Z - s is affine in (x, y).
 * planeWithDisparity inverts this: for d(x, y) = alpha*x + beta*y + gamma (pixel-centre
 * coordinates of the left image),
 *   n = (alpha*f, beta*f, alpha*cx + beta*cy + gamma + s) / (f*B).
 */
import type { Primitive, Vec3 } from './scene.js';
import { cameraAxes, type Rig } from './rig.js';

function cross(a: Vec3, b: Vec3): Vec3 {
  return [a[1] * b[2] - a[2] * b[1], a[2] * b[0] - a[0] * b[2], a[0] * b[1] - a[1] * b[0]];
}
function unit(a: Vec3): Vec3 {
  const n = Math.hypot(a[0], a[1], a[2]);
  return [a[0] / n, a[1] / n, a[2] / n];
}

/** Camera-frame point of the left camera to world coordinates. */
function toWorld(rig: Rig, p: Vec3): Vec3 {
  const { right: r, down: d, forward: f } = cameraAxes(rig.pose);
  const c = rig.pose.position;
  return [
    c[0] + p[0] * r[0] + p[1] * d[0] + p[2] * f[0],
    c[1] + p[0] * r[1] + p[1] * d[1] + p[2] * f[1],
    c[2] + p[0] * r[2] + p[1] * d[2] + p[2] * f[2],
  ];
}

/**
 * A rectangle in the plane n . P = 1 (left camera frame) large enough to cover the whole
 * left and right images: it spans `margin` times the farthest image-corner hit point.
 */
function planeRect(rig: Rig, n: Vec3, material: number, margin: number): Primitive {
  if (!(n[2] > 0)) throw new Error('plane must lie in front of the camera along the optical axis');
  const p0: Vec3 = [0, 0, 1 / n[2]];
  let reach = 0;
  for (const x of [-0.5, rig.width - 0.5]) {
    for (const y of [-0.5, rig.height - 0.5]) {
      const ray: Vec3 = [(x - rig.cx) / rig.focalPx, (y - rig.cy) / rig.focalPx, 1];
      const den = n[0] * ray[0] + n[1] * ray[1] + n[2] * ray[2];
      if (!(den > 0)) throw new Error('plane does not cover the image corners in front of the camera');
      const z = 1 / den;
      reach = Math.max(reach, Math.hypot(ray[0] * z - p0[0], ray[1] * z - p0[1], ray[2] * z - p0[2]));
    }
  }
  const h = (reach + rig.baselineM) * margin;
  const helper: Vec3 = Math.abs(n[1]) < 0.9 * Math.hypot(n[0], n[1], n[2]) ? [0, 1, 0] : [1, 0, 0];
  const e1 = unit(cross(n, helper));
  const e2 = unit(cross(n, e1));
  const o: Vec3 = [p0[0] - h * (e1[0] + e2[0]), p0[1] - h * (e1[1] + e2[1]), p0[2] - h * (e1[2] + e2[2])];
  const ow = toWorld(rig, o);
  const uw = toWorld(rig, [o[0] + 2 * h * e1[0], o[1] + 2 * h * e1[1], o[2] + 2 * h * e1[2]]);
  const vw = toWorld(rig, [o[0] + 2 * h * e2[0], o[1] + 2 * h * e2[1], o[2] + 2 * h * e2[2]]);
  return {
    kind: 'rect',
    origin: ow,
    u: [uw[0] - ow[0], uw[1] - ow[1], uw[2] - ow[2]],
    v: [vw[0] - ow[0], vw[1] - ow[1], vw[2] - ow[2]],
    material,
  };
}

/** A fronto-parallel plane at depth z (metres along the optical axis) filling the view. */
export function planeFacing(rig: Rig, z: number, material: number): Primitive {
  return planeRect(rig, [0, 0, 1 / z], material, 1.5);
}

/**
 * A plane whose left truth disparity is alpha*x + beta*y + gamma at pixel centre (x, y).
 * Needs alpha*x + beta*y + gamma + cxShiftPx > 0 over the image (the plane in front).
 */
export function planeWithDisparity(rig: Rig, alpha: number, beta: number, gamma: number, material: number): Primitive {
  const fb = rig.focalPx * rig.baselineM;
  const n: Vec3 = [(alpha * rig.focalPx) / fb, (beta * rig.focalPx) / fb, (alpha * rig.cx + beta * rig.cy + gamma + rig.cxShiftPx) / fb];
  return planeRect(rig, n, material, 1.5);
}
