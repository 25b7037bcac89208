/**
 * `parallax merge <run-dirs...> --out <dir>`: join shard runs (`parallax run --shard k/N`)
 * into one run folder whose tables equal a single-machine run's (see runner/merge.ts).
 */
import type { Argv, CommandModule } from 'yargs';
import { mergeRuns } from '../../runner/merge.js';
import { shownPath } from '../session.js';

export interface MergeArgs {
  runs: string[];
  out: string;
  quiet: boolean;
}

export const mergeCommand: CommandModule<object, MergeArgs> = {
  command: 'merge <runs..>',
  describe: 'Join the run folders of shards (same configuration) into one run with pairs.csv, summary.csv and index.html',
  builder: (y) =>
    y
      .positional('runs', { type: 'string', array: true, describe: 'Run folders to join', demandOption: true })
      .option('out', { alias: 'o', type: 'string', demandOption: true, describe: 'Folder of the merged run' })
      .option('quiet', { alias: 'q', type: 'boolean', default: false }) as unknown as Argv<MergeArgs>,
  handler: async (a) => {
    const m = await mergeRuns(a.runs, a.out);
    if (!a.quiet) {
      const dup = m.duplicates ? `, ${m.duplicates} duplicate job(s) kept once` : '';
      const miss = m.missing ? `; ${m.missing} job(s) missing (finish with: parallax run --resume ${shownPath(m.runDir)})` : '';
      process.stdout.write(`merged ${a.runs.length} run(s): ${m.results.length} job(s)${dup}${miss}. Wrote results.jsonl, run.json, ${m.outputs.files.join(', ')} to ${shownPath(m.runDir)}/\n`);
    }
  },
};
