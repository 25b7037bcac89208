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
 * Every failure is a MatcherFailure whose one-line message ends with the program's
 * last stderr lines; the runner records it and goes on.
 */
import { createHash } from 'node:crypto';
import { existsSync, mkdtempSync, readFileSync, rmSync, statSync } from 'node:fs';
import { mkdir, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { isAbsolute, join, resolve } from 'node:path';
import type { ChildProcess } from 'node:child_process';
import { AbortedError, MatcherFailure, UsageError, isParallaxError } from '../core/errors.js';
import { readDisparityFile } from '../io/files.js';
import type { MatchInput, MatchOutput, MatcherPlugin, ParamValue, ParamValues } from './contract.js';
import { formatParamValue } from './params.js';
import { StreamTail, groupAlive, killGroup, signalGroup, spawnGroup } from './process-group.js';
import {
  colorPngForProgram,
  grayPngForProgram,
  needsWrittenInputs,
  outputToPairFrame,
  programFrame,
  type ProgramFrame,
} from './program-images.js';
import { parseProgramMatcherDef, type ProgramMatcherDef, type ProgramMatcherDefInput } from './program-def.js';

export { programMatcherDefSchema, parseProgramMatcherDef } from './program-def.js';
export type { ProgramMatcherDef, ProgramMatcherDefInput } from './program-def.js';

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

const liveGroups = new Set<number>();
const liveTmpDirs = new Set<string>();
let exitHookInstalled = false;
/** Safety net: never leave program groups or temporary folders behind when this process ends. */
function installExitHook(): void {
  if (exitHookInstalled) return;
  exitHookInstalled = true;
  process.once('exit', () => {
    for (const g of liveGroups) signalGroup(g, 'SIGKILL');
    for (const d of liveTmpDirs) rmSync(d, { recursive: true, force: true });
  });
}
function trackGroup(pid: number | undefined): void {
  if (pid === undefined) return;
  liveGroups.add(pid);
  installExitHook();
}

function withTail(message: string, tail: StreamTail): MatcherFailure {
  const t = tail.oneLine();
  return new MatcherFailure(t ? `${message}; stderr: ${t}` : message, tail.lines().join('\n') || undefined);
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

const fileHashCache = new Map<string, string>();

/** sha256 of a file's bytes, cached by path, size and modification time. */
function fileHash(p: string, size: number, mtimeMs: number): string {
  const key = `${p}\0${size}\0${mtimeMs}`;
  let h = fileHashCache.get(key);
  if (!h) {
    h = createHash('sha256').update(readFileSync(p)).digest('hex');
    fileHashCache.set(key, h);
  }
  return h;
}

/** Files above this size (e.g. an interpreter binary) count by name only in the code hash. */
const HASHED_FILE_MAX_BYTES = 16 * 1024 * 1024;

/**
 * sha256 over the definition and the bytes of every command argument that names an
 * existing file of at most 16 MB (the script; small program binaries).
 */
export function programCodeHash(defIn: ProgramMatcherDef | ProgramMatcherDefInput, baseDir: string): string {
  const def = parseProgramMatcherDef(defIn);
  const cwd = resolve(baseDir, def.cwd ?? '.');
  const h = createHash('sha256');
  h.update(
    JSON.stringify({
      id: def.id,
      version: def.version ?? null,
      command: def.command,
      mode: def.mode,
      output: def.output,
      sign: def.disparitySign,
      scale: def.disparityScale,
      input: def.input,
      pad: def.pad ?? null,
      resize: def.resize ?? null,
      env: def.env ?? null,
    }),
  );
  for (const arg of def.command) {
    if (arg.includes('{')) continue;
    const p = isAbsolute(arg) ? arg : resolve(cwd, arg);
    try {
      const st = statSync(p);
      if (st.isFile() && st.size <= HASHED_FILE_MAX_BYTES) h.update(`\0file:${arg}\0${fileHash(p, st.size, st.mtimeMs)}`);
    } catch {
      // not a file: only the text counts
    }
  }
  return h.digest('hex');
}

/** Run one per-pair command to completion. */
async function runPerPair(
  argv: string[],
  cwd: string,
  env: NodeJS.ProcessEnv,
  timeoutMs: number,
  graceMs: number,
  signal: AbortSignal,
  label: string,
): Promise<void> {
  if (signal.aborted) throw new AbortedError();
  const tail = new StreamTail();
  const child = spawnGroup(argv, { cwd, env, stdin: 'ignore' });
  trackGroup(child.pid);
  child.stderr?.on('data', (c: Buffer) => tail.push(c));
  child.stdout?.on('data', () => {});
  try {
    await new Promise<void>((resolveP, rejectP) => {
      let settled = false;
      const finish = (err?: Error) => {
        if (settled) return;
        settled = true;
        clearTimeout(timer);
        signal.removeEventListener('abort', onAbort);
        if (err) rejectP(err);
        else resolveP();
      };
      // Once a timeout or an abort starts killing, the exit it causes is not the outcome.
      let killing = false;
      const killThen = (make: () => Error) => {
        if (killing || settled) return;
        killing = true;
        void killGroup(child.pid, graceMs).then(() => finish(make()));
      };
      const onAbort = () => killThen(() => new AbortedError());
      const timer = setTimeout(
        () => killThen(() => withTail(`${label}: timed out after ${timeoutMs} ms (process group killed)`, tail)),
        timeoutMs,
      );
      signal.addEventListener('abort', onAbort, { once: true });
      child.once('error', (e) => finish(withTail(`${label}: cannot start ${JSON.stringify(argv[0])}: ${e.message}`, tail)));
      child.once('exit', (code, sig) => {
        if (settled || killing) return;
        // Leftover children of the program die with it.
        signalGroup(child.pid, 'SIGKILL');
        // Let the pipes drain so the stderr tail is complete (bounded wait).
        const done = () => {
          if (code === 0) finish();
          else if (sig) finish(withTail(`${label}: program killed by ${sig}`, tail));
          else finish(withTail(`${label}: program exited with code ${code}`, tail));
        };
        const cap = setTimeout(done, 500);
        child.once('close', () => {
          clearTimeout(cap);
          done();
        });
      });
    });
  } finally {
    if (child.pid !== undefined) liveGroups.delete(child.pid);
  }
}

interface Reply {
  time_ms?: number;
}

interface Pending {
  id: string;
  resolve: (r: Reply) => void;
  reject: (e: Error) => void;
}

/** One long-lived program process; restarted on demand after a crash or timeout. */
class ProgramServer {
  private child: ChildProcess | undefined;
  private argvKey = '';
  private pending: Pending | undefined;
  private stdoutBuf = '';
  private readonly tail = new StreamTail();
  private chain: Promise<unknown> = Promise.resolve();

  constructor(
    private readonly label: string,
    private readonly cwd: string,
    private readonly env: NodeJS.ProcessEnv,
    private readonly graceMs: number,
  ) {}

  pid(): number | undefined {
    return this.child?.pid;
  }

  /** Requests run one at a time, in call order. */
  request(argv: string[], req: Record<string, unknown>, timeoutMs: number, signal: AbortSignal): Promise<Reply> {
    const run = this.chain.then(
      () => this.requestNow(argv, req, timeoutMs, signal),
      () => this.requestNow(argv, req, timeoutMs, signal),
    );
    this.chain = run.catch(() => undefined);
    return run;
  }

  private start(argv: string[]): void {
    this.tail.clear();
    this.stdoutBuf = '';
    const child = spawnGroup(argv, { cwd: this.cwd, env: this.env, stdin: 'pipe' });
    this.child = child;
    this.argvKey = JSON.stringify(argv);
    trackGroup(child.pid);
    child.stderr?.on('data', (c: Buffer) => {
      if (this.child === child) this.tail.push(c);
    });
    child.stdout?.on('data', (c: Buffer) => {
      if (this.child === child) this.onStdout(c.toString('utf8'));
    });
    child.stdin?.on('error', () => {
      // EPIPE when the program died; reported through 'exit'.
    });
    child.once('error', (e) => {
      if (this.child !== child) return;
      this.child = undefined;
      this.fail(withTail(`${this.label}: cannot start ${JSON.stringify(argv[0])}: ${e.message}`, this.tail));
    });
    child.once('exit', (code, sig) => {
      if (child.pid !== undefined) liveGroups.delete(child.pid);
      signalGroup(child.pid, 'SIGKILL');
      if (this.child !== child) return;
      this.child = undefined;
      const how = sig ? `killed by ${sig}` : `exited with code ${code}`;
      const p = this.pending;
      if (!p) return;
      // Give stderr a moment to arrive before reporting.
      setTimeout(() => {
        if (this.pending !== p) return;
        this.fail(withTail(`${this.label}: long-lived program ${how}; it restarts for the next pair`, this.tail));
      }, 50);
    });
  }

  private fail(e: Error): void {
    const p = this.pending;
    this.pending = undefined;
    p?.reject(e);
  }

  private onStdout(text: string): void {
    this.stdoutBuf += text;
    let nl: number;
    while ((nl = this.stdoutBuf.indexOf('\n')) >= 0) {
      const line = this.stdoutBuf.slice(0, nl).trim();
      this.stdoutBuf = this.stdoutBuf.slice(nl + 1);
      if (line !== '') this.onLine(line);
    }
    if (this.stdoutBuf.length > 1 << 20) this.protocolError('a reply line longer than 1 MB');
  }

  private protocolError(what: string): void {
    const shown = what.length > 120 ? `${what.slice(0, 117)}...` : what;
    const msg = `${this.label}: protocol error: ${shown}`;
    const pid = this.child?.pid;
    this.child = undefined;
    void killGroup(pid, this.graceMs);
    this.fail(withTail(msg, this.tail));
  }

  private onLine(line: string): void {
    if (!this.pending) {
      this.protocolError(`unexpected output ${JSON.stringify(line)}`);
      return;
    }
    let msg: unknown;
    try {
      msg = JSON.parse(line);
    } catch {
      this.protocolError(`not a JSON reply: ${JSON.stringify(line)}`);
      return;
    }
    if (typeof msg !== 'object' || msg === null || typeof (msg as { ok?: unknown }).ok !== 'boolean') {
      this.protocolError(`reply without a boolean "ok": ${JSON.stringify(line)}`);
      return;
    }
    const m = msg as { ok: boolean; id?: unknown; time_ms?: unknown; error?: unknown };
    if (m.id !== undefined && m.id !== this.pending.id) {
      this.protocolError(`reply for ${JSON.stringify(m.id)} while waiting for ${JSON.stringify(this.pending.id)}`);
      return;
    }
    const p = this.pending;
    this.pending = undefined;
    if (m.ok) {
      const t = typeof m.time_ms === 'number' && Number.isFinite(m.time_ms) && m.time_ms >= 0 ? m.time_ms : undefined;
      p.resolve({ time_ms: t });
    } else {
      const err = typeof m.error === 'string' ? m.error.replace(/\s+/g, ' ').trim() : 'no reason given';
      p.reject(withTail(`${this.label}: program reported an error: ${err}`, this.tail));
    }
  }

  private async requestNow(argv: string[], req: Record<string, unknown>, timeoutMs: number, signal: AbortSignal): Promise<Reply> {
    if (signal.aborted) throw new AbortedError();
    if (this.child && this.argvKey !== JSON.stringify(argv)) await this.stop();
    if (!this.child) this.start(argv);
    this.tail.clear();
    const child = this.child!;
    return new Promise<Reply>((resolveP, rejectP) => {
      const cleanup = () => {
        clearTimeout(timer);
        signal.removeEventListener('abort', onAbort);
      };
      const kill = (err: Error) => {
        if (this.pending !== mine) return;
        this.pending = undefined;
        const pid = child.pid;
        if (this.child === child) this.child = undefined;
        void killGroup(pid, this.graceMs).then(() => {
          cleanup();
          rejectP(err);
        });
      };
      const onAbort = () => kill(new AbortedError());
      const timer = setTimeout(
        () => kill(withTail(`${this.label}: timed out after ${timeoutMs} ms (process group killed; restarts for the next pair)`, this.tail)),
        timeoutMs,
      );
      signal.addEventListener('abort', onAbort, { once: true });
      const mine: Pending = {
        id: String(req.id),
        resolve: (r) => {
          cleanup();
          resolveP(r);
        },
        reject: (e) => {
          cleanup();
          rejectP(e);
        },
      };
      this.pending = mine;
      child.stdin?.write(`${JSON.stringify(req)}\n`);
    });
  }

  /** End the program: close stdin, wait for a clean exit, then kill the group. */
  async stop(): Promise<void> {
    const child = this.child;
    this.child = undefined;
    if (!child) return;
    const pid = child.pid;
    child.stdin?.end();
    const deadline = Date.now() + this.graceMs;
    while (child.exitCode === null && child.signalCode === null && Date.now() < deadline) {
      await new Promise((r) => setTimeout(r, 20));
    }
    if (groupAlive(pid)) await killGroup(pid, this.graceMs);
    if (pid !== undefined) liveGroups.delete(pid);
  }
}

function sanitizeForPath(s: string): string {
  return s.replace(/[^A-Za-z0-9_.-]/g, '_').slice(0, 60) || 'pair';
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
      liveTmpDirs.add(tmpDir);
      installExitHook();
    }
    return tmpDir;
  };

  async function prepareInputs(input: MatchInput, f: ProgramFrame, dir: string): Promise<{ left: string; right: string }> {
    if (!needsWrittenInputs(input, def.input, f)) return { left: input.source!.left, right: input.source!.right };
    const left = join(dir, 'left.png');
    const right = join(dir, 'right.png');
    const useColor = def.input === 'color' && input.leftColor && input.rightColor;
    await writeFile(left, useColor ? colorPngForProgram(input.leftColor!, f) : grayPngForProgram(input.left, f));
    await writeFile(right, useColor ? colorPngForProgram(input.rightColor!, f) : grayPngForProgram(input.right, f));
    return { left, right };
  }

  async function readOutput(out: string, f: ProgramFrame): Promise<Float32Array> {
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

  const plugin: ProgramMatcherPlugin = {
    id: def.id,
    summary: def.summary ?? `outside program (${def.mode}): ${def.command.join(' ')}`,
    version: def.version ?? '0',
    params: def.params,
    def,
    baseDir,
    serverPid: () => server?.pid(),

    async match(input: MatchInput, params: ParamValues, signal: AbortSignal): Promise<MatchOutput> {
      const full: Record<string, ParamValue> = {};
      for (const p of def.params) full[p.name] = params[p.name] ?? p.default;
      const pairId = input.source?.pairId ?? `pair${jobCounter}`;
      const dir = join(ensureTmp(), `${String(jobCounter++).padStart(6, '0')}-${sanitizeForPath(pairId)}`);
      await mkdir(dir, { recursive: true });
      try {
        const f = programFrame(input.width, input.height, input.minDisparity, input.maxDisparity, def.resize, def.pad);
        const paths = await prepareInputs(input, f, dir);
        const out = join(dir, `out.${outExt}`);
        const minD = def.disparitySign === 1 ? f.minDisparity : -f.maxDisparity;
        const maxD = def.disparitySign === 1 ? f.maxDisparity : -f.minDisparity;
        let selfTimeMs: number | undefined;
        if (server) {
          const argv = def.command.map((a) => expandArg(a, {}, full));
          const req = { id: pairId, left: paths.left, right: paths.right, out, minDisparity: minD, maxDisparity: maxD, params: full };
          const reply = await server.request(argv, req, def.timeoutMs, signal);
          selfTimeMs = reply.time_ms;
        } else {
          const vars = {
            left: paths.left,
            right: paths.right,
            out,
            minDisparity: String(minD),
            maxDisparity: String(maxD),
            pairId,
          };
          const argv = def.command.map((a) => expandArg(a, vars, full));
          await runPerPair(argv, cwd, env, def.timeoutMs, graceMs, signal, def.id);
        }
        const disparity = await readOutput(out, f);
        return selfTimeMs === undefined ? { disparity } : { disparity, selfTimeMs };
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
        liveTmpDirs.delete(tmpDir);
        tmpDir = undefined;
      }
    },
  };
  return plugin;
}
