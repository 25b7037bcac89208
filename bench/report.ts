/**
 * `npm run bench -- report`: time writeHtmlReport on a synthetic run of 200 pairs x 5
 * configurations at 640x480 (images, truth and previews written to a temp folder) and
 * report the seconds and the HTML size. Targets: < 10 s, < 25 MB.
 */
import { mkdtemp, rm, stat } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { writeHtmlReport } from '../src/report/html.js';
import { buildSyntheticRun } from '../test/report/synthetic-run.js';

export default async function (): Promise<void> {
  const pairs = Number(process.env.PARALLAX_BENCH_REPORT_PAIRS ?? 200);
  const root = await mkdtemp(join(tmpdir(), 'plx-bench-report-'));
  try {
    const t0 = performance.now();
    const { runDir } = await buildSyntheticRun({
      root,
      pairs,
      width: 640,
      height: 480,
      configs: [
        { label: 'block:window=9', noise: 0.9, holes: 0.08, timeMs: 40 },
        { label: 'block:window=15', noise: 0.7, holes: 0.05, timeMs: 55 },
        { label: 'census:window=7', noise: 0.6, holes: 0.05, timeMs: 90 },
        { label: 'sgm:p2=96', noise: 0.35, holes: 0.02, timeMs: 400 },
        { label: 'sgm:p2=160', noise: 0.4, holes: 0.01, timeMs: 410, failEvery: 50 },
      ],
    });
    const tBuild = (performance.now() - t0) / 1000;
    const t1 = performance.now();
    const c1 = process.cpuUsage();
    const path = await writeHtmlReport(runDir);
    const secs = (performance.now() - t1) / 1000;
    const cpu = process.cpuUsage(c1);
    const cpuSecs = (cpu.user + cpu.system) / 1e6;
    const mb = (await stat(path)).size / 2 ** 20;
    process.stdout.write(`| what | value | target |\n|---|--:|--:|\n`);
    process.stdout.write(`| pairs x configurations | ${pairs} x 5 (640x480) | |\n`);
    process.stdout.write(`| writeHtmlReport wall time | ${secs.toFixed(2)} s | < 10 s |\n`);
    process.stdout.write(`| writeHtmlReport CPU time (this process) | ${cpuSecs.toFixed(2)} s | |\n`);
    process.stdout.write(`| index.html size | ${mb.toFixed(2)} MB | < 25 MB |\n`);
    process.stdout.write(`\n(synthetic run built in ${tBuild.toFixed(1)} s, not counted; intervals with the default resamples)\n`);
  } finally {
    await rm(root, { recursive: true, force: true });
  }
}
