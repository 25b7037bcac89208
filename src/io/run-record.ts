/**
 * run.json, the run record: provenance (tool version, git commit, configuration,
 * dataset hashes, matcher versions and parameters, environment, times) and what
 * --resume and merge need. One zod schema; the runner, resume, merge, the report and
 * compare read and write it through this module only.
 *
 * `format` is the record's version. A record of another format is a one-line error
 * naming the file: format 1 (no `format` field) was written before the quantile levels
 * became configurable, and its results.jsonl lacks them.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { z } from 'zod';
import { InputError } from '../core/errors.js';
import { issueText } from '../core/text.js';
import { writeFileAtomic } from './files.js';

export const RUN_RECORD_FILE = 'run.json';
export const RUN_RECORD_FORMAT = 2;

const regionParamsRecord = z.object({
  flatWindow: z.number(),
  flatThreshold: z.number(),
  jumpGap: z.number(),
  jumpRadius: z.number(),
  occlusionTol: z.number(),
  occlusionTau: z.number(),
});

export const predictionSourceSchema = z.object({
  /** Configuration name of these predictions. */
  label: z.string(),
  /** Absolute folder. */
  dir: z.string(),
  /** PNG stored value = round(d * scale). */
  scale: z.number().optional(),
  /** PNG code for "no answer" (default 0). */
  invalid: z.number().optional(),
  /** The files hold depth in this unit (converted with the pair's camera), not disparity. */
  depthUnit: z.enum(['m', 'mm']).optional(),
});

/** What a run measures (command line or experiment file), as stored for --resume. */
export const runSettingsSchema = z.object({
  /** Dataset folders or manifest files, absolute. */
  datasets: z.array(z.string()),
  /** Command-line matcher specs: `id[:key=value,...]`, sweeps, module paths. */
  matchers: z.array(z.string()),
  /** An experiment file's `matchers` entries (checked by the registry), relative to baseDir. */
  matcherEntries: z.array(z.unknown()),
  /** The experiment file, named in errors about its entries. */
  experimentFile: z.string().optional(),
  predictions: z.array(predictionSourceSchema),
  /** Bad-pixel thresholds in px, ascending, distinct. */
  thresholds: z.array(z.number()),
  /** Quantile levels in %, ascending, distinct. */
  quantiles: z.array(z.number()),
  regions: regionParamsRecord,
  /** Run folder (absolute); default reports/<name>. */
  out: z.string().optional(),
  name: z.string().optional(),
  /** Folder that matcher module paths and program definitions are relative to. */
  baseDir: z.string(),
  /** Per-job time limit of command-line module plugins, ms (`--module-timeout`). */
  moduleTimeoutMs: z.number().optional(),
  /** Depth band edges in metres (`--depth-bands`); absent = the default from the data's depth range. */
  depthBands: z.array(z.number()).optional(),
  /** The usable range's rule (`--usable-range`), e.g. `depth_over5pct<=10`; absent = that default. */
  usableRange: z.string().optional(),
  /** Data folder of every dataset (`--data-root`), absolute; absent = each manifest's own. */
  dataRoot: z.string().optional(),
  /** Camera-fault condition specs as given (`--condition noise=4`, `vshift=[0.25,0.5]`); absent = clean only. */
  conditions: z.array(z.string()).optional(),
  /** Seed of the conditions' noise fields (`--condition-seed`); absent = 1. */
  conditionSeed: z.number().optional(),
  /** Rule of the breaking point (`--breaking-point`), `region/metric:worsening`; absent = the default. */
  breakingPoint: z.string().optional(),
});

const configRecord = z.object({
  thresholds: z.array(z.number()),
  quantiles: z.array(z.number()),
  regions: z.record(z.string(), z.number()),
  matchers: z.array(
    z.object({
      label: z.string(),
      matcherId: z.string(),
      kind: z.enum(['matcher', 'predictions']),
      version: z.string().optional(),
      params: z.record(z.string(), z.unknown()),
      codeHash: z.string().optional(),
      /** Programs: the command line the harness starts. */
      command: z.array(z.string()).optional(),
      /** Module plugins: the per-job time limit, ms. */
      timeoutMs: z.number().optional(),
      predictions: z.object({ dir: z.string(), scale: z.number().optional(), invalid: z.number().optional(), depthUnit: z.enum(['m', 'mm']).optional() }).optional(),
    }),
  ),
  datasets: z.array(z.object({ name: z.string(), path: z.string(), manifest: z.string(), hash: z.string(), pairs: z.number(), dataRoot: z.string().optional() })),
  /** Depth band edges used (metres); absent = no bands. */
  depthBands: z.array(z.number()).optional(),
  /** The usable range's rule; absent = the default (depth_over5pct<=10). */
  usableRange: z.string().optional(),
  /** The run's conditions, `clean` first (src/conditions/spec.ts); absent = clean only. */
  conditions: z.array(z.string()).optional(),
  /** Seed of the conditions' noise fields. */
  conditionSeed: z.number().optional(),
  /** Rule of the breaking point; absent = the default (src/stats/breaking.ts). */
  breakingPoint: z.string().optional(),
});

export const runRecordSchema = z.object({
  format: z.literal(RUN_RECORD_FORMAT),
  tool: z.object({ name: z.literal('parallax'), version: z.string(), git: z.object({ commit: z.string(), dirty: z.boolean() }).nullable() }),
  name: z.string(),
  status: z.enum(['running', 'complete', 'aborted']),
  started: z.string(),
  ended: z.string().nullable(),
  config: configRecord,
  jobs: z.object({ total: z.number(), ok: z.number(), failed: z.number() }),
  environment: z.object({
    node: z.string(),
    cpu: z.object({ model: z.string(), count: z.number() }),
    os: z.object({ platform: z.string(), release: z.string(), arch: z.string() }),
    memoryMb: z.number(),
  }),
  /** What time_ms, wall_ms and peak_mb mean, in words. */
  notes: z.record(z.string(), z.string()),
  /** Runs started by `parallax run`: the settings and shard, for --resume and merge. */
  rerun: z.object({ settings: runSettingsSchema, shard: z.string().nullable() }).optional(),
  /** Scaled runs: the result cache used (null: none). */
  cache: z.object({ dir: z.string(), jobs_from_cache: z.number(), jobs_computed: z.number(), write_errors: z.number().optional() }).nullable().optional(),
  /** Pairs that could not be loaded in this run (absent when none). */
  broken_pairs: z.array(z.object({ dataset: z.string(), pair: z.string(), error: z.string() })).optional(),
  /** Runs made by `parallax merge`: the folders merged and their shards. */
  merged: z.object({ from: z.array(z.string()), shards: z.array(z.string().nullable()) }).optional(),
});

export type RunRecord = z.infer<typeof runRecordSchema>;
export type RunConfigRecord = RunRecord['config'];
export type RunSettings = z.infer<typeof runSettingsSchema>;
export type PredictionSource = z.infer<typeof predictionSourceSchema>;
export type BrokenPair = NonNullable<RunRecord['broken_pairs']>[number];

/** The metric set of a run: its thresholds and quantile levels. */
export function metricSetOf(record: { config: Pick<RunConfigRecord, 'thresholds' | 'quantiles' | 'usableRange' | 'breakingPoint'> }): { thresholds: number[]; quantiles: number[]; usableRange?: string; breakingPoint?: string } {
  const u = record.config.usableRange;
  const b = record.config.breakingPoint;
  return { thresholds: record.config.thresholds, quantiles: record.config.quantiles, ...(u !== undefined ? { usableRange: u } : {}), ...(b !== undefined ? { breakingPoint: b } : {}) };
}

/** Parse run.json text; an InputError naming `file` when it is not a run record of this format. */
export function parseRunRecord(text: string, file: string): RunRecord {
  let json: unknown;
  try {
    json = JSON.parse(text.charCodeAt(0) === 0xfeff ? text.slice(1) : text);
  } catch {
    throw new InputError(file, 'is not valid JSON');
  }
  if (!json || typeof json !== 'object' || Array.isArray(json)) throw new InputError(file, 'is not a parallax run record (a JSON object expected)');
  const format = (json as { format?: unknown }).format;
  if (format !== RUN_RECORD_FORMAT) {
    if (format === undefined) throw new InputError(file, `was written by an older parallax (run record format 1); this version reads format ${RUN_RECORD_FORMAT}: run it again`);
    throw new InputError(file, `has run record format ${JSON.stringify(format)}; this parallax reads format ${RUN_RECORD_FORMAT} (a newer version wrote it?)`);
  }
  const r = runRecordSchema.safeParse(json);
  if (!r.success) throw new InputError(file, `is not a valid run record: ${issueText(r.error.issues[0])}`);
  return r.data;
}

/** Read `<runDir>/run.json`; an InputError naming the file when missing or not a run record. */
export function readRunRecord(runDir: string): RunRecord {
  const file = join(runDir, RUN_RECORD_FILE);
  let text: string;
  try {
    text = readFileSync(file, 'utf8');
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    throw new InputError(file, code === 'ENOENT' ? 'no run.json here; is this a parallax run folder?' : `cannot be read (${code ?? 'error'})`);
  }
  return parseRunRecord(text, file);
}

/** Write `<runDir>/run.json` atomically (validated first: a record that would not read back is a bug). */
export async function writeRunRecord(runDir: string, record: RunRecord): Promise<void> {
  const checked = runRecordSchema.parse(record);
  await writeFileAtomic(join(runDir, RUN_RECORD_FILE), JSON.stringify(checked, null, 2) + '\n');
}
