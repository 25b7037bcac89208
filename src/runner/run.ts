/**
 * Execution of a planned run: for each dataset and pair in sorted order, load the pair
 * once, build its regions once, then run every configuration on it; each result is
 * appended to results.jsonl as soon as it is scored. run.json is written at the start
 * and rewritten at the end; the tables are written from the journal at the end.
 */
import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { AbortedError, InputError } from '../core/errors.js';
import type { LoadedPair, PairEntry } from '../core/pair.js';
import type { RegionMap } from '../core/regions.js';
import type { JobResult } from '../core/score.js';
import { loadPair } from '../dataset/load.js';
import { buildRegions } from '../dataset/regions.js';
import type { Manifest } from '../dataset/manifest.js';
import { writeFileAtomic } from '../io/files.js';
import { runJob } from './execute.js';
import { groupByPair } from './jobs.js';
import { appendResult, JOURNAL_FILE, readJournal, startJournal } from './journal.js';
import { writePreview } from '../report/preview.js';
import { writeRunOutputs, type WrittenOutputs } from './outputs.js';
import type { RunConfig, RunPlan } from './plan.js';
import { RUN_INFO_FILE, runInfo, type RunInfo } from './provenance.js';

export interface RunHooks {
  signal?: AbortSignal;
  /** Called once before the first job. */
  onStart?(total: number): void;
  /** Called after each job's result is in the journal. */
  onJob?(result: JobResult, done: number, total: number): void;
}

export interface RunOutcome {
  runDir: string;
  results: JobResult[];
  outputs: WrittenOutputs;
  info: RunInfo;
  aborted: boolean;
}

/** Regions of a loaded pair: the manifest's occlusion mask, or one derived from the truth. */
export function pairRegions(pair: LoadedPair, plan: Pick<RunPlan, 'regions'>): RegionMap {
  // buildRegions derives the occlusion from the truth when the mask is undefined.
  return buildRegions(pair.truth.data, pair.leftGray, pair.occlusion, pair.width, pair.height, plan.regions);
}

async function writeInfo(runDir: string, info: RunInfo): Promise<void> {
  await writeFileAtomic(join(runDir, RUN_INFO_FILE), JSON.stringify(info, null, 2) + '\n');
}

/** Run every job of the plan. Dataset input errors (a broken pair) end the run with an InputError. */
export async function executeRun(plan: RunPlan, hooks: RunHooks = {}): Promise<RunOutcome> {
  const signal = hooks.signal ?? new AbortController().signal;
  mkdirSync(plan.runDir, { recursive: true });
  const journal = join(plan.runDir, JOURNAL_FILE);
  const info = runInfo(plan, new Date());
  await writeInfo(plan.runDir, info);
  startJournal(journal);

  const manifests = new Map<string, Manifest>(plan.datasets.map((d) => [d.manifest.name, d.manifest]));
  const configs = new Map<string, RunConfig>(plan.configs.map((c) => [c.label, c]));
  const total = plan.jobs.length;
  hooks.onStart?.(total);
  let done = 0;
  let aborted = false;
  try {
    for (const group of groupByPair(plan.jobs)) {
      if (signal.aborted) throw new AbortedError();
      const first = group[0]!;
      const manifest = manifests.get(first.dataset)!;
      const entry: PairEntry | undefined = manifest.pairs.find((p) => p.id === first.pair);
      if (!entry) throw new InputError(manifest.file, `pair ${first.pair} is not in the manifest`);
      const pair = await loadPair(manifest, entry);
      const regions = pairRegions(pair, plan);
      for (const key of group) {
        const cfg = configs.get(key.label)!;
        const { result, disparity } = await runJob(cfg, pair, regions, plan.thresholds, signal);
        appendResult(journal, result);
        if (result.status === 'ok') info.jobs.ok++;
        else info.jobs.failed++;
        done++;
        if (disparity) {
          await writePreview(plan.runDir, cfg.label, pair.dataset, pair.id, { width: pair.width, height: pair.height, data: disparity });
        }
        hooks.onJob?.(result, done, total);
      }
    }
  } catch (e) {
    if (!(e instanceof AbortedError)) {
      info.status = 'aborted';
      info.ended = new Date().toISOString();
      await writeInfo(plan.runDir, info);
      throw e;
    }
    aborted = true;
  } finally {
    for (const c of plan.configs) {
      if (c.kind === 'matcher' && c.plugin.dispose) {
        try {
          await c.plugin.dispose();
        } catch {
          /* a failing dispose must not hide the run's outcome */
        }
      }
    }
  }
  info.status = aborted ? 'aborted' : 'complete';
  info.ended = new Date().toISOString();
  await writeInfo(plan.runDir, info);
  // Tables and report from the journal alone (and run.json, for the report).
  const results = readJournal(journal);
  const outputs = await writeRunOutputs(plan.runDir, results, plan.thresholds);
  return { runDir: plan.runDir, results, outputs, info, aborted };
}

