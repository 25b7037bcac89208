/**
 * What --resume and merge read back from a run folder: run.json's configuration
 * (compared through a fingerprint of everything that changes a score) and the
 * settings a scaled run stores there (`rerun`, see run.ts).
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { InputError } from '../core/errors.js';
import type { RunSettings } from './experiment.js';
import { RUN_INFO_FILE, type RunInfo } from './provenance.js';
import type { ScaledRunInfo } from './run.js';
import { parseShard, type Shard } from './shard.js';

export type StoredRunInfo = RunInfo & ScaledRunInfo;

/** Read a run folder's run.json; InputError naming the file when missing or malformed. */
export function readRunInfo(runDir: string): StoredRunInfo {
  const file = join(runDir, RUN_INFO_FILE);
  let text: string;
  try {
    text = readFileSync(file, 'utf8');
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    throw new InputError(file, code === 'ENOENT' ? 'no run.json here; is this a parallax run folder?' : `cannot read (${code ?? 'error'})`);
  }
  let info: unknown;
  try {
    info = JSON.parse(text);
  } catch {
    throw new InputError(file, 'not valid JSON');
  }
  const c = (info as { config?: { thresholds?: unknown; matchers?: unknown; datasets?: unknown } } | null)?.config;
  if (!c || !Array.isArray(c.thresholds) || !Array.isArray(c.matchers) || !Array.isArray(c.datasets)) {
    throw new InputError(file, 'not a parallax run.json (no config with thresholds, matchers and datasets)');
  }
  return info as StoredRunInfo;
}

/** The settings and shard of a run to resume (a run started by `parallax run`). */
export function resumeSettings(runDir: string): { settings: RunSettings; shard: Shard | undefined; info: StoredRunInfo } {
  const info = readRunInfo(runDir);
  const rerun = info.rerun;
  if (!rerun || typeof rerun !== 'object' || !rerun.settings || !Array.isArray(rerun.settings.datasets)) {
    throw new InputError(join(runDir, RUN_INFO_FILE), 'holds no run settings to resume from (only runs started by `parallax run` can be resumed)');
  }
  const shard = rerun.shard ? parseShard(rerun.shard, `${join(runDir, RUN_INFO_FILE)}: shard`) : undefined;
  return { settings: { ...rerun.settings, out: runDir }, shard, info };
}

/**
 * Everything in a run's configuration that changes its tables: thresholds, region
 * parameters, each configuration (label, id, kind, parameters, code hash, prediction
 * source) and each dataset (name, content hash, pair count). Paths and times are left out.
 */
export function configFingerprint(config: RunInfo['config']): string {
  return JSON.stringify({
    thresholds: config.thresholds,
    regions: Object.fromEntries(Object.entries(config.regions).sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0))),
    matchers: [...config.matchers]
      .map((m) => ({ label: m.label, matcherId: m.matcherId, kind: m.kind, params: m.params, codeHash: m.codeHash ?? null, predictions: m.predictions ?? null }))
      .sort((a, b) => (a.label < b.label ? -1 : a.label > b.label ? 1 : 0)),
    datasets: [...config.datasets].map((d) => ({ name: d.name, hash: d.hash, pairs: d.pairs })).sort((a, b) => (a.name < b.name ? -1 : a.name > b.name ? 1 : 0)),
  });
}

/** The first difference between two configurations, as a phrase, or undefined when they agree. */
export function configDifference(a: RunInfo['config'], b: RunInfo['config']): string | undefined {
  if (configFingerprint(a) === configFingerprint(b)) return undefined;
  if (JSON.stringify(a.thresholds) !== JSON.stringify(b.thresholds)) return `thresholds differ (${a.thresholds.join(',')} vs ${b.thresholds.join(',')})`;
  const fa = JSON.parse(configFingerprint(a)) as { regions: unknown; matchers: { label: string }[]; datasets: { name: string }[] };
  const fb = JSON.parse(configFingerprint(b)) as typeof fa;
  if (JSON.stringify(fa.regions) !== JSON.stringify(fb.regions)) return 'region parameters differ';
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
