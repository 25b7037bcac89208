/**
 * `parallax run`: score matchers (or imported predictions) on datasets.
 *   parallax run --dataset datasets/demo --matcher block --matcher sgm:p2=96
 *   parallax run experiment.json
 */
import { resolve } from 'node:path';
import type { Argv, CommandModule } from 'yargs';
import { UsageError } from '../../core/errors.js';
import { DEFAULT_QUANTILES, DEFAULT_THRESHOLDS } from '../../metrics/catalogue.js';
import { loadExperimentFile, parseQuantiles, parseThresholds, regionParams, type RunSettings } from '../../runner/experiment.js';
import { planRun } from '../../runner/plan.js';
import { parseDepthBands } from '../../core/depth-bands.js';
import { parseUsableRule, usableRuleText } from '../../stats/usable-range.js';
import { DEFAULT_MODULE_TIMEOUT_MS } from '../../plugins/registry.js';
import { runSession } from '../session.js';
import { cacheLine, resumePlan, scaleArgOptions, scaleFromArgs, type ScaleArgs } from '../scale-options.js';

export interface RunArgs {
  experiment?: string;
  dataset?: string[];
  matcher?: string[];
  out?: string;
  name?: string;
  thresholds?: string;
  quantiles?: string;
  predictions?: string;
  label?: string;
  'prediction-scale'?: number;
  'prediction-invalid'?: number;
  'module-timeout'?: number;
  'prediction-depth'?: string;
  'depth-bands'?: string;
  'usable-range'?: string;
  'data-root'?: string;
  condition?: string[];
  'condition-seed'?: number;
  'breaking-point'?: string;
  quiet: boolean;
  json: boolean;
}

function finiteOption(name: string, v: number | undefined, check: (v: number) => boolean, what: string): number | undefined {
  if (v === undefined) return undefined;
  if (!Number.isFinite(v) || !check(v)) throw new UsageError(`--${name}`, `must be ${what}, got ${String(v)}`);
  return v;
}

/** `--prediction-depth m|mm`: the predictions hold depth in that unit. */
function depthUnitOption(v: string | undefined): 'm' | 'mm' | undefined {
  if (v === undefined) return undefined;
  if (v !== 'm' && v !== 'mm') throw new UsageError('--prediction-depth', `must be m or mm (the unit of the depth the files hold), got "${v}"`);
  return v;
}

/** Settings from the command line, on top of an experiment file when one is given. */
export function settingsFromArgs(a: RunArgs, cwd = process.cwd()): RunSettings {
  const base: RunSettings = a.experiment
    ? loadExperimentFile(resolve(cwd, a.experiment))
    : { datasets: [], matchers: [], matcherEntries: [], predictions: [], thresholds: [...DEFAULT_THRESHOLDS], quantiles: [...DEFAULT_QUANTILES], regions: regionParams(undefined), baseDir: cwd };
  const s: RunSettings = { ...base, datasets: [...base.datasets], matchers: [...base.matchers], predictions: [...base.predictions] };
  for (const d of a.dataset ?? []) s.datasets.push(resolve(cwd, d));
  for (const m of a.matcher ?? []) s.matchers.push(m);
  if (a.thresholds !== undefined) s.thresholds = parseThresholds(a.thresholds);
  if (a.quantiles !== undefined) s.quantiles = parseQuantiles(a.quantiles);
  if (a.out !== undefined) s.out = resolve(cwd, a.out);
  if (a.name !== undefined) s.name = a.name;
  if (a['depth-bands'] !== undefined) s.depthBands = parseDepthBands(a['depth-bands']);
  if (a['usable-range'] !== undefined) s.usableRange = usableRuleText(parseUsableRule(a['usable-range']));
  if (a['data-root'] !== undefined) s.dataRoot = resolve(cwd, a['data-root']);
  if (a.condition?.length) s.conditions = [...(s.conditions ?? []), ...a.condition];
  const seed = finiteOption('condition-seed', a['condition-seed'], (v) => Number.isInteger(v) && v >= 0 && v <= 4294967295, 'a whole number from 0 to 4294967295');
  if (seed !== undefined) s.conditionSeed = seed;
  if (a['breaking-point'] !== undefined) s.breakingPoint = a['breaking-point'];
  const depthUnit = depthUnitOption(a['prediction-depth']);
  const moduleTimeout = finiteOption('module-timeout', a['module-timeout'], (v) => Number.isInteger(v) && v > 0, 'a whole number of ms > 0');
  if (moduleTimeout !== undefined) s.moduleTimeoutMs = moduleTimeout;
  const scale = finiteOption('prediction-scale', a['prediction-scale'], (v) => v > 0, 'a number > 0');
  const invalid = finiteOption('prediction-invalid', a['prediction-invalid'], (v) => Number.isInteger(v) && v >= 0 && v <= 65535, 'an integer code 0-65535');
  if (a.predictions !== undefined || a.label !== undefined) {
    if (a.predictions === undefined) throw new UsageError('--label', 'names imported predictions; give --predictions <dir> too');
    if (a.label === undefined) throw new UsageError('--predictions', 'give --label <name> for the matcher column');
    s.predictions.push({
      label: a.label,
      dir: resolve(cwd, a.predictions),
      ...(scale !== undefined ? { scale } : {}),
      ...(invalid !== undefined ? { invalid } : {}),
      ...(depthUnit !== undefined ? { depthUnit } : {}),
    });
  } else if (scale !== undefined || invalid !== undefined || depthUnit !== undefined) {
    throw new UsageError(scale !== undefined ? '--prediction-scale' : invalid !== undefined ? '--prediction-invalid' : '--prediction-depth', 'applies to --predictions only');
  }
  if (!s.datasets.length) throw new UsageError('--dataset', 'give at least one dataset folder or manifest (or an experiment file)');
  if (!s.matchers.length && !s.matcherEntries.length && !s.predictions.length) throw new UsageError('--matcher', 'give at least one matcher, or --predictions with --label');
  return s;
}

export function runOptions<T>(y: Argv<T>): Argv<T & RunArgs> {
  return y
    .positional('experiment', { type: 'string', describe: 'Experiment file (JSON) with datasets, matchers, thresholds, regions, out, name' })
    .option('dataset', { alias: 'd', type: 'string', array: true, describe: 'Dataset folder or dataset.json (repeatable)' })
    .option('matcher', { alias: 'm', type: 'string', array: true, describe: 'Matcher configuration id[:key=value,...], key=[a,b] sweeps; or a module path; name=spec names it, e.g. production=sgm:p2=400 (repeatable)' })
    .option('out', { alias: 'o', type: 'string', describe: 'Run folder (default reports/<run name>)' })
    .option('name', { type: 'string', describe: 'Run name (default: first dataset and the matcher labels)' })
    .option('thresholds', { type: 'string', describe: `Bad-pixel thresholds in px, comma list (default ${DEFAULT_THRESHOLDS.join(',')})` })
    .option('quantiles', { type: 'string', describe: `Error quantile levels in %, comma list (default ${DEFAULT_QUANTILES.join(',')})` })
    .option('predictions', { type: 'string', describe: 'Folder of predictions made elsewhere: <pair id>.pfm|.npy|.png (or <dataset>/<pair id>.*)' })
    .option('label', { type: 'string', describe: 'Configuration name of --predictions (its matcher column)' })
    .option('prediction-scale', { type: 'number', describe: 'PNG predictions: stored value = round(disparity * scale)' })
    .option('module-timeout', { type: 'number', describe: `Per-job time limit of module matchers in ms; past it the worker is ended and the job fails (default ${DEFAULT_MODULE_TIMEOUT_MS})` })
    .option('prediction-invalid', { type: 'number', describe: 'PNG predictions: code meaning "no answer" (default 0)' })
    .option('prediction-depth', { type: 'string', describe: 'The predictions hold depth in this unit (m or mm), not disparity; converted with each pair\'s camera' })
    .option('depth-bands', { type: 'string', describe: 'Depth band edges in metres, e.g. 0.5,1,2,4,8 (default: from the true depths of the data)' })
    .option('usable-range', { type: 'string', describe: 'Rule of the usable range, <figure><=<limit> (default depth_over5pct<=10)' })
    .option('data-root', { type: 'string', describe: "Folder every dataset's paths are relative to, instead of the manifest's dataRoot or folder" })
    .option('condition', { type: 'string', array: true, describe: 'Camera fault applied to the images the matchers see, kind=strength or kind=[a,b,c] (repeatable; clean always runs too): gain, offset, gamma, noise, blur, blur-right, vshift, rotate, scale, jpeg' })
    .option('condition-seed', { type: 'number', describe: 'Seed of the noise conditions (default 1; recorded in run.json)' })
    .option('breaking-point', { type: 'string', describe: 'Rule of the breaking point, region/metric:worsening over clean (default visible/<key rate>:5)' })
    .option('quiet', { alias: 'q', type: 'boolean', default: false, describe: 'No progress bar, no table' })
    .option('json', { type: 'boolean', default: false, describe: 'Print the summary as JSON to stdout' }) as unknown as Argv<T & RunArgs>;
}

export const runCommand: CommandModule<object, RunArgs & ScaleArgs> = {
  command: 'run [experiment]',
  describe: 'Run matchers (or score imported predictions) on datasets; write run.json, results.jsonl, pairs.csv, summary.csv, index.html',
  builder: (y) => scaleArgOptions(runOptions(y)),
  handler: async (a) => {
    // Worker pool, result cache, shards and --resume (see ../scale-options.ts).
    const scale = scaleFromArgs(a);
    let plan;
    if (a.resume !== undefined) {
      const given = a.experiment !== undefined || a.dataset?.length || a.matcher?.length || a.predictions !== undefined || a.label !== undefined;
      const depthOptions = a['depth-bands'] !== undefined || a['usable-range'] !== undefined || a['data-root'] !== undefined || a['prediction-depth'] !== undefined;
      const conditionOptions = a.condition !== undefined || a['condition-seed'] !== undefined || a['breaking-point'] !== undefined;
      if (given || depthOptions || conditionOptions || a.thresholds !== undefined || a.quantiles !== undefined || a.out !== undefined || a.name !== undefined || a['module-timeout'] !== undefined) {
        throw new UsageError(
          '--resume',
          'takes every setting from the run folder; give no experiment file, --dataset, --matcher, --predictions, --thresholds, --quantiles, --depth-bands, --usable-range, --data-root, --condition, --condition-seed, --breaking-point, --module-timeout, --out or --name',
        );
      }
      plan = await resumePlan(a.resume, scale);
    } else {
      plan = { ...(await planRun(settingsFromArgs(a))), scale };
    }
    const outcome = await runSession(plan, { quiet: a.quiet, json: a.json });
    if (!a.quiet && !a.json) process.stdout.write(cacheLine(outcome));
  },
};
