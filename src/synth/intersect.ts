/**
 * Ray-primitive intersection in float64 over a scene compiled into flat typed arrays.
 * Rays are o + t * dir with t in (tmin, tmax); dir need not be unit length.
 */
import type { Primitive, Scene } from './scene.js';

// Layout codes of the flat geometry arrays; texture.ts and dataset.ts have lists of the same
// shape (pattern codes, demo constants), each a plain list of named numbers.
export const KIND_RECT = 0;
export const KIND_BOX = 1;
export const KIND_CYL = 2;

/** Float64 parameters per primitive. */
export const PSTRIDE = 24;

export interface CompiledGeometry {
  readonly count: number;
  readonly kind: Int32Array;
  readonly material: Int32Array;
  /**
   * rect: O(0..2) U(3..5) V(6..8) N=UxV(9..11) Ud(12..14) Vd(15..17) |U|(18) |V|(19) |N|(20)
   * box:  min(0..2) max(3..5)
   * cyl:  cx(0) cz(1) r(2) y0(3) y1(4)
   */
  readonly p: Float64Array;
}

export function compileGeometry(scene: Scene): CompiledGeometry {
  const prims = scene.primitives;
  const n = prims.length;
  const kind = new Int32Array(n);
  const material = new Int32Array(n);
  const p = new Float64Array(n * PSTRIDE);
  for (let i = 0; i < n; i++) {
    const q = prims[i];
    material[i] = q.material;
    const o = i * PSTRIDE;
    if (q.kind === 'rect') {
      kind[i] = KIND_RECT;
      const [ux, uy, uz] = q.u;
      const [vx, vy, vz] = q.v;
      const nx = uy * vz - uz * vy;
      const ny = uz * vx - ux * vz;
      const nz = ux * vy - uy * vx;
      const nn = nx * nx + ny * ny + nz * nz;
      if (!(nn > 0)) throw new Error(`scene ${scene.name}: rect ${i} is degenerate`);
      p.set(q.origin, o);
      p.set(q.u, o + 3);
      p.set(q.v, o + 6);
      p[o + 9] = nx;
      p[o + 10] = ny;
      p[o + 11] = nz;
      // Dual vectors: a = (P - O) . (V x N) / |N|^2, b = (P - O) . (N x U) / |N|^2.
      p[o + 12] = (vy * nz - vz * ny) / nn;
      p[o + 13] = (vz * nx - vx * nz) / nn;
      p[o + 14] = (vx * ny - vy * nx) / nn;
      p[o + 15] = (ny * uz - nz * uy) / nn;
      p[o + 16] = (nz * ux - nx * uz) / nn;
      p[o + 17] = (nx * uy - ny * ux) / nn;
      p[o + 18] = Math.hypot(ux, uy, uz);
      p[o + 19] = Math.hypot(vx, vy, vz);
      p[o + 20] = Math.sqrt(nn);
    } else if (q.kind === 'box') {
      kind[i] = KIND_BOX;
      for (let a = 0; a < 3; a++) {
        if (!(q.max[a] > q.min[a])) throw new Error(`scene ${scene.name}: box ${i} has no volume`);
        p[o + a] = q.min[a];
        p[o + 3 + a] = q.max[a];
      }
    } else {
      kind[i] = KIND_CYL;
      if (!(q.radius > 0 && q.y1 > q.y0)) throw new Error(`scene ${scene.name}: cylinder ${i} is degenerate`);
      p[o] = q.cx;
      p[o + 1] = q.cz;
      p[o + 2] = q.radius;
      p[o + 3] = q.y0;
      p[o + 4] = q.y1;
    }
  }
  return { count: n, kind, material, p };
}

/**
 * A ray in a Float64Array (doubles passed as call arguments would be boxed on every call):
 * [ox, oy, oz, dx, dy, dz, tmin, tmax, t]. intersectPrimitive writes the hit's t into slot 8.
 */
export const RAY_T = 8;
export function newRay(): Float64Array {
  return new Float64Array(9);
}
export function setRay(ray: Float64Array, o: readonly number[], d: readonly number[], tmin: number, tmax: number): Float64Array {
  ray[0] = o[0];
  ray[1] = o[1];
  ray[2] = o[2];
  ray[3] = d[0];
  ray[4] = d[1];
  ray[5] = d[2];
  ray[6] = tmin;
  ray[7] = tmax;
  ray[8] = Infinity;
  return ray;
}

/** The ray interval [t0, t1] while a box is clipped (module scratch: no allocation per ray). */
const SLAB = new Float64Array(2);

/**
 * Clips SLAB to the t where o + t d lies in [lo, hi] on one axis; false when the interval
 * becomes empty (or the ray runs parallel outside the slab).
 */
function clipSlab(lo: number, hi: number, o: number, d: number): boolean {
  if (d === 0) return !(o < lo || o > hi);
  const inv = 1 / d;
  let ta = (lo - o) * inv;
  let tb = (hi - o) * inv;
  if (ta > tb) {
    const s = ta;
    ta = tb;
    tb = s;
  }
  if (ta > SLAB[0]!) SLAB[0] = ta;
  if (tb < SLAB[1]!) SLAB[1] = tb;
  return !(SLAB[0]! > SLAB[1]!);
}

/**
 * Nearest hit of primitive k with the ray in (tmin, tmax): writes t to ray[RAY_T]
 * (Infinity when there is none) and returns whether there is a hit.
 */
// The ray is unpacked into locals here and in render.ts's nearest() on purpose: each is a
// hot loop over primitives, and reading through a shared accessor would cross a call per test.
export function intersectPrimitive(g: CompiledGeometry, k: number, ray: Float64Array): boolean {
  const ox = ray[0];
  const oy = ray[1];
  const oz = ray[2];
  const dx = ray[3];
  const dy = ray[4];
  const dz = ray[5];
  const tmin = ray[6];
  const tmax = ray[7];
  ray[RAY_T] = Infinity;
  const p = g.p;
  const o = k * PSTRIDE;
  const kind = g.kind[k];
  if (kind === KIND_RECT) {
    const nx = p[o + 9];
    const ny = p[o + 10];
    const nz = p[o + 11];
    const den = dx * nx + dy * ny + dz * nz;
    if (den === 0) return false;
    const wx = p[o] - ox;
    const wy = p[o + 1] - oy;
    const wz = p[o + 2] - oz;
    const t = (wx * nx + wy * ny + wz * nz) / den;
    if (!(t > tmin && t < tmax)) return false;
    const qx = ox + t * dx - p[o];
    const qy = oy + t * dy - p[o + 1];
    const qz = oz + t * dz - p[o + 2];
    const a = qx * p[o + 12] + qy * p[o + 13] + qz * p[o + 14];
    if (a < 0 || a > 1) return false;
    const b = qx * p[o + 15] + qy * p[o + 16] + qz * p[o + 17];
    if (b < 0 || b > 1) return false;
    ray[RAY_T] = t;
    return true;
  }
  if (kind === KIND_BOX) {
    // Slab method (Kay & Kajiya 1986): the ray's interval clipped by each axis's slab.
    SLAB[0] = tmin;
    SLAB[1] = tmax;
    if (!clipSlab(p[o]!, p[o + 3]!, ox, dx) || !clipSlab(p[o + 1]!, p[o + 4]!, oy, dy) || !clipSlab(p[o + 2]!, p[o + 5]!, oz, dz)) return false;
    const t0 = SLAB[0]!;
    // Entry point; a ray starting inside the box sees no surface from inside (walls are rects).
    if (!(t0 > tmin)) return false;
    ray[RAY_T] = t0;
    return true;
  }
  // Vertical cylinder with caps.
  const cx = p[o];
  const cz = p[o + 1];
  const r = p[o + 2];
  const y0 = p[o + 3];
  const y1 = p[o + 4];
  let best = Infinity;
  const fx = ox - cx;
  const fz = oz - cz;
  const a = dx * dx + dz * dz;
  if (a > 0) {
    const b = fx * dx + fz * dz;
    const c = fx * fx + fz * fz - r * r;
    const disc = b * b - a * c;
    if (disc >= 0) {
      const sq = Math.sqrt(disc);
      // Numerically stable roots (q form).
      const q = b > 0 ? -(b + sq) : -(b - sq);
      let ta = q / a;
      let tb = q !== 0 ? c / q : ta;
      if (ta > tb) {
        const s = ta;
        ta = tb;
        tb = s;
      }
      if (ta > tmin && ta < tmax) {
        const y = oy + ta * dy;
        if (y >= y0 && y <= y1) best = ta;
      }
      if (best === Infinity && tb > tmin && tb < tmax) {
        const y = oy + tb * dy;
        if (y >= y0 && y <= y1) best = tb;
      }
    }
  }
  if (dy !== 0) {
    for (let cap = 0; cap < 2; cap++) {
      const yc = cap === 0 ? y0 : y1;
      const t = (yc - oy) / dy;
      if (t > tmin && t < tmax && t < best) {
        const hx = fx + t * dx;
        const hz = fz + t * dz;
        if (hx * hx + hz * hz <= r * r) best = t;
      }
    }
  }
  ray[RAY_T] = best;
  return best < Infinity;
}

/**
 * Surface frame at the hit point o + ray[RAY_T] * d of primitive k: writes the unit normal
 * facing the incoming ray and the surface coordinates (u, v) in metres into out[0..4].
 */
export function surfaceAt(g: CompiledGeometry, k: number, ray: Float64Array, out: Float64Array): void {
  const dx = ray[3];
  const dy = ray[4];
  const dz = ray[5];
  const t = ray[RAY_T];
  const px = ray[0] + t * dx;
  const py = ray[1] + t * dy;
  const pz = ray[2] + t * dz;
  const p = g.p;
  const o = k * PSTRIDE;
  const kind = g.kind[k];
  let nx = 0;
  let ny = 0;
  let nz = 0;
  let u: number;
  let v: number;
  if (kind === KIND_RECT) {
    const inv = 1 / p[o + 20];
    nx = p[o + 9] * inv;
    ny = p[o + 10] * inv;
    nz = p[o + 11] * inv;
    const qx = px - p[o];
    const qy = py - p[o + 1];
    const qz = pz - p[o + 2];
    u = (qx * p[o + 12] + qy * p[o + 13] + qz * p[o + 14]) * p[o + 18];
    v = (qx * p[o + 15] + qy * p[o + 16] + qz * p[o + 17]) * p[o + 19];
  } else if (kind === KIND_BOX) {
    // The face whose plane is nearest to the point.
    let bestD = Infinity;
    let axis = 0;
    for (let a = 0; a < 3; a++) {
      const c = a === 0 ? px : a === 1 ? py : pz;
      const dl = Math.abs(c - p[o + a]);
      const dh = Math.abs(c - p[o + 3 + a]);
      if (dl < bestD) {
        bestD = dl;
        axis = a;
      }
      if (dh < bestD) {
        bestD = dh;
        axis = a + 3;
      }
    }
    const a = axis % 3;
    const s = axis < 3 ? -1 : 1;
    if (a === 0) {
      nx = s;
      u = pz;
      v = py;
    } else if (a === 1) {
      ny = s;
      u = px;
      v = pz;
    } else {
      nz = s;
      u = px;
      v = py;
    }
  } else {
    const cx = p[o];
    const cz = p[o + 1];
    const r = p[o + 2];
    const hx = px - cx;
    const hz = pz - cz;
    const eps = 1e-9 * (1 + r);
    if (Math.abs(py - p[o + 3]) < eps && hx * hx + hz * hz < r * r * (1 - 1e-9)) {
      ny = -1;
      u = px;
      v = pz;
    } else if (Math.abs(py - p[o + 4]) < eps && hx * hx + hz * hz < r * r * (1 - 1e-9)) {
      ny = 1;
      u = px;
      v = pz;
    } else {
      nx = hx / r;
      nz = hz / r;
      u = Math.atan2(hz, hx) * r;
      v = py;
    }
  }
  if (nx * dx + ny * dy + nz * dz > 0) {
    nx = -nx;
    ny = -ny;
    nz = -nz;
  }
  out[0] = nx;
  out[1] = ny;
  out[2] = nz;
  out[3] = u;
  out[4] = v;
}

/** Convex hull vertices and edges of a primitive (for screen-space culling). */
export function hullOf(q: Primitive): { verts: number[][]; edges: [number, number][] } {
  if (q.kind === 'rect') {
    const o = q.origin;
    const verts = [
      [o[0], o[1], o[2]],
      [o[0] + q.u[0], o[1] + q.u[1], o[2] + q.u[2]],
      [o[0] + q.u[0] + q.v[0], o[1] + q.u[1] + q.v[1], o[2] + q.u[2] + q.v[2]],
      [o[0] + q.v[0], o[1] + q.v[1], o[2] + q.v[2]],
    ];
    return { verts, edges: [[0, 1], [1, 2], [2, 3], [3, 0]] };
  }
  const lo = q.kind === 'box' ? q.min : [q.cx - q.radius, q.y0, q.cz - q.radius];
  const hi = q.kind === 'box' ? q.max : [q.cx + q.radius, q.y1, q.cz + q.radius];
  const verts: number[][] = [];
  for (let i = 0; i < 8; i++) verts.push([i & 1 ? hi[0] : lo[0], i & 2 ? hi[1] : lo[1], i & 4 ? hi[2] : lo[2]]);
  const edges: [number, number][] = [];
  for (let i = 0; i < 8; i++) for (let b = 1; b < 8; b <<= 1) if (!(i & b)) edges.push([i, i | b]);
  return { verts, edges };
}
