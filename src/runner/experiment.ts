/**
 * Experiment settings: what a run measures. They come from the command line or from
 * an experiment file (JSON, zod-validated, paths relative to the file):
 *
 *   { "datasets": ["../datasets/demo"],
 *     "matchers": ["block", "sgm:p2=[64,96]", { "id": "census", "params": { "window": [5, 7] } },
 *                  { "program": { ... } }],
 *     "predictions": [{ "dir": "preds", "label": "net-v2", "scale": 100, "invalid": 0 }],
 *     "thresholds": [0.5, 1, 2], "quantiles": [50, 90], "regions": { "flatThreshold": 6 },
 *     "name": "dock-tuning", "out": "../reports/dock-tuning" }
 */
import { parseDepthBands } from '../core/depth-bands.js';
import { parseUsableRule, usableRuleText } from '../stats/usable-range.js';
import { conditionList } from '../conditions/spec.js';
import { readFileSync } from 'node:fs';
import { dirname, resolve } from 'node:path';
import { z } from 'zod';
import { InputError, UsageError } from '../core/errors.js';
import { DEFAULT_REGION_PARAMS, type RegionParams } from '../core/regions.js';
import { formatFieldPath, issueMessage, issueText, type ZodIssueLike } from '../core/text.js';
import { DEFAULT_QUANTILES, DEFAULT_THRESHOLDS } from '../metrics/catalogue.js';


export type { RunSettings } from '../io/run-record.js';
import type { RunSettings } from '../io/run-record.js';

const positive = z.number().refine((v) => Number.isFinite(v) && v > 0, 'must be a finite number > 0');

export const regionParamsSchema = z.strictObject({
  flatWindow: z.number().int().min(1).refine((v) => v % 2 === 1, 'must be odd').optional(),
  flatThreshold: z.number().min(0).optional(),
  jumpGap: positive.optional(),
  jumpRadius: z.number().int().min(0).optional(),
  occlusionTol: z.number().min(0).optional(),
  occlusionTau: z.number().min(0).optional(),
});

export const experimentFileSchema = z.strictObject({
  name: z.string().min(1).optional(),
  description: z.string().optional(),
  datasets: z.array(z.string().min(1)).min(1, 'must list at least one dataset'),
  /** Checked entry by entry by the registry (resolveMatcherEntries). */
  matchers: z.array(z.unknown()).default([]),
  predictions: z
    .array(
      z.strictObject({
        dir: z.string().min(1),
        label: z.string().min(1),
        scale: positive.optional(),
        invalid: z.number().int().min(0).max(65535).optional(),
        depthUnit: z.enum(['m', 'mm']).optional(),
      }),
    )
    .default([]),
  thresholds: z.array(positive).min(1).optional(),
  quantiles: z.array(z.number()).min(1).optional(),
  regions: regionParamsSchema.optional(),
  /** Depth band edges in metres, increasing. */
  depthBands: z.array(positive).min(1).optional(),
  /** The usable range's rule, e.g. depth_over5pct<=10. */
  usableRange: z.string().min(1).optional(),
  /** The folder every dataset's paths are relative to (relative to this file). */
  dataRoot: z.string().min(1).optional(),
  /** Camera-fault conditions, `kind=strength` or `kind=[a,b,c]` (src/conditions/spec.ts). */
  conditions: z.array(z.string().min(1)).optional(),
  /** Seed of the conditions' noise fields. */
  conditionSeed: z.number().int().min(0).max(4294967295).optional(),
  /** Rule of the breaking point, `region/metric:worsening` (src/stats/breaking.ts). */
  breakingPoint: z.string().min(1).optional(),
  out: z.string().min(1).optional(),
});

export type ExperimentFile = z.infer<typeof experimentFileSchema>;

/** Sort ascending and refuse duplicates; `option` names the setting in errors. */
export function normaliseThresholds(values: readonly number[], option: string): number[] {
  if (!values.length) throw new UsageError(option, 'give at least one threshold');
  for (const v of values) {
    if (!Number.isFinite(v) || v <= 0) throw new UsageError(option, `threshold ${String(v)} is not a number > 0`);
  }
  const sorted = [...values].sort((a, b) => a - b);
  for (let i = 1; i < sorted.length; i++) {
    if (sorted[i] === sorted[i - 1]) throw new UsageError(option, `threshold ${sorted[i]} is given twice`);
  }
  return sorted;
}

/** Quantile levels in %: sorted ascending, each in [0, 100], none twice; `option` names the setting in errors. */
export function normaliseQuantiles(values: readonly number[], option: string): number[] {
  if (!values.length) throw new UsageError(option, 'give at least one quantile level');
  for (const v of values) {
    if (!Number.isFinite(v) || v < 0 || v > 100) throw new UsageError(option, `quantile level ${String(v)} is not a number from 0 to 100 (levels are in %)`);
  }
  const sorted = [...values].sort((a, b) => a - b);
  for (let i = 1; i < sorted.length; i++) {
    if (sorted[i] === sorted[i - 1]) throw new UsageError(option, `quantile level ${sorted[i]} is given twice`);
  }
  return sorted;
}

function numberList(text: string, option: string, example: string): number[] {
  const parts = text.split(',').map((s) => s.trim());
  const vals = parts.map((s) => (s === '' ? NaN : Number(s)));
  const bad = parts.find((s, i) => !Number.isFinite(vals[i]));
  if (bad !== undefined) throw new UsageError(option, `"${bad}" is not a number (expected a comma list such as ${example})`);
  return vals;
}

/** Parse `0.5,1,2` (the --thresholds option). */
export function parseThresholds(text: string): number[] {
  return normaliseThresholds(numberList(text, '--thresholds', '0.5,1,2'), '--thresholds');
}

/** Parse `50,68,95` (the --quantiles option, levels in %). */
export function parseQuantiles(text: string): number[] {
  return normaliseQuantiles(numberList(text, '--quantiles', '50,68,95'), '--quantiles');
}

/** Region parameters with defaults; checks the partial set given. */
export function regionParams(partial: Partial<RegionParams> | undefined, option = 'regions'): RegionParams {
  const r = regionParamsSchema.safeParse(partial ?? {});
  if (!r.success) {
    const i = r.error.issues[0];
    throw new UsageError(`${option}.${formatFieldPath(i.path)}`, issueMessage(i as ZodIssueLike));
  }
  const out: RegionParams = { ...DEFAULT_REGION_PARAMS };
  for (const [k, v] of Object.entries(r.data)) if (v !== undefined) (out as unknown as Record<string, number>)[k] = v;
  return out;
}

/** Read and validate an experiment file; errors name the file and the field. */
export function loadExperimentFile(path: string): RunSettings {
  const abs = resolve(path);
  let text: string;
  try {
    text = readFileSync(abs, 'utf8');
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    throw new InputError(path, code === 'ENOENT' ? 'no such experiment file' : `cannot read (${code ?? 'error'})`);
  }
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch (e) {
    throw new InputError(path, `not valid JSON (${(e as Error).message.split('\n')[0]})`);
  }
  const r = experimentFileSchema.safeParse(json);
  if (!r.success) {
    const i = r.error.issues[0];
    throw new InputError(path, issueText(i as ZodIssueLike));
  }
  const f = r.data;
  const base = dirname(abs);
  let thresholds: number[];
  let quantiles: number[];
  try {
    thresholds = normaliseThresholds(f.thresholds ?? DEFAULT_THRESHOLDS, 'thresholds');
    quantiles = normaliseQuantiles(f.quantiles ?? DEFAULT_QUANTILES, 'quantiles');
  } catch (e) {
    throw new InputError(path, `field ${(e as Error).message}`);
  }
  let regions: RegionParams;
  let depthBands: number[] | undefined;
  let usableRange: string | undefined;
  try {
    regions = regionParams(f.regions);
    if (f.depthBands) depthBands = parseDepthBands(f.depthBands.join(','), 'depthBands');
    if (f.usableRange !== undefined) usableRange = usableRuleText(parseUsableRule(f.usableRange, 'usableRange'));
    if (f.conditions) conditionList(f.conditions, 'conditions');
  } catch (e) {
    throw new InputError(path, `field ${(e as Error).message}`);
  }
  return {
    datasets: f.datasets.map((d) => resolve(base, d)),
    matchers: [],
    matcherEntries: f.matchers,
    experimentFile: abs,
    predictions: f.predictions.map((p) => ({
      label: p.label,
      dir: resolve(base, p.dir),
      ...(p.scale !== undefined ? { scale: p.scale } : {}),
      ...(p.invalid !== undefined ? { invalid: p.invalid } : {}),
      ...(p.depthUnit !== undefined ? { depthUnit: p.depthUnit } : {}),
    })),
    thresholds,
    quantiles,
    regions,
    ...(depthBands ? { depthBands } : {}),
    ...(usableRange !== undefined ? { usableRange } : {}),
    ...(f.dataRoot !== undefined ? { dataRoot: resolve(base, f.dataRoot) } : {}),
    ...(f.conditions?.length ? { conditions: f.conditions } : {}),
    ...(f.conditionSeed !== undefined ? { conditionSeed: f.conditionSeed } : {}),
    ...(f.breakingPoint !== undefined ? { breakingPoint: f.breakingPoint } : {}),
    ...(f.out !== undefined ? { out: resolve(base, f.out) } : {}),
    ...(f.name !== undefined ? { name: f.name } : {}),
    baseDir: base,
  };
}

/** A run name safe as a folder name. */
export function safeRunName(text: string): string {
  const s = text.replace(/[^A-Za-z0-9._+=-]+/g, '_').replace(/^[._]+/, '');
  return (s || 'run').slice(0, 80);
}
