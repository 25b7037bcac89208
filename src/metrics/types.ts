export type { RegionSums, RegionFigures, RegionScore, PairScore } from '../core/score.js';
export { DEFAULT_THRESHOLDS, DEFAULT_QUANTILES, DEFAULT_METRIC_SET, thresholdName, quantileName, type MetricSet } from './catalogue.js';
import type { MetricSet } from './catalogue.js';

export interface ScoreOptions extends MetricSet {
  camera?: { focalPx: number; baselineM: number; cxShiftPx: number };
  /** Depth figures skip truth with d + cxShiftPx <= depthEps. */
  depthEps?: number;
}
