/**
 * Outside programs as matchers, in any language.
 *
 * per-pair:    the command is run once per pair (no shell, own process group) and
 *              writes its disparity file to {out}.
 * long-lived:  the program is started once and answers JSON-lines requests on stdin
 *              with JSON-lines replies on stdout:
 *                request  {"id": pairId, "left": path, "right": path, "out": path,
 *                          "minDisparity": n, "maxDisparity": n, "params": {...}}
 *                reply    {"ok": true, "time_ms": number?} | {"ok": false, "error": "..."}
 *              Anything else on stdout is a protocol error. A crash or a timeout
 *              kills the process group; the next pair starts a fresh process.
 *
 * Files: per-pair.ts runs one process per pair, server.ts the long-lived process,
 * deadline.ts the time limit and kill both use, lifecycle.ts what must not outlive
 * the run, code-hash.ts the hash that keys the result cache.
 *
 * Every failure is a MatcherFailure whose one-line message ends with the program's
 * last stderr lines; the runner records it and goes on.
 */
import { existsSync, mkdtempSync, rmSync, statSync } from 'node:fs';
import { mkdir, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { MatcherFailure, UsageError, isParallaxError } from '../../core/errors.js';
import { readDisparityFile } from '../../io/files.js';
import { withDefaults, type MatchInput, type MatchOutput, type MatcherPlugin, type ParamValues } from '../../core/matcher.js';
import { formatParamValue } from '../params.js';
import {
  colorPngForProgram,
  confidenceToPairFrame,
  grayPngForProgram,
  needsWrittenInputs,
  outputToPairFrame,
  programFrame,
  type ProgramFrame,
} from '../program-images.js';
import { parseProgramMatcherDef, type ProgramMatcherDef, type ProgramMatcherDefInput } from '../program-def.js';
import { trackTmpDir, untrackTmpDir } from './lifecycle.js';
import { runPerPair } from './per-pair.js';
import { ProgramServer } from './server.js';

export { programMatcherDefSchema, parseProgramMatcherDef } from '../program-def.js';
export type { ProgramMatcherDef, ProgramMatcherDefInput } from '../program-def.js';
export { programCodeHash } from './code-hash.js';

export interface ProgramMatcherOptions {
  /** Grace between SIGTERM and SIGKILL when killing a program's process group (ms). */
  killGraceMs?: number;
  /** Folder for temporary images and outputs (default os.tmpdir()). */
  tmpRoot?: string;
}

/** A program matcher also exposes its validated definition and the live process id (long-lived). */
export interface ProgramMatcherPlugin extends MatcherPlugin {
  readonly def: ProgramMatcherDef;
  readonly baseDir: string;
  /** Pid of the long-lived process while one runs (for tests and diagnostics). */
  serverPid(): number | undefined;
}

/** Replace {name} and {param:NAME} placeholders in one argument. */
function expandArg(arg: string, vars: Readonly<Record<string, string>>, params: ParamValues): string {
  return arg.replace(/\{([^{}]*)\}/g, (whole, name: string) => {
    if (name.startsWith('param:')) {
      const v = params[name.slice(6)];
      return v === undefined ? whole : formatParamValue(v);
    }
    return vars[name] ?? whole;
  });
}

function sanitizeForPath(s: string): string {
  return s.replace(/[^A-Za-z0-9_.-]/g, '_').slice(0, 60) || 'pair';
}

/** The paths the program reads: the dataset's own files when it can take them as they are, else images written for it. */
async function prepareInputs(def: ProgramMatcherDef, input: MatchInput, f: ProgramFrame, dir: string): Promise<{ left: string; right: string }> {
  if (!needsWrittenInputs(input, def.input, f)) return { left: input.source!.left, right: input.source!.right };
  const left = join(dir, 'left.png');
  const right = join(dir, 'right.png');
  const useColor = def.input === 'color' && input.leftColor && input.rightColor;
  await writeFile(left, useColor ? colorPngForProgram(input.leftColor!, f) : grayPngForProgram(input.left, f));
  await writeFile(right, useColor ? colorPngForProgram(input.rightColor!, f) : grayPngForProgram(input.right, f));
  return { left, right };
}

/** Read and check the program's output, back in the pair's frame. */
async function readOutput(def: ProgramMatcherDef, out: string, f: ProgramFrame): Promise<Float32Array> {
  if (!existsSync(out)) throw new MatcherFailure(`${def.id}: the program wrote no output file (${out})`);
  let img;
  try {
    img = await readDisparityFile(out, {
      pngScale: def.output.scale,
      pngInvalid: def.output.format === 'png' ? def.output.invalid : undefined,
      maxPixels: Math.max(f.progW * f.progH * 4, 1),
    });
  } catch (e) {
    const why = e instanceof Error ? e.message : String(e);
    throw new MatcherFailure(`${def.id}: unreadable output: ${why.replace(/\s+/g, ' ')}`);
  }
  if (img.width !== f.progW || img.height !== f.progH) {
    throw new MatcherFailure(`${def.id}: output is ${img.width}x${img.height}, expected ${f.progW}x${f.progH}`);
  }
  const sentinel = def.output.format === 'png' ? undefined : def.output.invalid;
  return outputToPairFrame(img.data, f, def.disparitySign, def.disparityScale, sentinel);
}

/** The confidence map a program wrote at `file` (optional: none when it wrote nothing), in the pair's frame. */
async function readConfidence(def: ProgramMatcherDef, file: string, f: ProgramFrame): Promise<Float32Array | null> {
  if (!existsSync(file)) return null;
  let img;
  try {
    img = await readDisparityFile(file, { maxPixels: Math.max(f.progW * f.progH * 4, 1) });
  } catch (e) {
    throw new MatcherFailure(`${def.id}: unreadable confidence map: ${(e instanceof Error ? e.message : String(e)).replace(/\s+/g, ' ')}`);
  }
  if (img.width !== f.progW || img.height !== f.progH) {
    throw new MatcherFailure(`${def.id}: confidence map is ${img.width}x${img.height}, expected ${f.progW}x${f.progH}`);
  }
  return confidenceToPairFrame(img.data, f);
}

/**
 * A MatcherPlugin that runs an outside program. `baseDir` is the experiment file's
 * folder: the default working directory and the base of a relative `cwd`.
 */
export function programMatcher(
  defIn: ProgramMatcherDef | ProgramMatcherDefInput,
  baseDir: string,
  opts: ProgramMatcherOptions = {},
): ProgramMatcherPlugin {
  const def = parseProgramMatcherDef(defIn);
  const graceMs = opts.killGraceMs ?? 2000;
  const cwd = resolve(baseDir, def.cwd ?? '.');
  if (!existsSync(cwd) || !statSync(cwd).isDirectory()) {
    throw new UsageError(`${def.id}.cwd`, `working folder ${cwd} does not exist`);
  }
  const env: NodeJS.ProcessEnv = { ...process.env, ...(def.env ?? {}) };
  const server = def.mode === 'long-lived' ? new ProgramServer(def.id, cwd, env, graceMs) : undefined;
  let tmpDir: string | undefined;
  let jobCounter = 0;
  const outExt = def.output.format;

  const ensureTmp = (): string => {
    if (!tmpDir) {
      tmpDir = mkdtempSync(join(opts.tmpRoot ?? tmpdir(), `parallax-${sanitizeForPath(def.id)}-`));
      trackTmpDir(tmpDir);
    }
    return tmpDir;
  };

  /** Run the program on prepared inputs (one request to the long-lived process, or one process); its self-reported time when it gave one. */
  async function runProgram(r: { pairId: string; left: string; right: string; out: string; conf: string; f: ProgramFrame; params: ParamValues; signal: AbortSignal }): Promise<number | undefined> {
    const minD = def.disparitySign === 1 ? r.f.minDisparity : -r.f.maxDisparity;
    const maxD = def.disparitySign === 1 ? r.f.maxDisparity : -r.f.minDisparity;
    if (server) {
      const argv = def.command.map((a) => expandArg(a, {}, r.params));
      const req = { id: r.pairId, left: r.left, right: r.right, out: r.out, conf: r.conf, minDisparity: minD, maxDisparity: maxD, params: r.params };
      return (await server.request(argv, req, def.timeoutMs, r.signal)).time_ms;
    }
    const vars = { left: r.left, right: r.right, out: r.out, conf: r.conf, minDisparity: String(minD), maxDisparity: String(maxD), pairId: r.pairId };
    const argv = def.command.map((a) => expandArg(a, vars, r.params));
    await runPerPair({ argv, cwd, env, timeoutMs: def.timeoutMs, graceMs, signal: r.signal, label: def.id });
    return undefined;
  }

  const plugin: ProgramMatcherPlugin = {
    id: def.id,
    summary: def.summary ?? `outside program (${def.mode}): ${def.command.join(' ')}`,
    version: def.version ?? '0',
    params: def.params,
    ...(def.relations ? { relations: def.relations } : {}),
    def,
    baseDir,
    serverPid: () => server?.pid(),

    async match(input: MatchInput, params: ParamValues, signal: AbortSignal): Promise<MatchOutput> {
      const full = withDefaults(def.params, params);
      const pairId = input.source?.pairId ?? `pair${jobCounter}`;
      const dir = join(ensureTmp(), `${String(jobCounter++).padStart(6, '0')}-${sanitizeForPath(pairId)}`);
      await mkdir(dir, { recursive: true });
      try {
        const f = programFrame(input.width, input.height, input.minDisparity, input.maxDisparity, def.resize, def.pad);
        const paths = await prepareInputs(def, input, f, dir);
        const out = join(dir, `out.${outExt}`);
        const conf = join(dir, 'conf.pfm');
        const selfTimeMs = await runProgram({ pairId, ...paths, out, conf, f, params: full, signal });
        const disparity = await readOutput(def, out, f);
        const confidence = await readConfidence(def, conf, f);
        return { disparity, ...(confidence ? { confidence } : {}), ...(selfTimeMs === undefined ? {} : { selfTimeMs }) };
      } catch (e) {
        if (isParallaxError(e)) throw e;
        throw new MatcherFailure(`${def.id}: ${e instanceof Error ? e.message : String(e)}`.replace(/\s+/g, ' '));
      } finally {
        await rm(dir, { recursive: true, force: true }).catch(() => undefined);
      }
    },

    async dispose(): Promise<void> {
      await server?.stop();
      if (tmpDir) {
        rmSync(tmpDir, { recursive: true, force: true });
        untrackTmpDir(tmpDir);
        tmpDir = undefined;
      }
    },
  };
  return plugin;
}
