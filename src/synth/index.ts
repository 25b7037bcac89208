/** The synthetic scene renderer behind the demo datasets. */
export { splitmix32, hash32, hashUnit, subSeed, fmix32, type Prng } from './prng.js';
export {
  type Vec3,
  type Pattern,
  type Material,
  type Primitive,
  type Pose,
  type Scene,
  add,
  sub,
  scale,
  dot,
  cross,
  normalize,
  rectAround,
  boxOnFloor,
  lightFrom,
} from './scene.js';
export {
  type Rig,
  type RigOptions,
  type View,
  makeRig,
  cameraOf,
  rigForScene,
  cameraAxes,
  viewOf,
  DEFAULT_POSE,
} from './rig.js';
export { type SensorModel, DEFAULT_SENSOR, applySensor } from './sensor.js';
export { renderPair, type RenderOptions, type StereoRender } from './render.js';
export { compileGeometry, intersectPrimitive, newRay, setRay, RAY_T } from './intersect.js';
export { compileMaterials, patternAt } from './texture.js';
export {
  dockScene,
  DOCK_VARIANTS,
  DOCK_TAGS,
  DOCK_SENSOR,
  MISMATCH_RIGHT_SENSOR,
  type DockVariant,
} from './dock.js';
export { randomDotPair, defaultDotLayers, type DotLayer, type RandomDotOptions } from './dots.js';
export { planeFacing, planeWithDisparity } from './planes.js';
export {
  writeDemoDataset,
  writeSyntheticDataset,
  rangeCovering,
  DEMO_PAIRS,
  DEMO_NAME,
  DEMO_WIDTH,
  DEMO_HEIGHT,
  DOCK_HFOV_DEG,
  DOCK_BASELINE_M,
  type DemoOptions,
  type DemoPairSpec,
  type SyntheticOptions,
} from './dataset.js';
