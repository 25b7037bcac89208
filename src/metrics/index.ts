/** Public surface of per-pair scoring (re-exports; see the individual files). */
export { scorePair, figuresFromSums, emptySums, addSums, DEFAULT_DEPTH_EPS } from './score.js';
export { quantilesLinear, quantileLinear, selectInPlace, lerpNumpy } from './quantile.js';
export * from './types.js';
export { segmentStats, groupStats, type SegmentStats } from './segment-stats.js';
