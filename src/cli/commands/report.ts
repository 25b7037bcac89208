/**
 * `parallax report <run-dir>`: (re)render the run's index.html from run.json,
 * results.jsonl, the previews and the dataset files.
 */
import { resolve } from 'node:path';
import type { CommandModule } from 'yargs';
import { UsageError } from '../../core/errors.js';
import { writeHtmlReport } from '../../report/html.js';
import { DEFAULT_RESAMPLES } from '../../stats/bootstrap.js';

export interface ReportArgs {
  run: string;
  resamples?: number;
}

export const reportCommand: CommandModule<object, ReportArgs> = {
  command: 'report <run>',
  describe: 'Render the self-contained HTML report (index.html) of a run folder',
  builder: (y) =>
    y
      .positional('run', { type: 'string', describe: 'Run folder (holds run.json and results.jsonl)', demandOption: true })
      .option('resamples', { type: 'number', default: DEFAULT_RESAMPLES, describe: 'Bootstrap resamples for the intervals' }) as never,
  handler: async (a) => {
    const resamples = a.resamples ?? DEFAULT_RESAMPLES;
    if (!Number.isInteger(resamples) || resamples < 100) throw new UsageError('--resamples', 'must be an integer >= 100');
    const path = await writeHtmlReport(resolve(a.run), { resamples });
    process.stdout.write(`wrote ${path}\n`);
  },
};
