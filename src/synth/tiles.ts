/**
 * Culling for the ray caster: each primitive's convex hull is clipped to the near plane
 * and projected; its screen bounding box (plus one pixel) lists it in the 8x8 pixel
 * tiles it covers, so a ray only tests the primitives of its tile.
 */
import { hullOf } from './intersect.js';
import type { View } from './rig.js';
import type { Scene } from './scene.js';

export const TILE = 8;
export const NEAR = 1e-3;

export interface Tiles {
  readonly tilesX: number;
  readonly tilesY: number;
  /** Candidate list of tile i: list[start[i] .. start[i + 1]). */
  readonly start: Int32Array;
  readonly list: Int32Array;
}

/**
 * Screen footprint of each primitive in a view: its bounding box (x0, x1, y0, y1; x0 > x1
 * when it is not in front of the camera) and, for rects, the projected polygon after
 * clipping to the near plane (convex, so tiles can be tested exactly by separating axes).
 */
interface Footprint {
  readonly box: Float64Array;
  readonly polys: (Float64Array | null)[];
}

function footprints(scene: Scene, view: View): Footprint {
  const n = scene.primitives.length;
  const box = new Float64Array(n * 4);
  const polys: (Float64Array | null)[] = [];
  const { centre: c, right: r, down: d, forward: f, focalPx, cx, cy } = view;
  for (let i = 0; i < n; i++) {
    const prim = scene.primitives[i];
    const { verts, edges } = hullOf(prim);
    const cam = verts.map((w) => {
      const x = w[0] - c[0];
      const y = w[1] - c[1];
      const z = w[2] - c[2];
      return [x * r[0] + y * r[1] + z * r[2], x * d[0] + y * d[1] + z * d[2], x * f[0] + y * f[1] + z * f[2]] as const;
    });
    const pts: number[] = [];
    const project = (X: number, Y: number, Z: number): void => {
      pts.push(cx + (focalPx * X) / Z, cy + (focalPx * Y) / Z);
    };
    if (prim.kind === 'rect') {
      // Sutherland-Hodgman against Z >= NEAR, vertices in order around the parallelogram.
      for (let k = 0; k < 4; k++) {
        const pa = cam[k];
        const pb = cam[(k + 1) % 4];
        if (pa[2] >= NEAR) project(pa[0], pa[1], pa[2]);
        if ((pa[2] < NEAR) !== (pb[2] < NEAR)) {
          const t = (NEAR - pa[2]) / (pb[2] - pa[2]);
          project(pa[0] + t * (pb[0] - pa[0]), pa[1] + t * (pb[1] - pa[1]), NEAR);
        }
      }
    } else {
      for (const p of cam) if (p[2] >= NEAR) project(p[0], p[1], p[2]);
      for (const [a, b] of edges) {
        const pa = cam[a];
        const pb = cam[b];
        if ((pa[2] < NEAR) !== (pb[2] < NEAR)) {
          const t = (NEAR - pa[2]) / (pb[2] - pa[2]);
          project(pa[0] + t * (pb[0] - pa[0]), pa[1] + t * (pb[1] - pa[1]), NEAR);
        }
      }
    }
    let x0 = Infinity;
    let x1 = -Infinity;
    let y0 = Infinity;
    let y1 = -Infinity;
    for (let k = 0; k < pts.length; k += 2) {
      x0 = Math.min(x0, pts[k]);
      x1 = Math.max(x1, pts[k]);
      y0 = Math.min(y0, pts[k + 1]);
      y1 = Math.max(y1, pts[k + 1]);
    }
    box[i * 4] = pts.length ? x0 : 1;
    box[i * 4 + 1] = pts.length ? x1 : 0;
    box[i * 4 + 2] = pts.length ? y0 : 1;
    box[i * 4 + 3] = pts.length ? y1 : 0;
    polys.push(prim.kind === 'rect' && pts.length >= 6 ? Float64Array.from(pts) : null);
  }
  return { box, polys };
}

/**
 * Does the convex polygon (x, y pairs) overlap the rectangle [rx0, rx1] x [ry0, ry1]?
 * Separating axis test over the polygon's edge normals (the box axes are checked by the caller).
 */
function polyOverlapsRect(poly: Float64Array, rx0: number, rx1: number, ry0: number, ry1: number): boolean {
  const m = poly.length / 2;
  for (let k = 0; k < m; k++) {
    const ax = poly[2 * k];
    const ay = poly[2 * k + 1];
    const bx = poly[(2 * k + 2) % poly.length];
    const by = poly[(2 * k + 3) % poly.length];
    const nx = ay - by;
    const ny = bx - ax;
    if (nx === 0 && ny === 0) continue;
    let pmin = Infinity;
    let pmax = -Infinity;
    for (let j = 0; j < m; j++) {
      const v = poly[2 * j] * nx + poly[2 * j + 1] * ny;
      if (v < pmin) pmin = v;
      if (v > pmax) pmax = v;
    }
    const c0 = rx0 * nx + ry0 * ny;
    const c1 = rx1 * nx + ry0 * ny;
    const c2 = rx0 * nx + ry1 * ny;
    const c3 = rx1 * nx + ry1 * ny;
    const rmin = Math.min(c0, c1, c2, c3);
    const rmax = Math.max(c0, c1, c2, c3);
    if (rmax < pmin || rmin > pmax) return false;
  }
  return true;
}

/** Slack around each tile's pixel footprint when testing overlap (px). */
export const TILE_SLACK = 1.5;

export function buildTiles(scene: Scene, view: View): Tiles {
  const tilesX = Math.ceil(view.width / TILE);
  const tilesY = Math.ceil(view.height / TILE);
  const nt = tilesX * tilesY;
  const { box, polys } = footprints(scene, view);
  const n = scene.primitives.length;
  // Per tile, the primitives whose footprint meets the tile's pixels (plus slack).
  const perTile: number[][] = Array.from({ length: nt }, () => []);
  for (let i = 0; i < n; i++) {
    const x0 = box[i * 4];
    const x1 = box[i * 4 + 1];
    const y0 = box[i * 4 + 2];
    const y1 = box[i * 4 + 3];
    if (!(x1 >= x0)) continue;
    const px0 = Math.max(0, Math.floor(Math.max(-1e9, x0) - TILE_SLACK));
    const px1 = Math.min(view.width - 1, Math.ceil(Math.min(1e9, x1) + TILE_SLACK));
    const py0 = Math.max(0, Math.floor(Math.max(-1e9, y0) - TILE_SLACK));
    const py1 = Math.min(view.height - 1, Math.ceil(Math.min(1e9, y1) + TILE_SLACK));
    if (px0 > px1 || py0 > py1) continue;
    const poly = polys[i];
    for (let ty = Math.floor(py0 / TILE); ty <= Math.floor(py1 / TILE); ty++) {
      for (let tx = Math.floor(px0 / TILE); tx <= Math.floor(px1 / TILE); tx++) {
        if (poly) {
          const rx0 = tx * TILE - 0.5 - TILE_SLACK;
          const rx1 = Math.min(view.width, (tx + 1) * TILE) - 0.5 + TILE_SLACK;
          const ry0 = ty * TILE - 0.5 - TILE_SLACK;
          const ry1 = Math.min(view.height, (ty + 1) * TILE) - 0.5 + TILE_SLACK;
          if (!polyOverlapsRect(poly, rx0, rx1, ry0, ry1)) continue;
        }
        perTile[ty * tilesX + tx].push(i);
      }
    }
  }
  const start = new Int32Array(nt + 1);
  for (let t = 0; t < nt; t++) start[t + 1] = start[t] + perTile[t].length;
  const list = new Int32Array(start[nt]);
  for (let t = 0; t < nt; t++) list.set(perTile[t], start[t]);
  return { tilesX, tilesY, start, list };
}

/** Scratch: the ray being cast, and the surface frame + pattern value at its hit. */
