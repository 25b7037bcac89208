/**
 * A long-lived program: started once, it answers JSON-lines requests on stdin with
 * JSON-lines replies on stdout (the protocol is in index.ts). One request at
 * a time, in call order. A crash, a timeout or a protocol error kills the process group;
 * the next request starts a fresh process. At the end of the run its stdin is closed:
 * a long-lived program must exit when its standard input ends.
 */
import type { ChildProcess } from 'node:child_process';
import { createInterface } from 'node:readline';
import { z } from 'zod';
import { AbortedError } from '../../core/errors.js';
import { StreamTail, groupAlive, killGroup, signalGroup, spawnGroup } from '../process-group.js';
import { underDeadline } from './deadline.js';
import { trackGroup, untrackGroup, withTail } from './lifecycle.js';

/** A reply line: `ok` is required; `id`, when given, must be the request's; `time_ms` counts when it is a finite number >= 0. */
const replySchema = z.object({
  ok: z.boolean(),
  id: z.unknown().optional(),
  time_ms: z.unknown().optional(),
  error: z.unknown().optional(),
});

export interface Reply {
  time_ms?: number;
}

interface Pending {
  id: string;
  resolve: (r: Reply) => void;
  reject: (e: Error) => void;
}

/** The longest reply line taken (bytes); a longer one is a protocol error. */
const MAX_LINE = 1 << 20;

export class ProgramServer {
  private child: ChildProcess | undefined;
  private argvKey = '';
  private pending: Pending | undefined;
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
    const child = spawnGroup(argv, { cwd: this.cwd, env: this.env, stdin: 'pipe' });
    this.child = child;
    this.argvKey = JSON.stringify(argv);
    trackGroup(child.pid);
    child.stderr?.on('data', (c: Buffer) => {
      if (this.child === child) this.tail.push(c);
    });
    if (child.stdout) {
      let sinceNewline = 0;
      child.stdout.on('data', (c: Buffer) => {
        const nl = c.lastIndexOf(0x0a);
        sinceNewline = nl < 0 ? sinceNewline + c.length : c.length - nl - 1;
        if (sinceNewline > MAX_LINE && this.child === child) this.protocolError('a reply line longer than 1 MiB');
      });
      createInterface({ input: child.stdout, crlfDelay: Infinity }).on('line', (line) => {
        if (this.child === child && line.trim() !== '') this.onLine(line.trim());
      });
    }
    child.stdin?.on('error', () => {
      // EPIPE when the program died; reported through 'exit'.
    });
    child.once('error', (e) => {
      if (this.child !== child) return;
      this.child = undefined;
      this.fail(withTail(`${this.label}: cannot start ${JSON.stringify(argv[0])}: ${e.message}`, this.tail));
    });
    child.once('exit', (code, sig) => {
      untrackGroup(child.pid);
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
    let json: unknown;
    try {
      json = JSON.parse(line);
    } catch {
      this.protocolError(`not a JSON reply: ${JSON.stringify(line)}`);
      return;
    }
    const r = replySchema.safeParse(json);
    if (!r.success) {
      this.protocolError(`reply without a boolean "ok": ${JSON.stringify(line)}`);
      return;
    }
    const m = r.data;
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
    let mine: Pending | undefined;
    return underDeadline<Reply>(
      {
        timeoutMs,
        signal,
        graceMs: this.graceMs,
        pid: () => child.pid,
        timeoutError: () => withTail(`${this.label}: timed out after ${timeoutMs} ms (process group killed; restarts for the next pair)`, this.tail),
        onKill: () => {
          if (this.pending === mine) this.pending = undefined;
          if (this.child === child) this.child = undefined;
        },
      },
      (settle) => {
        mine = { id: String(req.id), resolve: (r) => settle(undefined, r), reject: (e) => settle(e) };
        this.pending = mine;
        child.stdin?.write(`${JSON.stringify(req)}\n`);
      },
    );
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
    untrackGroup(pid);
  }
}
