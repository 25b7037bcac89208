/**
 * Child processes in their own process group: spawn without a shell, keep the last
 * stderr lines, kill the whole group (SIGTERM, then SIGKILL after a grace period).
 */
import { spawn, type ChildProcess } from 'node:child_process';

/** Keeps the last few lines of a stream (bounded memory). */
export class StreamTail {
  private text = '';
  constructor(
    private readonly maxLines = 5,
    private readonly maxBytes = 8192,
  ) {}
  push(chunk: Buffer | string): void {
    this.text += typeof chunk === 'string' ? chunk : chunk.toString('utf8');
    if (this.text.length > this.maxBytes * 2) this.text = this.text.slice(-this.maxBytes);
  }
  /** Last non-empty lines, trimmed, each cut to 200 characters. */
  lines(): string[] {
    return this.text
      .split(/\r?\n/)
      .map((l) => l.trim())
      .filter((l) => l !== '')
      .slice(-this.maxLines)
      .map((l) => (l.length > 200 ? `${l.slice(0, 197)}...` : l));
  }
  /** The tail as one line (`a | b | c`), or '' when empty. */
  oneLine(): string {
    return this.lines().join(' | ');
  }
  clear(): void {
    this.text = '';
  }
}

export interface GroupSpawnOptions {
  cwd: string;
  env: NodeJS.ProcessEnv;
  stdin: 'ignore' | 'pipe';
}

/** Spawn `argv` in a new process group (detached, no shell), stdout and stderr piped. */
export function spawnGroup(argv: readonly string[], opts: GroupSpawnOptions): ChildProcess {
  return spawn(argv[0], argv.slice(1), {
    cwd: opts.cwd,
    env: opts.env,
    detached: true,
    shell: false,
    stdio: [opts.stdin, 'pipe', 'pipe'],
    windowsHide: true,
  });
}

/** Send a signal to the process group led by `pid`; false when it is already gone. */
export function signalGroup(pid: number | undefined, sig: NodeJS.Signals): boolean {
  if (pid === undefined) return false;
  try {
    process.kill(-pid, sig);
    return true;
  } catch {
    return false;
  }
}

/** True while any process of the group led by `pid` exists. */
export function groupAlive(pid: number | undefined): boolean {
  if (pid === undefined) return false;
  try {
    process.kill(-pid, 0);
    return true;
  } catch (e) {
    return (e as NodeJS.ErrnoException).code === 'EPERM';
  }
}

/**
 * Kill the whole group: SIGTERM, then SIGKILL after `graceMs` if anything is left.
 * Resolves once the group is gone (or after a further second at most).
 */
export async function killGroup(pid: number | undefined, graceMs: number): Promise<void> {
  if (pid === undefined || !signalGroup(pid, 'SIGTERM')) return;
  const deadline = Date.now() + graceMs;
  while (groupAlive(pid) && Date.now() < deadline) await sleep(20);
  if (!groupAlive(pid)) return;
  signalGroup(pid, 'SIGKILL');
  const hard = Date.now() + 1000;
  while (groupAlive(pid) && Date.now() < hard) await sleep(10);
}

function sleep(ms: number): Promise<void> {
  return new Promise((r) => setTimeout(r, ms));
}
