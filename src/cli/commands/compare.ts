/**
 * `parallax compare <baseline-run> <candidate-run>`: paired comparison of two runs with
 * optional CI gates. Configurations pair by label (the user's name) or by --pair.
 * Writes compare.md (and with --junit the gates as JUnit XML). Exit codes: 0 every gate
 * passes (or none set), 1 a gate failed, 2 usage or input error (including runs that
 * cannot be compared, unless --allow-mismatch).
 */
import { configLabel } from '../../conditions/spec.js';
import { readFile } from 'node:fs/promises';
import { join, resolve } from 'node:path';
import type { CommandModule } from 'yargs';
import { InputError, UsageError } from '../../core/errors.js';
import { sliceKey } from '../../core/regions.js';
import { writeFileAtomic } from '../../io/files.js';
import { compareConsole, compareMarkdown, type RunMeta } from '../../report/compare-md.js';
import { junitXml } from '../../report/junit.js';
import { configChanges } from '../../stats/config-diff.js';
import { latestJobs } from '../../stats/aggregate.js';
import { readRunFolder, type RunFolder } from '../../report/run-folder.js';
import { DEFAULT_RESAMPLES, DEFAULT_SEED } from '../../stats/bootstrap.js';
import { comparabilityProblems, compareRuns } from '../../stats/compare.js';
import { evaluateGates, parseGate, parseGateFile, parseSlice, type Gate } from '../../stats/gates.js';
import { findMetric } from '../../metrics/catalogue.js';
import { metricSetOf } from '../../io/run-record.js';

export interface CompareArgs {
  baseline: string;
  candidate: string;
  gate?: string[];
  gateFile?: string;
  strict?: boolean;
  allowMismatch?: boolean;
  out?: string;
  resamples?: number;
  seed?: number;
  all?: boolean;
  headline?: string;
  pair?: string[];
  junit?: string;
}

export interface CompareIo {
  stdout: (s: string) => void;
  stderr: (s: string) => void;
}

/** Runs the comparison; returns the exit code (0 or 1). User errors throw (exit 2). */
export async function runCompare(a: CompareArgs, io: CompareIo): Promise<number> {
  const resamples = a.resamples ?? DEFAULT_RESAMPLES;
  if (!Number.isInteger(resamples) || resamples < 100) throw new UsageError('--resamples', 'must be an integer >= 100');
  const base = await readRunFolder(resolve(a.baseline));
  const cand = await readRunFolder(resolve(a.candidate));
  const problems = comparabilityProblems(base.info, cand.info);
  if (problems.length) {
    if (!a.allowMismatch) {
      throw new InputError(undefined, `runs cannot be compared: ${problems.join('; ')} (use --allow-mismatch to compare anyway)`);
    }
    for (const p of problems) io.stderr(`parallax compare: warning: ${p}\n`);
  }
  const set = metricSetOf(cand.info);
  const gates: Gate[] = [];
  for (const g of a.gate ?? []) gates.push(parseGate(g, set));
  if (a.gateFile) {
    let text: string;
    try {
      text = await readFile(a.gateFile, 'utf8');
    } catch {
      throw new UsageError('--gate-file', `${a.gateFile} cannot be read`);
    }
    gates.push(...parseGateFile(text, a.gateFile, set));
  }
  let headline: { region: string; metric: string } | undefined;
  if (a.headline) {
    const [r, m] = a.headline.split('/');
    if (!r || !m || !findMetric(set, m)) throw new UsageError('--headline', `"${a.headline}" is not region/metric (e.g. visible/over2px)`);
    const sl = parseSlice(r, a.headline, '--headline');
    headline = { region: sliceKey(sl.region, sl.band), metric: m };
  } else if (gates[0]) headline = { region: sliceKey(gates[0].region, gates[0].band), metric: gates[0].metric };
  const pairings = parsePairings(a.pair ?? [], base, cand);
  const c = compareRuns(base, cand, { bootstrap: { resamples, seed: a.seed ?? DEFAULT_SEED }, pairings, ...(headline ? { headline } : {}) });
  if (c.configs.length === 0) {
    throw new InputError(
      undefined,
      `the runs have no configuration in common (baseline: ${c.configsOnlyInBase.join(', ') || 'none'}; candidate: ${c.configsOnlyInCand.join(', ') || 'none'}); name both alike (--matcher production=sgm:p2=400, or "name" in an experiment file) or pair them with --pair <baseline>=<candidate>`,
    );
  }
  const outcomes = evaluateGates(c, gates, a.strict ?? false);
  const overrides: string[] = [];
  if (problems.length) overrides.push(`--allow-mismatch: compared although ${problems.join('; ')}`);
  for (const [b, k] of pairings) overrides.push(`--pair: baseline ${b} compared with candidate ${k}`);
  if (a.strict) overrides.push('--strict: a gate passes only when the upper interval bound of its worsening is within the allowance');
  if (resamples !== DEFAULT_RESAMPLES || (a.seed ?? DEFAULT_SEED) !== DEFAULT_SEED) overrides.push(`bootstrap: ${resamples} resamples, seed ${a.seed ?? DEFAULT_SEED}`);
  const changes: Record<string, string[]> = {};
  for (const cfg of c.configs) {
    const rec = (run: RunFolder, label: string) => run.info.config.matchers.find((m) => m.label === label);
    changes[cfg.label] = configChanges(rec(base, cfg.baseLabel), rec(cand, cfg.candLabel));
  }
  const md = compareMarkdown(c, outcomes, { baseline: runMeta(base, a.baseline), candidate: runMeta(cand, a.candidate), strict: a.strict ?? false, changes, overrides });
  const outPath = a.out ?? join(resolve(a.candidate), 'compare.md');
  await writeFileAtomic(outPath, md);
  if (a.junit !== undefined) await writeFileAtomic(resolve(a.junit), junitXml(c, outcomes, `${cand.info.name} against ${base.info.name}`));
  io.stdout(compareConsole(c, outcomes, a.all ?? false));
  for (const cfg of c.configs) {
    const list = changes[cfg.label];
    if (list?.length) io.stdout(`\n${cfg.label} changed: ${list.join('; ')}\n`);
  }
  io.stdout(`\nwrote ${outPath}${a.junit !== undefined ? ` and ${resolve(a.junit)}` : ''}\n`);
  const failed = outcomes.filter((o) => !o.pass).length;
  if (gates.length) io.stdout(failed ? `${failed} of ${outcomes.length} gate checks failed\n` : `all ${outcomes.length} gate checks passed\n`);
  return failed ? 1 : 0;
}

/** `--pair baseline=candidate`: both labels must exist in their runs, each used once. */
function parsePairings(texts: readonly string[], base: RunFolder, cand: RunFolder): [string, string][] {
  const labels = (run: RunFolder): Set<string> => new Set(run.results.map((j) => j.matcher));
  const inB = labels(base);
  const inC = labels(cand);
  const out: [string, string][] = [];
  for (const t of texts) {
    const eq = t.indexOf('=');
    const b = eq < 0 ? '' : t.slice(0, eq).trim();
    const k = eq < 0 ? '' : t.slice(eq + 1).trim();
    if (!b || !k) throw new UsageError('--pair', `"${t}" is not <baseline configuration>=<candidate configuration>`);
    if (!inB.has(b)) throw new UsageError('--pair', `the baseline has no configuration "${b}" (it has ${[...inB].join(', ')})`);
    if (!inC.has(k)) throw new UsageError('--pair', `the candidate has no configuration "${k}" (it has ${[...inC].join(', ')})`);
    if (out.some(([x, y]) => x === b || y === k)) throw new UsageError('--pair', `"${t}" uses a configuration that another --pair already pairs`);
    out.push([b, k]);
  }
  return out;
}

function runMeta(run: RunFolder, given: string): RunMeta {
  const cached: Record<string, number> = {};
  for (const j of latestJobs(run.results)) if (j.cached === true) cached[configLabel(j)] = (cached[configLabel(j)] ?? 0) + 1;
  const git = run.info.tool.git;
  return { name: run.info.name || given, dir: resolve(given), commit: git ? git.commit : null, dirty: git ? git.dirty : false, started: run.info.started, cached };
}

export const compareCommand: CommandModule<object, CompareArgs> = {
  command: 'compare <baseline> <candidate>',
  describe: 'Compare two runs pair by pair (intervals, p-values) and check CI gates',
  builder: (y) =>
    y
      .positional('baseline', { type: 'string', describe: 'Run folder of the baseline', demandOption: true })
      .positional('candidate', { type: 'string', describe: 'Run folder of the candidate', demandOption: true })
      .option('gate', { type: 'string', array: true, describe: 'region/metric:allowance, e.g. visible/over2px:0.5 (repeatable)' })
      .option('gate-file', { type: 'string', describe: 'JSON file with gates: ["visible/over2px:0.5", ...] or {"gates": [...]}' })
      .option('strict', { type: 'boolean', default: false, describe: 'Fail unless the upper interval bound of each worsening is within its allowance' })
      .option('allow-mismatch', { type: 'boolean', default: false, describe: 'Compare runs whose datasets, thresholds or region parameters differ' })
      .option('out', { type: 'string', describe: 'Where to write the Markdown summary (default <candidate>/compare.md)' })
      .option('resamples', { type: 'number', default: DEFAULT_RESAMPLES, describe: 'Bootstrap resamples for the intervals' })
      .option('seed', { type: 'number', default: DEFAULT_SEED, describe: 'Seed of the resampling' })
      .option('all', { type: 'boolean', default: false, describe: 'Print every metric and region, not only the headline rows' })
      .option('pair', { type: 'string', array: true, describe: 'Compare differently named configurations: <baseline name>=<candidate name> (repeatable); others pair by equal name' })
      .option('junit', { type: 'string', describe: 'Also write the gates as JUnit XML to this file (one test case per gate and configuration)' })
      .option('headline', { type: 'string', describe: 'region/metric for the most-changed pairs (default: first gate, else known/epe)' }) as never,
  handler: async (a) => {
    process.exitCode = await runCompare(a, {
      stdout: (s) => process.stdout.write(s),
      stderr: (s) => process.stderr.write(s),
    });
  },
};
