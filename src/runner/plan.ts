/**
 * From settings to a run plan: datasets loaded and hashed, matcher configurations
 * resolved, labels checked, the run folder chosen. No matching happens here.
 */
import { resolve } from 'node:path';
import { conditionList } from '../conditions/spec.js';
import { DEFAULT_CONDITION_SEED } from '../conditions/apply.js';
import { parseBreakingRule } from '../stats/breaking.js';
import { InputError, UsageError } from '../core/errors.js';
import type { ParamValue } from '../core/params.js';
import type { RegionParams } from '../core/regions.js';
import { datasetHash } from '../dataset/hash.js';
import { loadManifest, sortedPairs, type Manifest } from '../dataset/manifest.js';
import { defaultDepthBandsOf } from '../dataset/depth-range.js';
import type { MatcherPlugin } from '../core/matcher.js';
import { checkConfigName } from '../plugins/params.js';
import { resolveMatcherEntries, resolveMatchers, type MatcherConfig, type MatcherSource } from '../plugins/registry.js';
import type { ScaleOptions } from './scale.js';
import { safeRunName, type RunSettings } from './experiment.js';
import { enumerateJobs, type JobKey } from './jobs.js';
import { checkPredictionSource, predictionCoverage, type PredictionSource } from './predictions.js';

/** A matcher configuration of the run. */
export interface MatcherRunConfig {
  readonly kind: 'matcher';
  readonly label: string;
  readonly matcherId: string;
  readonly params: Record<string, ParamValue>;
  readonly codeHash: string;
  readonly version: string;
  readonly plugin: MatcherPlugin;
  /** How to rebuild the plugin in a worker thread (registry's pluginFromSource). */
  readonly source?: MatcherSource;
  /** Per-job time limit (module plugins): past it the worker is ended and the job fails. */
  readonly timeoutMs?: number;
}

/** Imported predictions, scored like a matcher (matcherId `predictions`). */
export interface PredictionRunConfig {
  readonly kind: 'predictions';
  readonly label: string;
  readonly matcherId: 'predictions';
  readonly params: Record<string, ParamValue>;
  readonly source: PredictionSource;
}

export type RunConfig = MatcherRunConfig | PredictionRunConfig;

export interface PlannedDataset {
  /** As given (for provenance). */
  readonly path: string;
  readonly manifest: Manifest;
  readonly hash: string;
}

export interface RunPlan {
  readonly name: string;
  /** Absolute run folder. */
  readonly runDir: string;
  readonly datasets: readonly PlannedDataset[];
  readonly configs: readonly RunConfig[];
  readonly thresholds: readonly number[];
  /** Quantile levels in %. */
  readonly quantiles: readonly number[];
  readonly regions: RegionParams;
  /** Depth band edges in metres (the settings' or the default from the data's depth range); empty = no bands. */
  readonly depthBands: readonly number[];
  /** The usable range's rule as given (`--usable-range`); absent = the default. */
  readonly usableRange?: string;
  /** Conditions of the run, `clean` first (src/conditions/spec.ts conditionList). */
  readonly conditions: readonly string[];
  /** Seed of the conditions' noise fields. */
  readonly conditionSeed: number;
  /** The breaking point's rule as given (`--breaking-point`); absent = the default. */
  readonly breakingPoint?: string;
  /** Every job, sorted (see jobs.ts). */
  readonly jobs: readonly JobKey[];
  /** The settings the plan was made from (kept in run.json for --resume). */
  readonly settings?: RunSettings;
  /** Worker pool, resume, cache and shard options (see scale.ts); absent = sequential, no cache. */
  readonly scale?: ScaleOptions;
  /** Problems worth a line on stderr that do not stop the run (e.g. prediction files of no pair). */
  readonly warnings?: readonly string[];
}

/** Resolve every matcher spec of the settings to configurations. */
export async function resolveConfigs(settings: RunSettings): Promise<RunConfig[]> {
  const configs: RunConfig[] = [];
  const add = (c: MatcherConfig): void => {
    configs.push({
      kind: 'matcher',
      label: c.label,
      matcherId: c.plugin.id,
      params: c.params,
      codeHash: c.codeHash,
      version: c.plugin.version,
      plugin: c.plugin,
      source: c.source,
      ...(c.timeoutMs !== undefined ? { timeoutMs: c.timeoutMs } : {}),
    });
  };
  if (settings.matcherEntries.length) {
    let resolved: MatcherConfig[];
    try {
      resolved = await resolveMatcherEntries(settings.matcherEntries, { baseDir: settings.baseDir, option: 'matchers' });
    } catch (e) {
      // Name the experiment file: `<file>: field matchers[2]...: problem`.
      if (e instanceof UsageError && settings.experimentFile) throw new InputError(settings.experimentFile, `field ${e.message}`);
      throw e;
    }
    resolved.forEach(add);
  }
  if (settings.matchers.length) {
    const moduleTimeoutMs = settings.moduleTimeoutMs;
    (await resolveMatchers(settings.matchers, { cwd: process.cwd(), ...(moduleTimeoutMs !== undefined ? { moduleTimeoutMs } : {}) })).forEach(add);
  }
  for (const p of settings.predictions) {
    checkConfigName(p.label, settings.experimentFile !== undefined ? 'predictions.label' : '--label');
    checkPredictionSource(p);
    configs.push({ kind: 'predictions', label: p.label, matcherId: 'predictions', params: {}, source: p });
  }
  const seen = new Set<string>();
  for (const c of configs) {
    if (seen.has(c.label)) throw new UsageError('--matcher', `configuration "${c.label}" is given twice; each label must be unique`);
    seen.add(c.label);
  }
  return configs;
}

/** Load datasets, resolve configurations and enumerate jobs. */
export async function planRun(settings: RunSettings, cwd = process.cwd()): Promise<RunPlan> {
  if (!settings.datasets.length) throw new UsageError('--dataset', 'give at least one dataset folder or manifest');
  if (!settings.matchers.length && !settings.matcherEntries.length && !settings.predictions.length) {
    throw new UsageError('--matcher', 'give at least one matcher (or --predictions with --label)');
  }
  const datasets: PlannedDataset[] = [];
  const names = new Map<string, string>();
  for (const path of settings.datasets) {
    const manifest = loadManifest(path, settings.dataRoot !== undefined ? { dataRoot: settings.dataRoot } : {});
    const other = names.get(manifest.name);
    if (other !== undefined) throw new UsageError('--dataset', `${path} and ${other} are both named "${manifest.name}"; dataset names must differ`);
    names.set(manifest.name, path);
    datasets.push({ path, manifest, hash: await datasetHash(manifest, { markUnreadable: true }) });
  }
  const configs = await resolveConfigs(settings);
  const pairLists = datasets.map((d) => ({ name: d.manifest.name, pairIds: sortedPairs(d.manifest).map((p) => p.id) }));
  const warnings: string[] = [];
  for (const c of configs) {
    if (c.kind !== 'predictions') continue;
    const { unmatched } = predictionCoverage(c.source, pairLists);
    if (unmatched.length) {
      warnings.push(`--predictions: ${unmatched.length} file(s) in ${c.source.dir} match no pair of the run, e.g. ${unmatched.slice(0, 3).join(', ')}`);
    }
  }
  const name = safeRunName(settings.name ?? [datasets[0].manifest.name, ...configs.map((c) => c.label)].join('-'));
  const runDir = settings.out ?? resolve(cwd, 'reports', name);
  const conditions = conditionList(settings.conditions ?? [], settings.experimentFile !== undefined ? 'conditions' : '--condition');
  const jobs = enumerateJobs(pairLists, configs.map((c) => c.label), conditions);
  if (settings.breakingPoint !== undefined) parseBreakingRule(settings.breakingPoint, settings, settings.experimentFile !== undefined ? 'breakingPoint' : '--breaking-point');
  const depthBands = settings.depthBands ?? (await defaultDepthBandsOf(datasets.map((d) => d.manifest)));
  return { name, runDir, datasets, configs, thresholds: settings.thresholds, quantiles: settings.quantiles, regions: settings.regions, depthBands, ...(settings.usableRange !== undefined ? { usableRange: settings.usableRange } : {}), conditions, conditionSeed: settings.conditionSeed ?? DEFAULT_CONDITION_SEED, ...(settings.breakingPoint !== undefined ? { breakingPoint: settings.breakingPoint } : {}), jobs, settings, warnings };
}

