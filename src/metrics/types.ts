export type { RegionSums, RegionFigures, RegionScore, PairScore } from '../core/score.js';

/** Default bad-pixel thresholds in px (column names over0.25px ... over3px). */
export const DEFAULT_THRESHOLDS: readonly number[] = [0.25, 0.5, 1, 2, 3];

/** Quantile levels reported as q50, q75, q90, q99. */
export const QUANTILES: readonly number[] = [0.5, 0.75, 0.9, 0.99];
export const QUANTILE_NAMES = ['q50', 'q75', 'q90', 'q99'] as const;

/** Column name of a threshold: 0.25 -> "over0.25px", 1 -> "over1px". */
export function thresholdName(t: number): string {
  return `over${String(t)}px`;
}

export interface ScoreOptions {
  thresholds: readonly number[];
  camera?: { focalPx: number; baselineM: number; cxShiftPx: number };
  /** Depth figures skip truth with d + cxShiftPx <= depthEps. */
  depthEps?: number;
}
