/** A run plan over a test dataset with the given matcher plugins (tests call the plugins directly). */
import { DEFAULT_REGION_PARAMS } from '../../src/core/regions.js';
import { datasetHash } from '../../src/dataset/hash.js';
import { loadManifest } from '../../src/dataset/manifest.js';
import { DEFAULT_THRESHOLDS } from '../../src/metrics/types.js';
import type { MatcherPlugin } from '../../src/core/matcher.js';
import { enumerateJobs } from '../../src/runner/jobs.js';
import { planRun, type RunPlan } from '../../src/runner/plan.js';
import type { WrittenDataset } from '../dataset/fixture.js';
import { DEFAULT_QUANTILES } from '../../src/metrics/catalogue.js';

export async function planWith(ds: WrittenDataset, plugins: MatcherPlugin[], runDir: string, baseDir: string): Promise<RunPlan> {
  const m = loadManifest(ds.dir);
  const plan = await planRun(
    { datasets: [ds.dir], matchers: ['block'], matcherEntries: [], predictions: [], thresholds: [...DEFAULT_THRESHOLDS], quantiles: [...DEFAULT_QUANTILES], regions: { ...DEFAULT_REGION_PARAMS }, out: runDir, baseDir },
    baseDir,
  );
  const configs = plugins.map((p) => ({ kind: 'matcher' as const, label: p.id, matcherId: p.id, params: {}, codeHash: 'test', version: '1', plugin: p }));
  const jobs = enumerateJobs([{ name: m.name, pairIds: m.pairs.map((p) => p.id) }], configs.map((c) => c.label));
  return { ...plan, datasets: [{ path: ds.dir, manifest: m, hash: await datasetHash(m) }], configs, jobs };
}
