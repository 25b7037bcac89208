/**
 * The provenance a run records in run.json (src/io/run-record.ts): tool version, git
 * commit (when the tool runs from a git checkout), configuration, dataset hashes, Node
 * version, CPU, OS, times.
 */
import { dirname } from 'node:path';
import { execFileSync } from 'node:child_process';
import { cpus, platform, release, arch, totalmem } from 'node:os';
import type { RunPlan } from './plan.js';
import { toolRoot, toolVersion } from '../io/package.js';
export { toolRoot, toolVersion } from '../io/package.js';
import { RUN_RECORD_FORMAT, type RunRecord } from '../io/run-record.js';

/** The tool's git commit and whether its tree has changes; null outside a git checkout. */
export function gitInfo(): { commit: string; dirty: boolean } | null {
  const root = toolRoot();
  if (!root) return null;
  try {
    const opts = { cwd: root, stdio: ['ignore', 'pipe', 'ignore'] as ['ignore', 'pipe', 'ignore'], encoding: 'utf8' as const, timeout: 5000 };
    const commit = execFileSync('git', ['rev-parse', 'HEAD'], opts).trim();
    const status = execFileSync('git', ['status', '--porcelain', '--untracked-files=no'], opts).trim();
    return { commit, dirty: status.length > 0 };
  } catch {
    return null;
  }
}

/** The provenance record of a plan (status `running`, no end time yet). */
export function runRecord(plan: RunPlan, started: Date): RunRecord {
  const c = cpus();
  return {
    format: RUN_RECORD_FORMAT,
    tool: { name: 'parallax', version: toolVersion(), git: gitInfo() },
    name: plan.name,
    status: 'running',
    started: started.toISOString(),
    ended: null,
    config: {
      thresholds: [...plan.thresholds],
      quantiles: [...plan.quantiles],
      regions: { ...plan.regions },
      matchers: plan.configs.map((cfg) =>
        cfg.kind === 'matcher'
          ? {
              label: cfg.label,
              matcherId: cfg.matcherId,
              kind: 'matcher' as const,
              version: cfg.version,
              params: cfg.params,
              codeHash: cfg.codeHash,
              ...(cfg.source?.kind === 'program' ? { command: [...cfg.source.def.command] } : {}),
              ...(cfg.timeoutMs !== undefined ? { timeoutMs: cfg.timeoutMs } : {}),
            }
          : {
              label: cfg.label,
              matcherId: cfg.matcherId,
              kind: 'predictions' as const,
              params: cfg.params,
              predictions: {
                dir: cfg.source.dir,
                ...(cfg.source.scale !== undefined ? { scale: cfg.source.scale } : {}),
                ...(cfg.source.invalid !== undefined ? { invalid: cfg.source.invalid } : {}),
                ...(cfg.source.depthUnit !== undefined ? { depthUnit: cfg.source.depthUnit } : {}),
              },
            },
      ),
      datasets: plan.datasets.map((d) => ({ name: d.manifest.name, path: d.path, manifest: d.manifest.file, hash: d.hash, pairs: d.manifest.pairs.length, ...(d.manifest.dir !== dirname(d.manifest.file) ? { dataRoot: d.manifest.dir } : {}) })),
      ...(plan.depthBands.length ? { depthBands: [...plan.depthBands] } : {}),
      ...(plan.usableRange !== undefined ? { usableRange: plan.usableRange } : {}),
      ...(plan.conditions.length > 1 ? { conditions: [...plan.conditions], conditionSeed: plan.conditionSeed } : {}),
      ...(plan.breakingPoint !== undefined ? { breakingPoint: plan.breakingPoint } : {}),
    },
    jobs: { total: plan.jobs.length, ok: 0, failed: 0 },
    environment: {
      node: process.version,
      cpu: { model: c[0]?.model.trim() ?? 'unknown', count: c.length },
      os: { platform: platform(), release: release(), arch: arch() },
      memoryMb: Math.round(totalmem() / 2 ** 20),
    },
    notes: {
      peak_mb: 'peak resident set size (RSS) of the whole parallax process while the job ran, in MiB; includes the loaded pair and the runtime',
      time_ms:
        'match time in ms: the time a matcher reports itself when it does (a long-lived program\'s time_ms reply, a module\'s selfTimeMs), otherwise the wall time around the matcher call (a program matcher then includes its process start); a cached job keeps the time of the run that computed it',
      wall_ms: 'wall time around the matcher call in ms, in the harness process (main thread or worker); written beside time_ms when the job ran in the main thread',
    },
  };
}
