/** A per-pair program: one process (own group, no shell) per pair, run to completion. */
import { AbortedError } from '../../core/errors.js';
import { StreamTail, signalGroup, spawnGroup } from '../process-group.js';
import { underDeadline } from './deadline.js';
import { trackGroup, untrackGroup, withTail } from './lifecycle.js';

export interface PerPairRun {
  argv: string[];
  cwd: string;
  env: NodeJS.ProcessEnv;
  timeoutMs: number;
  graceMs: number;
  signal: AbortSignal;
  /** Matcher id, for messages. */
  label: string;
}

export async function runPerPair(r: PerPairRun): Promise<void> {
  if (r.signal.aborted) throw new AbortedError();
  const tail = new StreamTail();
  const child = spawnGroup(r.argv, { cwd: r.cwd, env: r.env, stdin: 'ignore' });
  trackGroup(child.pid);
  child.stderr?.on('data', (c: Buffer) => tail.push(c));
  child.stdout?.on('data', () => {});
  try {
    await underDeadline<void>(
      {
        timeoutMs: r.timeoutMs,
        signal: r.signal,
        graceMs: r.graceMs,
        pid: () => child.pid,
        timeoutError: () => withTail(`${r.label}: timed out after ${r.timeoutMs} ms (process group killed)`, tail),
      },
      (settle, killing) => {
        child.once('error', (e) => settle(withTail(`${r.label}: cannot start ${JSON.stringify(r.argv[0])}: ${e.message}`, tail)));
        child.once('exit', (code, sig) => {
          if (killing()) return;
          // Leftover children of the program die with it.
          signalGroup(child.pid, 'SIGKILL');
          // Let the pipes drain so the stderr tail is complete (bounded wait).
          const done = (): void => {
            if (code === 0) settle(undefined);
            else if (sig) settle(withTail(`${r.label}: program killed by ${sig}`, tail));
            else settle(withTail(`${r.label}: program exited with code ${code}`, tail));
          };
          const cap = setTimeout(done, 500);
          child.once('close', () => {
            clearTimeout(cap);
            done();
          });
        });
      },
    );
  } finally {
    untrackGroup(child.pid);
  }
}
