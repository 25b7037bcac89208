/**
 * `npm run bench -- report`: time writeHtmlReport on a synthetic run of 200 pairs x 5
 * configurations at 640x480 (images, truth and previews written to a temp folder) and
 * report the seconds and the HTML size. Targets: < 10 s, < 25 MB.
 *
 * Three renders of the same run: with the per-pair thumbnails stored in the run folder
 * (left image, region map); without them (the report decodes every left image and
 * rebuilds every region map from the dataset, then stores the thumbnails); and once more
 * (reading what the second render stored).
 */
import { mkdtemp, rm, stat } from 'node:fs/promises';
import { cpus, loadavg, tmpdir } from 'node:os';
import { join } from 'node:path';
import { writeHtmlReport } from '../src/report/html.js';
import { buildSyntheticRun } from '../test/report/synthetic-run.js';

async function timed(runDir: string): Promise<{ secs: number; cpu: number; mb: number }> {
  const t1 = performance.now();
  const c1 = process.cpuUsage();
  const path = await writeHtmlReport(runDir);
  const secs = (performance.now() - t1) / 1000;
  const cpu = process.cpuUsage(c1);
  return { secs, cpu: (cpu.user + cpu.system) / 1e6, mb: (await stat(path)).size / 2 ** 20 };
}

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
    const load0 = loadavg()[0]!;
    const stored = await timed(runDir);
    await rm(join(runDir, 'previews', '@pairs'), { recursive: true, force: true });
    const fromDataset = await timed(runDir);
    const again = await timed(runDir);
    const load1 = loadavg()[0]!;
    const row = (what: string, r: { secs: number; cpu: number; mb: number }): string =>
      `| ${what} | ${r.secs.toFixed(2)} s | ${r.cpu.toFixed(2)} s | ${r.mb.toFixed(2)} MB |\n`;
    process.stdout.write(`${pairs} pairs x 5 configurations, 640x480; targets: < 10 s wall, < 25 MB.\n\n`);
    process.stdout.write(`| writeHtmlReport | wall | CPU (this process) | index.html |\n|---|--:|--:|--:|\n`);
    process.stdout.write(row('pair thumbnails stored in the run folder', stored));
    process.stdout.write(row('no stored pair thumbnails (dataset images decoded, regions rebuilt, thumbnails stored)', fromDataset));
    process.stdout.write(row('again, reading the thumbnails stored by the previous render', again));
    process.stdout.write(
      `\n(synthetic run built in ${tBuild.toFixed(1)} s, not counted; intervals with the default resamples; 1-minute load average ${load0.toFixed(1)} before, ${load1.toFixed(1)} after, on ${cpus().length} cores)\n`,
    );
  } finally {
    await rm(root, { recursive: true, force: true });
  }
}
