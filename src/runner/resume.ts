/**
 * What --resume and merge read back from a run folder (src/io/run-record.ts): run.json's configuration
 * (compared through a fingerprint of everything that changes a score) and the
 * settings a scaled run stores there (`rerun`, see run.ts).
 */
import { join } from 'node:path';
import { InputError } from '../core/errors.js';
import { readRunRecord, RUN_RECORD_FILE, type RunConfigRecord, type RunRecord, type RunSettings } from '../io/run-record.js';
import { parseShard, type Shard } from './shard.js';
import { byCodeUnits } from '../core/order.js';

/** The settings and shard of a run to resume (a run started by `parallax run`). */
export function resumeSettings(runDir: string): { settings: RunSettings; shard: Shard | undefined; info: RunRecord } {
  const info = readRunRecord(runDir);
  const rerun = info.rerun;
  if (!rerun) {
    throw new InputError(join(runDir, RUN_RECORD_FILE), 'holds no run settings to resume from (only runs started by `parallax run` can be resumed)');
  }
  const shard = rerun.shard ? parseShard(rerun.shard, `${join(runDir, RUN_RECORD_FILE)}: shard`) : undefined;
  return { settings: { ...rerun.settings, out: runDir }, shard, info };
}

/**
 * Everything in a run's configuration that changes its tables: thresholds, region
 * parameters, depth bands, each configuration (label, id, kind, parameters, code hash, prediction
 * source) and each dataset (name, content hash, pair count). Paths and times are left out.
 */
export function configFingerprint(config: RunConfigRecord): string {
  return JSON.stringify({
    thresholds: config.thresholds,
    quantiles: config.quantiles,
    regions: Object.fromEntries(Object.entries(config.regions).sort(([a], [b]) => byCodeUnits(a, b))),
    depthBands: config.depthBands ?? [],
    usableRange: config.usableRange ?? null,
    conditions: config.conditions ?? ['clean'],
    breakingPoint: config.breakingPoint ?? null,
    conditionSeed: config.conditions && config.conditions.length > 1 ? (config.conditionSeed ?? 1) : null,
    matchers: [...config.matchers]
      .map((m) => ({ label: m.label, matcherId: m.matcherId, kind: m.kind, params: m.params, codeHash: m.codeHash ?? null, predictions: m.predictions ?? null }))
      .sort((a, b) => byCodeUnits(a.label, b.label)),
    datasets: [...config.datasets].map((d) => ({ name: d.name, hash: d.hash, pairs: d.pairs })).sort((a, b) => byCodeUnits(a.name, b.name)),
  });
}

/** The first difference between two configurations, as a phrase, or undefined when they agree. */
export function configDifference(a: RunConfigRecord, b: RunConfigRecord): string | undefined {
  if (configFingerprint(a) === configFingerprint(b)) return undefined;
  if (JSON.stringify(a.thresholds) !== JSON.stringify(b.thresholds)) return `thresholds differ (${a.thresholds.join(',')} vs ${b.thresholds.join(',')})`;
  if (JSON.stringify(a.quantiles) !== JSON.stringify(b.quantiles)) return `quantile levels differ (${a.quantiles.join(',')} vs ${b.quantiles.join(',')})`;
  const fa = JSON.parse(configFingerprint(a)) as { regions: unknown; matchers: { label: string }[]; datasets: { name: string }[] };
  const fb = JSON.parse(configFingerprint(b)) as typeof fa;
  if (JSON.stringify(fa.regions) !== JSON.stringify(fb.regions)) return 'region parameters differ';
  if ((a.usableRange ?? null) !== (b.usableRange ?? null)) return `usable-range rules differ (${a.usableRange ?? 'default'} vs ${b.usableRange ?? 'default'})`;
  if (JSON.stringify(a.depthBands ?? []) !== JSON.stringify(b.depthBands ?? [])) return `depth bands differ (${(a.depthBands ?? []).join(',') || 'none'} vs ${(b.depthBands ?? []).join(',') || 'none'})`;
  if (JSON.stringify(a.conditions ?? ['clean']) !== JSON.stringify(b.conditions ?? ['clean'])) return `conditions differ (${(a.conditions ?? ['clean']).join(',')} vs ${(b.conditions ?? ['clean']).join(',')})`;
  if ((a.conditionSeed ?? 1) !== (b.conditionSeed ?? 1)) return `condition seeds differ (${a.conditionSeed ?? 1} vs ${b.conditionSeed ?? 1})`;
  const ds = (x: typeof fa): string => JSON.stringify(x.datasets);
  if (ds(fa) !== ds(fb)) {
    const names = new Set([...fa.datasets, ...fb.datasets].map((d) => d.name));
    for (const n of names) {
      const da = JSON.stringify(fa.datasets.find((d) => d.name === n));
      const db = JSON.stringify(fb.datasets.find((d) => d.name === n));
      if (da !== db) return `dataset "${n}" differs (files changed, added or removed)`;
    }
  }
  const labels = new Set([...fa.matchers, ...fb.matchers].map((m) => m.label));
  for (const l of [...labels].sort()) {
    const ma = JSON.stringify(fa.matchers.find((m) => m.label === l));
    const mb = JSON.stringify(fb.matchers.find((m) => m.label === l));
    if (ma !== mb) return ma === undefined || mb === undefined ? `configuration "${l}" is only in one of them` : `configuration "${l}" differs (parameters or code)`;
  }
  return 'configurations differ';
}
