/**
 * `parallax report <run-dir>`: (re)render the run's index.html from run.json,
 * results.jsonl, the previews and the dataset files.
 */
import { resolve } from 'node:path';
import type { CommandModule } from 'yargs';
import { UsageError } from '../../core/errors.js';
import { writeHtmlReport } from '../../report/html/index.js';
import { DISPARITY_MAPS, type DisparityMapName } from '../../report/colormaps.js';
import { DEFAULT_RESAMPLES } from '../../stats/bootstrap.js';

export interface ReportArgs {
  run: string;
  resamples?: number;
  'disparity-colors'?: string;
}

export const reportCommand: CommandModule<object, ReportArgs> = {
  command: 'report <run>',
  describe: 'Render the self-contained HTML report (index.html) of a run folder',
  builder: (y) =>
    y
      .positional('run', { type: 'string', describe: 'Run folder (holds run.json and results.jsonl)', demandOption: true })
      .option('resamples', { type: 'number', default: DEFAULT_RESAMPLES, describe: 'Bootstrap resamples for the intervals' })
      .option('disparity-colors', { type: 'string', default: 'viridis', describe: `Colour map of disparity thumbnails: ${DISPARITY_MAPS.join(' or ')}` }) as never,
  handler: async (a) => {
    const resamples = a.resamples ?? DEFAULT_RESAMPLES;
    if (!Number.isInteger(resamples) || resamples < 100) throw new UsageError('--resamples', 'must be an integer >= 100');
    const map = a['disparity-colors'] ?? 'viridis';
    if (!(DISPARITY_MAPS as readonly string[]).includes(map)) throw new UsageError('--disparity-colors', `must be ${DISPARITY_MAPS.join(' or ')} (got ${JSON.stringify(map)})`);
    const path = await writeHtmlReport(resolve(a.run), { resamples, disparityMap: map as DisparityMapName });
    process.stdout.write(`wrote ${path}\n`);
  },
};
