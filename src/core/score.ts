import type { ParamValue } from './params.js';
import type { DepthProfile } from '../metrics/depth-profile.js';

/**
 * Raw sums of one region of one pair. Everything the per-pair figures and the pooled
 * aggregates need, so pooling never has to see pixels again.
 */
export interface RegionSums {
  /** Pixels in the region. */
  pixels: number;
  /** Pixels with a valid (finite) prediction. */
  valid: number;
  /** Sum of |e|, sum of e^2, sum of e, over valid predictions (e = prediction - truth). */
  sumAbs: number;
  sumSq: number;
  sumErr: number;
  /** Per threshold: pixels with |e| > t or an invalid prediction. */
  bad: number[];
  /**
   * Depth: pixels in the depth means (truth d + cxShift > eps and a valid prediction with
   * d + cxShift > 0), sum of |Zp - Zt| / Zt, sum of (Zp - Zt)^2 (see src/metrics/score.ts).
   */
  depthCount: number;
  depthSumRel: number;
  depthSumSq: number;
  /**
   * Depth failures: truth counted (d + cxShift > eps) and a valid prediction with
   * d + cxShift <= 0 (no finite positive depth). Left out of depthCount and the depth
   * means; see src/metrics/score.ts. Optional for sums written before it existed.
   */
  depthFail?: number;
  /**
   * Depth rates: pixels with a true depth (d + cxShift > eps), and of those the ones with
   * no valid positive predicted depth or a relative depth error above 1 %, 2 %, 5 %.
   * Optional for sums written before they existed.
   */
  depthPixels?: number;
  depthBad1?: number;
  depthBad2?: number;
  depthBad5?: number;
}

/** Figures of one region of one pair. null = empty (region empty or no valid prediction). */
export interface RegionFigures {
  pixels: number;
  coverage: number | null;
  epe: number | null;
  rmse: number | null;
  bias: number | null;
  /** Bad-pixel rates in %, one per threshold, same order as the thresholds. */
  rates: (number | null)[];
  /** Quantiles of |error| in px, one per quantile level, same order as the levels. */
  quantiles: (number | null)[];
  depth_relerr: number | null;
  depth_rmse_m: number | null;
  /** Median relative depth error (fraction) over the pixels of depth_relerr; not pooled. */
  depth_relmed?: number | null;
  /** % of the pixels with a true depth whose depth is missing or off by more than 1 %, 2 %, 5 %. */
  depth_over1pct?: number | null;
  depth_over2pct?: number | null;
  depth_over5pct?: number | null;
  /**
   * Sparsification (src/metrics/sparsify.ts), present when the job has a confidence map:
   * means of the confidence and oracle curves (px), their difference, the clean share (%),
   * and the two 20-point curves.
   */
  conf_auc?: number | null;
  conf_oracle_auc?: number | null;
  conf_gap?: number | null;
  conf_clean_share?: number | null;
  conf_curve?: number[];
  oracle_curve?: number[];
  /**
   * Sub-pixel honesty (src/metrics/subpixel.ts), present when the region has a valid
   * prediction: first-harmonic amplitude of the predicted fractions, their histogram, and
   * the mean |error| per bin of the truth's fractional part.
   */
  subpix_lock?: number | null;
  frac_hist?: number[];
  err_by_truth_frac?: (number | null)[];
  /** Flicker against the previous frame of the pair's sequence (src/metrics/flicker.ts), px; absent without one. */
  flicker?: number | null;
}

export interface RegionScore {
  figures: RegionFigures;
  sums: RegionSums;
  /** By fine distance bin (src/metrics/depth-profile.ts); a region's whole view, with a camera. */
  profile?: DepthProfile;
}

/**
 * Scores by slice key (src/core/regions.ts, sliceKey): `visible` for the whole region,
 * `visible@2-4m` within a depth band, for every region of the job's `regions` and band of
 * its `bands`.
 */
export type PairScore = Record<string, RegionScore>;


/** One line of results.jsonl: one pair scored for one matcher configuration. */
export interface JobResult {
  /** Configuration label, e.g. `sgm` or `sgm:p2=96` or a --label for imported predictions. */
  matcher: string;
  /** Matcher id (plugin id, module path, program name, or `predictions`). */
  matcherId: string;
  /** Camera-fault condition the images were changed by (`noise=4`, src/conditions); absent = clean. */
  condition?: string;
  /** Full parameter set after defaults. */
  params: Record<string, ParamValue>;
  dataset: string;
  pair: string;
  status: 'ok' | 'failed';
  /** One-line reason when failed (with the program's last stderr lines where there are any). */
  error?: string;
  /**
   * Match time (ms): the time the matcher reported itself (MatchOutput.selfTimeMs, a
   * long-lived program's `time_ms`) when it did, else the wall time around match();
   * null when failed before matching.
   */
  time_ms: number | null;
  /** Wall time around match() (ms), including any overhead the self-reported time leaves out; absent when not measured. */
  wall_ms?: number | null;
  /** Peak memory (MB) while matching, null when unknown. */
  peak_mb: number | null;
  /** Served from the result cache. */
  cached?: boolean;
  /** Per slice figures and sums. A failed job is scored as all-invalid. */
  scores: PairScore;
  /** Region names of the scores in order (built-ins, then the dataset's named regions); absent = the built-ins. */
  regions?: string[];
  /** Depth band labels of the scores, nearest first; absent = none. */
  bands?: string[];
  /** Thresholds used for the rates, in order. */
  thresholds: number[];
  /** Quantile levels (%) of figures.quantiles, in order. */
  quantiles: number[];
  /** The manifest's optional group of the pair (e.g. one recorded sequence); intervals resample groups. */
  group?: string;
  /** The pair's frame index within its group (sequences). */
  frame?: number;
  /** The manifest's optional tags of the pair; summaries can be split by tag. */
  tags?: string[];
}
