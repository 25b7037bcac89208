/**
 * The CLI's access to the synthetic scene renderer (src/synth): render the demo
 * dataset into a folder, with a progress line on a terminal.
 */
import { UsageError } from '../core/errors.js';
import { DEMO_MAX_HEIGHT, DEMO_MAX_WIDTH } from '../synth/dataset.js';
import { writeDemoDataset } from '../synth/index.js';

export interface DemoDatasetOptions {
  seed?: number;
  width?: number;
  height?: number;
  pairs?: number;
  quiet?: boolean;
}

function intOption(name: string, v: number | undefined, min: number, max: number): number | undefined {
  if (v === undefined) return undefined;
  if (!Number.isInteger(v) || v < min || v > max) throw new UsageError(`--${name}`, `must be an integer from ${min} to ${max}, got ${String(v)}`);
  return v;
}

/** Check the options (UsageError naming the option) and render. */
export async function renderDemoDataset(outDir: string, opts: DemoDatasetOptions): Promise<void> {
  const seed = intOption('seed', opts.seed, 0, 2 ** 32 - 1);
  const width = intOption('width', opts.width, 16, DEMO_MAX_WIDTH);
  const height = intOption('height', opts.height, 16, DEMO_MAX_HEIGHT);
  const pairs = intOption('pairs', opts.pairs, 1, 200);
  const tty = !opts.quiet && process.stderr.isTTY === true;
  await writeDemoDataset(outDir, {
    ...(seed !== undefined ? { seed } : {}),
    ...(width !== undefined ? { width } : {}),
    ...(height !== undefined ? { height } : {}),
    ...(pairs !== undefined ? { pairs } : {}),
    ...(tty ? { onProgress: (done: number, total: number) => void process.stderr.write(`\rrendering pair ${done}/${total}${done === total ? '\n' : ''}`) } : {}),
  });
}
