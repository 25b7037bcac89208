/**
 * The CLI's access to the synthetic scene renderer (src/synth): render the demo
 * dataset into a folder.
 */
import { UsageError } from '../core/errors.js';
import { optionalModule } from '../runner/optional.js';

export interface DemoDatasetOptions {
  seed?: number;
  width?: number;
  height?: number;
}

type SynthModule = { writeDemoDataset(outDir: string, opts?: DemoDatasetOptions): Promise<unknown> };

export async function renderDemoDataset(outDir: string, opts: DemoDatasetOptions): Promise<void> {
  const m = await optionalModule<SynthModule>('../synth/demo.js');
  if (!m) throw new UsageError('dataset synth', 'the synthetic renderer is not part of this build');
  await m.writeDemoDataset(outDir, opts);
}
