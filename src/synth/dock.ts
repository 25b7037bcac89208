/**
 * Scene builders: a loading dock seen by the stereo camera of a warehouse vehicle.
 *
 * Every variant is a closed room (floor, ceiling, four walls), so every camera ray hits a
 * surface and the truth is dense. The vehicle camera sits about 1.2 m above the floor,
 * pitched a few degrees down. Layouts, textures and the viewpoint are drawn from the seed.
 *
 * - crates:    crates on pallets at 2-9 m, some stacked; wood planks and wrap textures
 * - bare-wall: a painted wall (almost no texture) 3.5-5 m ahead, a door frame, a few items
 * - ramp:      a loading ramp rising away from the vehicle, and a panel leaning on a crate
 * - posts:     thin poles and a rail in front of a textured wall
 * - shelving:  a rack with a slatted back panel and a slatted fence (periodic texture)
 * - mismatch:  the crates layout, with a right camera of other gain, offset and gamma
 */
import { UsageError } from '../core/errors.js';
import { splitmix32, subSeed, type Prng } from './prng.js';
import { boxOnFloor, lightFrom, type Material, type Pattern, type Primitive, type Scene, type Vec3 } from './scene.js';
import type { SensorModel } from './sensor.js';

export const DOCK_VARIANTS = ['crates', 'bare-wall', 'ramp', 'posts', 'shelving', 'mismatch'] as const;
export type DockVariant = (typeof DOCK_VARIANTS)[number];

/** Tags of each variant (the hard part it exercises), as written to manifests. */
export const DOCK_TAGS: Readonly<Record<DockVariant, readonly string[]>> = {
  crates: ['clutter', 'textured'],
  'bare-wall': ['low-texture'],
  ramp: ['slanted'],
  posts: ['thin-structures'],
  shelving: ['repetitive'],
  mismatch: ['brightness-mismatch', 'clutter'],
};

/** The default sensor of the dock cameras: display gamma, a little read noise. */
export const DOCK_SENSOR: SensorModel = { gain: 1, offset: 0, gamma: 2.2, noiseSigma: 1 };
/** The right camera of the `mismatch` variant: brighter, lifted blacks, other gamma. */
export const MISMATCH_RIGHT_SENSOR: SensorModel = { gain: 1.35, offset: 0.03, gamma: 2.0, noiseSigma: 1.5 };

interface Build {
  readonly rng: Prng;
  readonly seed: number;
  readonly materials: Material[];
  readonly prims: Primitive[];
}

function material(b: Build, pattern: Pattern, colorA: Vec3, colorB: Vec3): number {
  b.materials.push({ pattern, colorA, colorB, seed: subSeed(b.seed, 100 + b.materials.length) });
  return b.materials.length - 1;
}

/** The room: floor y = 0, ceiling, side walls at +-halfWidth, back wall at backZ, front wall behind the vehicle. */
function room(b: Build, backZ: number, backMaterial: number): void {
  const halfW = 8;
  const ceil = 5.5;
  const frontZ = -4;
  const floor = material(b, { kind: 'noise', scale: 0.35, octaves: 5 }, [0.22, 0.22, 0.21], [0.55, 0.54, 0.5]);
  const ceiling = material(b, { kind: 'slats', period: 0.6, duty: 0.85, axis: 'v', grain: 0.4 }, [0.12, 0.12, 0.13], [0.4, 0.4, 0.42]);
  const side = material(b, { kind: 'noise', scale: 0.5, octaves: 4 }, [0.35, 0.33, 0.3], [0.6, 0.58, 0.52]);
  const depth = backZ - frontZ;
  const P = b.prims;
  P.push({ kind: 'rect', origin: [-halfW, 0, frontZ], u: [2 * halfW, 0, 0], v: [0, 0, depth], material: floor });
  P.push({ kind: 'rect', origin: [-halfW, ceil, frontZ], u: [2 * halfW, 0, 0], v: [0, 0, depth], material: ceiling });
  P.push({ kind: 'rect', origin: [-halfW, 0, frontZ], u: [0, 0, depth], v: [0, ceil, 0], material: side });
  P.push({ kind: 'rect', origin: [halfW, 0, frontZ], u: [0, 0, depth], v: [0, ceil, 0], material: side });
  P.push({ kind: 'rect', origin: [-halfW, 0, backZ], u: [2 * halfW, 0, 0], v: [0, ceil, 0], material: backMaterial });
  P.push({ kind: 'rect', origin: [-halfW, 0, frontZ], u: [2 * halfW, 0, 0], v: [0, ceil, 0], material: side });
  // A painted safety line on the floor (1 mm above it).
  const line = material(b, { kind: 'paint', amplitude: 0.05, scale: 1 }, [0.7, 0.6, 0.1], [0.75, 0.65, 0.12]);
  const lx = b.rng.range(-3, 3);
  P.push({ kind: 'rect', origin: [lx, 0.001, 1.5], u: [0.1, 0, 0], v: [0, 0, backZ - 2], material: line });
}

/** A roller door in the back wall: horizontal slats. */
function rollerDoor(b: Build, x: number, backZ: number, width: number, height: number): void {
  const door = material(b, { kind: 'slats', period: 0.09, duty: 0.7, axis: 'v', grain: 0.25 }, [0.18, 0.2, 0.24], [0.45, 0.5, 0.58]);
  b.prims.push({ kind: 'rect', origin: [x - width / 2, 0, backZ - 0.02], u: [width, 0, 0], v: [0, height, 0], material: door });
}

/** A pallet with a crate (sometimes two) on it, floor centre (x, z). */
function crateOnPallet(b: Build, x: number, z: number, pallet: number, wood: number, wrap: number): void {
  const r = b.rng;
  const w = r.range(0.8, 1.2);
  const d = r.range(0.8, 1.1);
  b.prims.push(boxOnFloor([x, 0, z], [w, 0.14, d], pallet));
  const cw = w * r.range(0.8, 0.98);
  const cd = d * r.range(0.8, 0.98);
  const ch = r.range(0.5, 1.1);
  const mat = r.next() < 0.7 ? wood : wrap;
  b.prims.push(boxOnFloor([x + r.range(-0.03, 0.03), 0.14, z], [cw, ch, cd], mat));
  if (r.next() < 0.4) {
    const s = r.range(0.45, 0.75);
    b.prims.push(boxOnFloor([x + r.range(-0.1, 0.1), 0.14 + ch, z + r.range(-0.05, 0.05)], [cw * s, r.range(0.3, 0.6), cd * s], r.next() < 0.5 ? wood : wrap));
  }
}

function crateMaterials(b: Build): { pallet: number; wood: number; wrap: number } {
  return {
    pallet: material(b, { kind: 'planks', period: 0.1, grainScale: 0.02 }, [0.1, 0.07, 0.04], [0.5, 0.38, 0.22]),
    wood: material(b, { kind: 'planks', period: 0.14, grainScale: 0.03 }, [0.16, 0.1, 0.05], [0.68, 0.5, 0.3]),
    wrap: material(b, { kind: 'noise', scale: 0.08, octaves: 4 }, [0.3, 0.32, 0.36], [0.75, 0.78, 0.8]),
  };
}

/** Crates scattered over a jittered grid of floor slots, none nearer than minZ. */
function scatterCrates(b: Build, count: number, minZ: number, maxZ: number): void {
  const m = crateMaterials(b);
  const slots: [number, number][] = [];
  for (let z = minZ; z <= maxZ; z += 1.6) for (let x = -5; x <= 5; x += 1.6) slots.push([x, z]);
  for (let i = 0; i < count && slots.length; i++) {
    const [x, z] = slots.splice(b.rng.int(slots.length), 1)[0];
    crateOnPallet(b, x + b.rng.range(-0.2, 0.2), z + b.rng.range(-0.2, 0.2), m.pallet, m.wood, m.wrap);
  }
}

function textureWall(b: Build): number {
  return material(b, { kind: 'noise', scale: 0.25, octaves: 5 }, [0.3, 0.22, 0.18], [0.7, 0.55, 0.45]);
}

function buildCrates(b: Build): number {
  const backZ = b.rng.range(11, 14);
  room(b, backZ, textureWall(b));
  rollerDoor(b, b.rng.range(-2, 2), backZ, 3.2, 3.4);
  scatterCrates(b, 6 + b.rng.int(4), 2.6, 9);
  return backZ;
}

function buildBareWall(b: Build): number {
  const backZ = b.rng.range(3.8, 5);
  const paint = material(b, { kind: 'paint', amplitude: 0.015, scale: 1.5 }, [0.6, 0.6, 0.56], [0.64, 0.63, 0.59]);
  room(b, backZ, paint);
  // Door frame (thin boxes) and a plain door panel, both painted.
  const frame = material(b, { kind: 'paint', amplitude: 0.02, scale: 1 }, [0.3, 0.32, 0.35], [0.33, 0.35, 0.38]);
  const dx = b.rng.range(-1.5, 1);
  b.prims.push({ kind: 'box', min: [dx - 0.55, 0, backZ - 0.08], max: [dx - 0.47, 2.1, backZ], material: frame });
  b.prims.push({ kind: 'box', min: [dx + 0.47, 0, backZ - 0.08], max: [dx + 0.55, 2.1, backZ], material: frame });
  b.prims.push({ kind: 'box', min: [dx - 0.55, 2.1, backZ - 0.08], max: [dx + 0.55, 2.18, backZ], material: frame });
  const panel = material(b, { kind: 'paint', amplitude: 0.01, scale: 1 }, [0.5, 0.52, 0.55], [0.52, 0.54, 0.57]);
  b.prims.push({ kind: 'rect', origin: [dx - 0.47, 0, backZ - 0.03], u: [0.94, 0, 0], v: [0, 2.1, 0], material: panel });
  // A plain sign board and a cabinet against the wall.
  const sign = material(b, { kind: 'paint', amplitude: 0.03, scale: 0.5 }, [0.1, 0.35, 0.15], [0.12, 0.4, 0.18]);
  const sx = dx + b.rng.range(1.2, 2);
  b.prims.push({ kind: 'rect', origin: [sx, 1.5, backZ - 0.01], u: [0.5, 0, 0], v: [0, 0.35, 0], material: sign });
  const cab = material(b, { kind: 'paint', amplitude: 0.02, scale: 0.8 }, [0.55, 0.2, 0.15], [0.6, 0.23, 0.17]);
  b.prims.push(boxOnFloor([dx - b.rng.range(1.3, 2), 0, backZ - 0.3], [0.6, 1.0, 0.5], cab));
  return backZ;
}

function buildRamp(b: Build): number {
  const backZ = b.rng.range(12, 14);
  room(b, backZ, textureWall(b));
  rollerDoor(b, 0, backZ, 3.4, 3.6);
  // The ramp: a plane rising away from the vehicle (anti-slip studs over concrete).
  const studs = material(b, { kind: 'dots', scale: 0.07, density: 0.55, radius: 0.3 }, [0.3, 0.3, 0.32], [0.62, 0.62, 0.6]);
  const z0 = b.rng.range(3, 4);
  const len = b.rng.range(5, 6.5);
  const rise = b.rng.range(0.8, 1.2);
  const x0 = b.rng.range(-2.2, -1.2);
  const w = b.rng.range(2.6, 3.2);
  b.prims.push({ kind: 'rect', origin: [x0, 0, z0], u: [w, 0, 0], v: [0, rise, len], material: studs });
  // A platform at the top of the ramp.
  const plat = material(b, { kind: 'noise', scale: 0.2, octaves: 4 }, [0.25, 0.25, 0.25], [0.5, 0.5, 0.48]);
  b.prims.push({ kind: 'box', min: [x0 - 1, 0, z0 + len], max: [x0 + w + 1, rise, backZ], material: plat });
  // A board leaning on a crate beside the ramp: slanted in both image directions.
  const m = crateMaterials(b);
  const cx = x0 + w + b.rng.range(1.2, 1.8);
  const cz = z0 + b.rng.range(0.5, 1.5);
  b.prims.push(boxOnFloor([cx + 0.5, 0, cz + 0.6], [1.0, 1.0, 0.9], m.wood));
  const board = material(b, { kind: 'noise', scale: 0.06, octaves: 3 }, [0.35, 0.25, 0.15], [0.75, 0.6, 0.4]);
  b.prims.push({ kind: 'rect', origin: [cx - 0.4, 0, cz - 0.1], u: [1.2, 0, 0.25], v: [0.1, 0.95, 0.6], material: board });
  return backZ;
}

function buildPosts(b: Build): number {
  const backZ = b.rng.range(9, 11);
  room(b, backZ, textureWall(b));
  const stripes = material(b, { kind: 'slats', period: 0.25, duty: 0.5, axis: 'v', grain: 0.1 }, [0.08, 0.08, 0.08], [0.8, 0.65, 0.08]);
  const steel = material(b, { kind: 'noise', scale: 0.05, octaves: 3 }, [0.25, 0.27, 0.3], [0.55, 0.58, 0.62]);
  const n = 6 + b.rng.int(4);
  for (let i = 0; i < n; i++) {
    const z = b.rng.range(2.5, backZ - 1.5);
    const x = b.rng.range(-3.5, 3.5);
    const r = b.rng.range(0.025, 0.07);
    // Ends 5 cm under the ceiling: a cap coplanar with it would make the nearest hit a tie.
    b.prims.push({ kind: 'cylinder', cx: x, cz: z, radius: r, y0: 0, y1: 5.45, material: i % 2 ? stripes : steel });
  }
  // A thin guard rail between two of the posts' depths, and a few crates behind.
  const rz = b.rng.range(3, 5);
  b.prims.push({ kind: 'box', min: [-3, 0.95, rz], max: [2.5, 1.0, rz + 0.04], material: stripes });
  b.prims.push({ kind: 'box', min: [-3, 0.45, rz], max: [2.5, 0.48, rz + 0.04], material: steel });
  const m = crateMaterials(b);
  crateOnPallet(b, b.rng.range(-2, 2), backZ - 1.5, m.pallet, m.wood, m.wrap);
  return backZ;
}

function buildShelving(b: Build): number {
  const backZ = b.rng.range(10, 12);
  room(b, backZ, textureWall(b));
  const steel = material(b, { kind: 'noise', scale: 0.05, octaves: 3 }, [0.2, 0.25, 0.4], [0.3, 0.38, 0.6]);
  const slatPanel = material(b, { kind: 'slats', period: 0.06, duty: 0.5, axis: 'u', grain: 0.08 }, [0.15, 0.15, 0.16], [0.7, 0.7, 0.68]);
  const beam = material(b, { kind: 'slats', period: 0.05, duty: 0.6, axis: 'u', grain: 0.05 }, [0.5, 0.25, 0.05], [0.85, 0.5, 0.1]);
  const z = b.rng.range(3.5, 5);
  const x0 = b.rng.range(-3.5, -2.5);
  const len = b.rng.range(3.5, 4.5);
  const depth = 0.6;
  // Back panel with vertical slats, uprights, shelf beams with a periodic pattern.
  b.prims.push({ kind: 'rect', origin: [x0, 0, z + depth], u: [len, 0, 0], v: [0, 2.6, 0], material: slatPanel });
  for (const x of [x0, x0 + len / 2, x0 + len]) {
    b.prims.push({ kind: 'box', min: [x - 0.04, 0, z], max: [x + 0.04, 2.7, z + 0.08], material: steel });
    b.prims.push({ kind: 'box', min: [x - 0.04, 0, z + depth - 0.08], max: [x + 0.04, 2.7, z + depth], material: steel });
  }
  const m = crateMaterials(b);
  for (const h of [0.35, 1.2, 2.05]) {
    b.prims.push({ kind: 'box', min: [x0, h - 0.1, z], max: [x0 + len, h, z + 0.05], material: beam });
    b.prims.push({ kind: 'box', min: [x0, h - 0.03, z + 0.05], max: [x0 + len, h, z + depth], material: steel });
    for (let k = 0; k < 3; k++) {
      if (b.rng.next() < 0.5) continue;
      const bx = x0 + 0.4 + k * (len / 3) + b.rng.range(0, 0.3);
      const s = b.rng.range(0.3, 0.5);
      b.prims.push(boxOnFloor([bx, h, z + depth / 2 + 0.05], [s * 1.2, s, s], k % 2 ? m.wood : m.wrap));
    }
  }
  // A slatted safety fence to the right: more periodic texture at another depth.
  const fz = b.rng.range(5.5, 7);
  b.prims.push({ kind: 'rect', origin: [x0 + len + 1, 0, fz], u: [2.8, 0, -0.8], v: [0, 2, 0], material: slatPanel });
  return backZ;
}

/** Build one dock scene. Deterministic in (variant, seed). */
export function dockScene(variant: DockVariant, seed: number): Scene {
  if (!(DOCK_VARIANTS as readonly string[]).includes(variant)) {
    throw new UsageError('variant', `unknown dock variant "${variant}"; known: ${DOCK_VARIANTS.join(', ')}`);
  }
  const s = seed >>> 0;
  const b: Build = { rng: splitmix32(subSeed(s, 7)), seed: s, materials: [], prims: [] };
  switch (variant) {
    case 'crates':
    case 'mismatch':
      buildCrates(b);
      break;
    case 'bare-wall':
      buildBareWall(b);
      break;
    case 'ramp':
      buildRamp(b);
      break;
    case 'posts':
      buildPosts(b);
      break;
    case 'shelving':
      buildShelving(b);
      break;
  }
  const vr = splitmix32(subSeed(s, 8));
  const yawMax = variant === 'bare-wall' ? 0.12 : 0.2;
  return {
    name: `dock-${variant}`,
    materials: b.materials,
    primitives: b.prims,
    lightDir: lightFrom(vr.range(45, 65), vr.range(-35, 35)),
    ambient: 0.35,
    view: {
      position: [vr.range(-0.8, 0.8), vr.range(1.0, 1.4), 0],
      yawRad: vr.range(-yawMax, yawMax),
      pitchRad: vr.range(0.04, 0.12),
    },
    sensors: { left: DOCK_SENSOR, right: variant === 'mismatch' ? MISMATCH_RIGHT_SENSOR : DOCK_SENSOR },
    tags: DOCK_TAGS[variant],
  };
}
