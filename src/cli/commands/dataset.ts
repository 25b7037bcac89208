/**
 * `parallax dataset check <dir>` and `parallax dataset synth --out <dir>`.
 */
import { resolve } from 'node:path';
import type { Argv, CommandModule } from 'yargs';
import { UsageError } from '../../core/errors.js';
import { checkDataset, DEFAULT_MAX_INVALID_PERCENT } from '../../dataset/check.js';
import { renderDemoDataset } from '../synth.js';
import { shownPath } from '../session.js';

interface CheckArgs {
  dir: string;
  'max-invalid': number;
}

interface SynthArgs {
  out: string;
  seed?: number;
  width?: number;
  height?: number;
  pairs?: number;
  quiet: boolean;
}

const checkCommand: CommandModule<object, CheckArgs> = {
  command: 'check <dir>',
  describe: 'Check a dataset: manifest, files, sizes, truth range, share of invalid truth; one line per problem',
  builder: (y) =>
    y
      .positional('dir', { type: 'string', demandOption: true, describe: 'Dataset folder or its dataset.json' })
      .option('max-invalid', {
        type: 'number',
        default: DEFAULT_MAX_INVALID_PERCENT,
        describe: 'Largest acceptable share of invalid truth pixels per pair, in %',
      }) as unknown as Argv<CheckArgs>,
  handler: async (a) => {
    const max = a['max-invalid'];
    if (!Number.isFinite(max) || max < 0 || max > 100) throw new UsageError('--max-invalid', `must be a percentage 0-100, got ${String(max)}`);
    const report = await checkDataset(a.dir, { maxInvalidPercent: max });
    if (report.problems.length) {
      for (const p of report.problems) process.stdout.write(p + '\n');
      process.stdout.write(`${report.problems.length} problem(s) in ${shownPath(report.manifestFile)}\n`);
      process.exitCode = 1;
    } else {
      process.stdout.write(`OK ${report.summary}\n`);
    }
  },
};

const synthCommand: CommandModule<object, SynthArgs> = {
  command: 'synth',
  describe: 'Render the synthetic loading-dock dataset (images, truth, occlusion masks, dataset.json)',
  builder: (y) =>
    y
      .option('out', { alias: 'o', type: 'string', default: 'datasets/demo', describe: 'Folder to write' })
      .option('seed', { type: 'number', describe: 'Random seed of the scene' })
      .option('width', { type: 'number', describe: 'Image width in px' })
      .option('height', { type: 'number', describe: 'Image height in px' })
      .option('pairs', { type: 'number', describe: 'Number of pairs (default: the standard list)' })
      .option('quiet', { alias: 'q', type: 'boolean', default: false }) as unknown as Argv<SynthArgs>,
  handler: async (a) => {
    const out = resolve(a.out);
    await renderDemoDataset(out, {
      ...(a.seed !== undefined ? { seed: a.seed } : {}),
      ...(a.width !== undefined ? { width: a.width } : {}),
      ...(a.height !== undefined ? { height: a.height } : {}),
      ...(a.pairs !== undefined ? { pairs: a.pairs } : {}),
      quiet: a.quiet,
    });
    if (!a.quiet) process.stdout.write(`wrote ${shownPath(out)}/\n`);
  },
};

export const datasetCommand: CommandModule = {
  command: 'dataset',
  describe: 'Dataset tools: check, synth',
  builder: (y) => y.command(checkCommand).command(synthCommand).demandCommand(1, 'give an action: check or synth'),
  handler: () => undefined,
};

export default datasetCommand;
