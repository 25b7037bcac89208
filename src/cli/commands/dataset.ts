/**
 * `parallax dataset check <dir>`, `parallax dataset init <dir>` and `parallax dataset synth --out <dir>`.
 */
import { existsSync } from 'node:fs';
import { join, resolve } from 'node:path';
import type { Argv, CommandModule } from 'yargs';
import { UsageError } from '../../core/errors.js';
import { checkDataset, DEFAULT_MAX_GAIN_PERCENT, DEFAULT_MAX_INVALID_PERCENT, DEFAULT_MAX_OFFSET, DEFAULT_MAX_VSHIFT_PX } from '../../dataset/check.js';
import { buildManifest } from '../../dataset/init.js';
import { MANIFEST_FILE } from '../../dataset/manifest.js';
import { writeFileAtomic } from '../../io/files.js';
import { renderDemoDataset } from '../synth.js';
import { shownPath } from '../session.js';

interface CheckArgs {
  dir: string;
  'max-invalid': number;
  'data-root'?: string;
  json: boolean;
  rectification: boolean;
  'max-vshift': number;
  'max-gain': number;
  'max-offset': number;
}

/** A limit option: finite and >= 0, else a usage error naming it. */
function limitOption(name: string, v: number, unit: string): number {
  if (!Number.isFinite(v) || v < 0) throw new UsageError(`--${name}`, `must be a number >= 0 (${unit}), got ${String(v)}`);
  return v;
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
  describe: 'Check a dataset: manifest, files, sizes, truth range, share of invalid truth, row alignment and camera gain of every pair; one line per problem or warning',
  builder: (y) =>
    y
      .positional('dir', { type: 'string', demandOption: true, describe: 'Dataset folder or its dataset.json' })
      .option('max-invalid', {
        type: 'number',
        default: DEFAULT_MAX_INVALID_PERCENT,
        describe: 'Largest acceptable share of invalid truth pixels per pair, in % (not checked for sparse truth)',
      })
      .option('data-root', { type: 'string', describe: "Folder the manifest's paths are relative to, instead of its dataRoot or folder" })
      .option('json', { type: 'boolean', default: false, describe: 'Print one JSON document: problems, warnings, summary and per pair figures (pairs[].id, vshift_px, vshift_spread_px, gain, ...)' })
      .option('rectification', { type: 'boolean', default: true, describe: 'Estimate row alignment and camera gain per pair from the images (--no-rectification skips it)' })
      .option('max-vshift', { type: 'number', default: DEFAULT_MAX_VSHIFT_PX, describe: 'Warn when the right image is vertically misaligned by more than this anywhere (px)' })
      .option('max-gain', { type: 'number', default: DEFAULT_MAX_GAIN_PERCENT, describe: 'Warn when the right camera gain differs from the left by more than this (%)' })
      .option('max-offset', { type: 'number', default: DEFAULT_MAX_OFFSET, describe: 'Warn when the right camera offset exceeds this (grey levels, 0-255 scale); gain and offset warn only where the brightness they predict differs by more than this' }) as unknown as Argv<CheckArgs>,
  handler: async (a) => {
    const max = a['max-invalid'];
    if (!Number.isFinite(max) || max < 0 || max > 100) throw new UsageError('--max-invalid', `must be a percentage 0-100, got ${String(max)}`);
    const report = await checkDataset(a.dir, {
      maxInvalidPercent: max,
      ...(a['data-root'] !== undefined ? { dataRoot: resolve(a['data-root']) } : {}),
      rectification: a.rectification,
      maxVshiftPx: limitOption('max-vshift', a['max-vshift'], 'px'),
      maxGainPercent: limitOption('max-gain', a['max-gain'], '%'),
      maxOffset: limitOption('max-offset', a['max-offset'], 'grey levels'),
    });
    if (report.problems.length) process.exitCode = 1;
    if (a.json) {
      const { manifestFile, name, pairCount, problems, warnings, summary, pairs } = report;
      process.stdout.write(JSON.stringify({ manifest: manifestFile, name: name ?? null, pairCount, ok: problems.length === 0, problems, warnings, summary, pairs }, null, 2) + '\n');
      return;
    }
    for (const w of report.warnings) process.stdout.write(`warning: ${w}\n`);
    if (report.problems.length) {
      for (const p of report.problems) process.stdout.write(p + '\n');
      process.stdout.write(`${report.problems.length} problem(s) in ${shownPath(report.manifestFile)}\n`);
      process.exitCode = 1;
    } else {
      const n = report.warnings.length;
      process.stdout.write(n ? `OK with ${n} warning(s) (above): ${report.summary}\n` : `OK ${report.summary}\n`);
    }
  },
};

interface InitArgs {
  dir: string;
  left: string;
  right: string;
  truth: string;
  occlusion?: string;
  ignore?: string;
  mask?: string[];
  name?: string;
  'disparity-range': string;
  'truth-kind': string;
  'depth-unit'?: string;
  'truth-scale'?: number;
  'truth-invalid'?: number;
  'focal-px'?: number;
  'baseline-m'?: number;
  'cx-shift-px'?: number;
  sparse: boolean;
  force: boolean;
}

/** `a,b` as a disparity range; a UsageError naming the option otherwise. */
function rangeOption(text: string): [number, number] {
  const parts = text.split(',').map((x) => Number(x.trim()));
  if (parts.length !== 2 || !parts.every(Number.isFinite) || parts[0] > parts[1]) throw new UsageError('--disparity-range', `"${text}" must be min,max in px with min <= max (e.g. 0,128)`);
  return [parts[0], parts[1]];
}

/** `name=pattern` pairs of --mask. */
function maskOptions(list: readonly string[] | undefined): Record<string, string> {
  const out: Record<string, string> = {};
  for (const m of list ?? []) {
    const at = m.indexOf('=');
    if (at <= 0) throw new UsageError('--mask', `"${m}" must read name=pattern (e.g. dock-edge=masks/*_edge.png)`);
    out[m.slice(0, at)] = m.slice(at + 1);
  }
  return out;
}

/** The camera from --focal-px and --baseline-m (both or neither). */
function cameraOptions(a: InitArgs): { focalPx: number; baselineM: number; cxShiftPx: number } | undefined {
  const f = a['focal-px'];
  const b = a['baseline-m'];
  if (f === undefined && b === undefined) return undefined;
  if (f === undefined || !(f > 0)) throw new UsageError('--focal-px', 'give the focal length in px (> 0) with --baseline-m');
  if (b === undefined || !(b > 0)) throw new UsageError('--baseline-m', 'give the baseline in metres (> 0) with --focal-px');
  return { focalPx: f, baselineM: b, cxShiftPx: a['cx-shift-px'] ?? 0 };
}

const initCommand: CommandModule<object, InitArgs> = {
  command: 'init <dir>',
  describe: 'Write dataset.json for a folder of files found by patterns, pairing files by their common stem; then check it',
  builder: (y) =>
    y
      .positional('dir', { type: 'string', demandOption: true, describe: 'The data folder (the patterns are relative to it)' })
      .option('left', { type: 'string', demandOption: true, describe: 'Pattern of the left images, e.g. left/*.png' })
      .option('right', { type: 'string', demandOption: true, describe: 'Pattern of the right images, e.g. right/*.png' })
      .option('truth', { type: 'string', demandOption: true, describe: 'Pattern of the truth files, e.g. depth/*.png' })
      .option('occlusion', { type: 'string', describe: 'Pattern of the occlusion masks' })
      .option('ignore', { type: 'string', describe: 'Pattern of per-pair ignore masks, or one file for every pair' })
      .option('mask', { type: 'string', array: true, describe: 'A named region: name=pattern (or name=file for every pair); repeatable' })
      .option('name', { type: 'string', describe: "Dataset name (default: the folder's name)" })
      .option('disparity-range', { type: 'string', demandOption: true, describe: 'min,max disparity in px that matchers search' })
      .option('truth-kind', { type: 'string', default: 'disparity', choices: ['disparity', 'depth'], describe: 'What the truth files hold' })
      .option('depth-unit', { type: 'string', choices: ['m', 'mm'], describe: 'Unit of depth truth' })
      .option('truth-scale', { type: 'number', describe: 'PNG truth: stored value = round(value * scale)' })
      .option('truth-invalid', { type: 'number', describe: 'PNG truth: code of unknown pixels (default 0)' })
      .option('focal-px', { type: 'number', describe: 'Camera focal length in px (depth figures, depth truth)' })
      .option('baseline-m', { type: 'number', describe: 'Camera baseline in metres' })
      .option('cx-shift-px', { type: 'number', describe: 'cx_right - cx_left in px (default 0)' })
      .option('sparse', { type: 'boolean', default: false, describe: 'The truth is sparse by design (a lidar)' })
      .option('force', { type: 'boolean', default: false, describe: 'Replace an existing dataset.json' }) as unknown as Argv<InitArgs>,
  handler: async (a) => {
    const dir = resolve(a.dir);
    if (!existsSync(dir)) throw new UsageError('<dir>', `no such folder ${a.dir}`);
    const out = join(dir, MANIFEST_FILE);
    if (existsSync(out) && !a.force) throw new UsageError('--force', `${shownPath(out)} exists; give --force to replace it`);
    const camera = cameraOptions(a);
    const scale = a['truth-scale'];
    const { manifest, unpartnered } = buildManifest(
      dir,
      { left: a.left, right: a.right, truth: a.truth, ...(a.occlusion !== undefined ? { occlusion: a.occlusion } : {}), ...(a.ignore !== undefined ? { ignore: a.ignore } : {}), masks: maskOptions(a.mask) },
      {
        name: (a.name ?? dir.split(/[\\/]/).pop() ?? 'dataset').replace(/[^A-Za-z0-9._-]/g, '-'),
        ...(camera ? { camera } : {}),
        truthKind: a['truth-kind'] === 'depth' ? 'depth' : 'disparity',
        ...(a['depth-unit'] === 'm' || a['depth-unit'] === 'mm' ? { depthUnit: a['depth-unit'] } : {}),
        sparseTruth: a.sparse,
        disparityRange: rangeOption(a['disparity-range']),
        ...(scale !== undefined ? { truthEncoding: { scale, invalid: a['truth-invalid'] ?? 0 } } : {}),
      },
    );
    await writeFileAtomic(out, JSON.stringify(manifest, null, 2) + '\n');
    process.stdout.write(`wrote ${shownPath(out)}: ${manifest.pairs.length} pair(s)\n`);
    for (const u of unpartnered) process.stdout.write(`unpartnered ${u.kind}: ${u.file}\n`);
    const report = await checkDataset(dir);
    for (const p of report.problems) process.stdout.write(p + '\n');
    process.stdout.write(report.problems.length ? `${report.problems.length} problem(s) in ${shownPath(out)}\n` : `OK ${report.summary}\n`);
    if (report.problems.length) process.exitCode = 1;
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
  describe: 'Dataset tools: check, init, synth',
  builder: (y) => y.command(checkCommand).command(initCommand).command(synthCommand).demandCommand(1, 'give an action: check, init or synth'),
  handler: () => undefined,
};

export default datasetCommand;
