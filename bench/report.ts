/**
 * `npm run bench -- report`: time writeHtmlReport on a synthetic run of 200 pairs x 5
 * configurations at 640x480 (images, truth and previews written to a temp folder) and
 * report the seconds and the HTML size. Targets: < 10 s, < 25 MB.
 *
 * Three renders of the same run: with the per-pair thumbnails stored in the run folder
 * (left image, region map); without them (the report decodes every left image and
 * rebuilds every region map from the dataset, then stores the thumbnails); and once more
 * (reading what the second render stored).
 *
 * Then the command itself, `parallax report <run>` (dist/, as users run it), in a child
 * process, with its peak resident set size (the kernel's ru_maxrss, read by the child on
 * exit): once per thumbnail case above.
 */
import { spawn } from 'node:child_process';
import { mkdtemp, rm, stat } from 'node:fs/promises';
import { cpus, loadavg, tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { writeHtmlReport } from '../src/report/html/index.js';
import { buildSyntheticRun } from './synthetic-run.js';

async function timed(runDir: string): Promise<{ secs: number; cpu: number; mb: number }> {
  const t1 = performance.now();
  const c1 = process.cpuUsage();
  const path = await writeHtmlReport(runDir);
  const secs = (performance.now() - t1) / 1000;
  const cpu = process.cpuUsage(c1);
  return { secs, cpu: (cpu.user + cpu.system) / 1e6, mb: (await stat(path)).size / 2 ** 20 };
}

/** Preloaded into the child: print its peak RSS (KiB, ru_maxrss) to stderr on exit. */
const MAXRSS_HOOK = `data:text/javascript,process.on('exit',()=>process.stderr.write('PLX_MAXRSS '+process.resourceUsage().maxRSS+'\\n'))`;

/** Run `parallax report <runDir>` from dist/ in a child; wall seconds and peak RSS in MiB. */
async function cliReport(runDir: string): Promise<{ secs: number; rssMb: number }> {
  // dist/bench/report.js -> repository root
  const root = join(dirname(fileURLToPath(import.meta.url)), '..', '..');
  const t0 = performance.now();
  const { code, stderr } = await new Promise<{ code: number | null; stderr: string }>((res, rej) => {
    const child = spawn(process.execPath, ['--import', MAXRSS_HOOK, join(root, 'bin', 'parallax.js'), 'report', runDir], { stdio: ['ignore', 'ignore', 'pipe'] });
    let err = '';
    child.stderr.setEncoding('utf8');
    child.stderr.on('data', (d: string) => (err += d));
    child.on('error', rej);
    child.on('close', (c) => res({ code: c, stderr: err }));
  });
  const secs = (performance.now() - t0) / 1000;
  const m = /PLX_MAXRSS (\d+)/.exec(stderr);
  if (code !== 0 || !m) throw new Error(`parallax report exited ${code}: ${stderr.trim()}`);
  return { secs, rssMb: Number(m[1]) / 1024 };
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
    const load0 = loadavg()[0];
    const stored = await timed(runDir);
    await rm(join(runDir, 'previews', '@pairs'), { recursive: true, force: true });
    const fromDataset = await timed(runDir);
    const again = await timed(runDir);
    // The command in a child process: peak RSS with the thumbnails stored, then without.
    const cliStored = await cliReport(runDir);
    await rm(join(runDir, 'previews', '@pairs'), { recursive: true, force: true });
    const cliFromDataset = await cliReport(runDir);
    const load1 = loadavg()[0];
    const row = (what: string, r: { secs: number; cpu: number; mb: number }): string =>
      `| ${what} | ${r.secs.toFixed(2)} s | ${r.cpu.toFixed(2)} s | ${r.mb.toFixed(2)} MB |\n`;
    process.stdout.write(`${pairs} pairs x 5 configurations, 640x480; targets: < 10 s wall, < 25 MB.\n\n`);
    process.stdout.write(`| writeHtmlReport | wall | CPU (this process) | index.html |\n|---|--:|--:|--:|\n`);
    process.stdout.write(row('pair thumbnails stored in the run folder', stored));
    process.stdout.write(row('no stored pair thumbnails (dataset images decoded, regions rebuilt, thumbnails stored)', fromDataset));
    process.stdout.write(row('again, reading the thumbnails stored by the previous render', again));
    const crow = (what: string, r: { secs: number; rssMb: number }): string => `| ${what} | ${r.secs.toFixed(2)} s | ${r.rssMb.toFixed(0)} MiB |\n`;
    process.stdout.write(`\n| \`parallax report <run>\` (child process) | wall (incl. start-up) | peak RSS |\n|---|--:|--:|\n`);
    process.stdout.write(crow('pair thumbnails stored in the run folder', cliStored));
    process.stdout.write(crow('no stored pair thumbnails', cliFromDataset));
    process.stdout.write(
      `\n(synthetic run built in ${tBuild.toFixed(1)} s, not counted; intervals with the default resamples; 1-minute load average ${load0.toFixed(1)} before, ${load1.toFixed(1)} after, on ${cpus().length} cores)\n`,
    );
  } finally {
    await rm(root, { recursive: true, force: true });
  }
}
