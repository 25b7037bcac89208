/**
 * `parallax demo`: render the synthetic loading-dock dataset into datasets/demo when
 * it is missing (with its depth-truth sets in depth/ and lidar/), run the built-in
 * matchers on all three with default parameters and write
 * reports/demo/. Every registered built-in runs except those in DEMO_LEFT_OUT (too slow
 * for a demo that should finish well under a minute); `--all` runs them too and
 * `--matcher` picks others. It runs through the same scheduler as `parallax run` with
 * its defaults: a worker pool of --jobs threads (default: the cores) and the result
 * cache (.parallax-cache/ or $PARALLAX_CACHE; --no-cache to match everything anew).
 * `--faults` runs the main dataset under camera faults too (DEMO_CONDITIONS) and writes
 * reports/demo-faults/, whose report draws the degradation curves and breaking points.
 */
import { availableParallelism } from 'node:os';
import { existsSync } from 'node:fs';
import { join, resolve } from 'node:path';
import type { Argv, CommandModule } from 'yargs';
import { DEFAULT_REGION_PARAMS } from '../../core/regions.js';
import { MANIFEST_FILE } from '../../dataset/manifest.js';
import { DEFAULT_QUANTILES, DEFAULT_THRESHOLDS } from '../../metrics/catalogue.js';
import { builtinMatchers } from '../../plugins/registry.js';
import { planRun } from '../../runner/plan.js';
import { cacheLine, scaleFromArgs } from '../scale-options.js';
import { runSession, shownPath } from '../session.js';
import { renderDemoDataset } from '../synth.js';
import { DEPTH_DEMO_SETS } from '../../synth/dataset.js';

interface DemoArgs {
  all: boolean;
  data: string;
  out?: string;
  matcher?: string[];
  quiet: boolean;
  json: boolean;
  jobs?: number;
  cache: boolean;
  faults: boolean;
}

/** The camera faults of `parallax demo --faults`: noise, misaligned rows, a gain difference, defocus. */
export const DEMO_CONDITIONS: readonly string[] = ['noise=[2,6]', 'vshift=[0.25,0.5,1]', 'gain=1.3', 'blur=1.5'];

/**
 * Built-ins the demo leaves out unless --all: `bp` (loopy belief propagation over five
 * scales) takes about 5 s per 480x360 demo pair on a 2-core machine, more than all the
 * other built-ins together.
 */
export const DEMO_LEFT_OUT: ReadonlySet<string> = new Set(['bp']);

/** The matchers the demo runs: built-ins with default parameters, in registry order. */
export function demoMatchers(all = false): string[] {
  return builtinMatchers()
    .map((m) => m.id)
    .filter((id) => all || !DEMO_LEFT_OUT.has(id));
}

export const demoCommand: CommandModule<object, DemoArgs> = {
  command: 'demo',
  describe: 'Render the demo dataset if missing, run the built-in matchers on it (bp only with --all), write reports/demo/ (--faults: under camera faults, reports/demo-faults/)',
  builder: (y) =>
    y
      .option('data', { type: 'string', default: 'datasets/demo', describe: 'Demo dataset folder (rendered when it has no dataset.json)' })
      .option('out', { alias: 'o', type: 'string', describe: 'Run folder (default reports/demo, with --faults reports/demo-faults)' })
      .option('faults', { type: 'boolean', default: false, describe: `Also run the main dataset under camera faults (${DEMO_CONDITIONS.join(' ')}): degradation curves and breaking points` })
      .option('matcher', { alias: 'm', type: 'string', array: true, describe: 'Matchers to run instead of the built-ins' })
      .option('all', { type: 'boolean', default: false, describe: `Run every built-in, including the slow ones left out by default (${[...DEMO_LEFT_OUT].join(', ')})` })
      .option('jobs', { alias: 'j', type: 'number', describe: `Jobs matched at once in worker threads (default: the cores, here ${availableParallelism()}; 1 = no workers)` })
      .option('cache', { type: 'boolean', default: true, describe: 'Use the result cache (--no-cache to match everything anew)' })
      .option('quiet', { alias: 'q', type: 'boolean', default: false })
      .option('json', { type: 'boolean', default: false, describe: 'Print the summary as JSON to stdout' }) as unknown as Argv<DemoArgs>,
  handler: async (a) => {
    const t0 = performance.now();
    const scale = scaleFromArgs({ ...(a.jobs !== undefined ? { jobs: a.jobs } : {}), cache: a.cache });
    const data = resolve(a.data);
    if (!existsSync(join(data, MANIFEST_FILE))) {
      if (!a.quiet) process.stderr.write(`rendering the demo dataset into ${shownPath(data)}/ ...\n`);
      await renderDemoDataset(data, { quiet: a.quiet });
    }
    const matchers = a.matcher?.length ? a.matcher : demoMatchers(a.all);
    // The depth-truth sets beside the main one (dense millimetre PNG, sparse lidar), where rendered.
    const depthSets = a.faults ? [] : DEPTH_DEMO_SETS.map((s) => join(data, s.folder)).filter((d) => existsSync(join(d, MANIFEST_FILE)));
    const plan = await planRun({
      datasets: [data, ...depthSets],
      ...(a.faults ? { conditions: [...DEMO_CONDITIONS] } : {}),
      matchers,
      matcherEntries: [],
      predictions: [],
      thresholds: [...DEFAULT_THRESHOLDS],
      quantiles: [...DEFAULT_QUANTILES],
      regions: { ...DEFAULT_REGION_PARAMS },
      out: resolve(a.out ?? (a.faults ? 'reports/demo-faults' : 'reports/demo')),
      name: a.faults ? 'demo-faults' : 'demo',
      baseDir: process.cwd(),
    });
    const outcome = await runSession({ ...plan, scale }, { quiet: a.quiet, json: a.json });
    if (!a.quiet && !a.json) {
      process.stdout.write(cacheLine(outcome));
      const secs = ((performance.now() - t0) / 1000).toFixed(1);
      const html = outcome.outputs.files.includes('index.html') ? ` Open ${shownPath(join(outcome.runDir, 'index.html'))} in a browser.` : '';
      process.stdout.write(`Demo done in ${secs} s: ${shownPath(outcome.runDir)}/.${html}\n`);
    }
  },
};
