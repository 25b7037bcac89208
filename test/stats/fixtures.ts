/** Hand-built JobResults for the stats tests (no runner needed). */
import type { JobResult, RegionScore } from '../../src/core/score.js';
import { REGION_IDS, type RegionId } from '../../src/core/regions.js';
import { DEFAULT_QUANTILES } from '../../src/metrics/catalogue.js';

/** Abs-error quantile, linear interpolation (numpy's default), written out for the fixtures. */
function q(sorted: number[], p: number): number | null {
  if (sorted.length === 0) return null;
  const pos = p * (sorted.length - 1);
  const lo = Math.floor(pos);
  const f = pos - lo;
  return f === 0 ? sorted[lo] : sorted[lo] + f * (sorted[lo + 1] - sorted[lo]);
}

/**
 * Score a region from a list of signed errors (NaN = invalid prediction) by the
 * definitions of the README's metric table, so the fixtures are self-consistent.
 */
export function regionFromErrors(errors: number[], thresholds: number[]): RegionScore {
  const pixels = errors.length;
  const valid = errors.filter((e) => Number.isFinite(e));
  const abs = valid.map(Math.abs).sort((a, b) => a - b);
  const sumAbs = abs.reduce((s, v) => s + v, 0);
  const sumSq = valid.reduce((s, v) => s + v * v, 0);
  const sumErr = valid.reduce((s, v) => s + v, 0);
  const bad = thresholds.map((t) => errors.filter((e) => !Number.isFinite(e) || Math.abs(e) > t).length);
  const n = valid.length;
  return {
    sums: { pixels, valid: n, sumAbs, sumSq, sumErr, bad, depthCount: 0, depthSumRel: 0, depthSumSq: 0 },
    figures: {
      pixels,
      coverage: pixels ? (100 * n) / pixels : null,
      epe: n ? sumAbs / n : null,
      rmse: n ? Math.sqrt(sumSq / n) : null,
      bias: n ? sumErr / n : null,
      rates: bad.map((b) => (pixels ? (100 * b) / pixels : null)),
      quantiles: DEFAULT_QUANTILES.map((p) => q(abs, p / 100)),
      depth_relerr: null,
      depth_rmse_m: null,
    },
  };
}

export interface JobSpec {
  matcher?: string;
  dataset?: string;
  pair: string;
  failed?: boolean;
  time_ms?: number | null;
  group?: string;
  tags?: string[];
  /** Signed errors per region; regions not given get `all`. */
  errors: Partial<Record<RegionId, number[]>> & { all: number[] };
}

export function makeJob(spec: JobSpec, thresholds: number[]): JobResult {
  const scores = {} as Record<RegionId, RegionScore>;
  for (const r of REGION_IDS) scores[r] = regionFromErrors(spec.errors[r] ?? spec.errors.all, thresholds);
  const job: JobResult = {
    matcher: spec.matcher ?? 'block',
    matcherId: (spec.matcher ?? 'block').split(':')[0],
    params: {},
    dataset: spec.dataset ?? 'dock',
    pair: spec.pair,
    status: spec.failed ? 'failed' : 'ok',
    time_ms: spec.time_ms === undefined ? 10 : spec.time_ms,
    peak_mb: null,
    scores,
    thresholds,
    quantiles: [...DEFAULT_QUANTILES],
  };
  if (spec.failed) job.error = 'matcher exited with code 3';
  if (spec.group !== undefined) job.group = spec.group;
  if (spec.tags) job.tags = spec.tags;
  return job;
}
