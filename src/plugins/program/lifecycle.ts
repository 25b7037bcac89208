/**
 * What program matchers leave running: live process groups and temporary folders. An
 * exit hook kills the groups and removes the folders when this process ends, so a
 * program never outlives the run (SIGKILL of the harness aside).
 */
import { rmSync } from 'node:fs';
import { MatcherFailure } from '../../core/errors.js';
import { signalGroup, type StreamTail } from '../process-group.js';

const liveGroups = new Set<number>();
const liveTmpDirs = new Set<string>();
let exitHookInstalled = false;

function installExitHook(): void {
  if (exitHookInstalled) return;
  exitHookInstalled = true;
  process.once('exit', () => {
    for (const g of liveGroups) signalGroup(g, 'SIGKILL');
    for (const d of liveTmpDirs) rmSync(d, { recursive: true, force: true });
  });
}

export function trackGroup(pid: number | undefined): void {
  if (pid === undefined) return;
  liveGroups.add(pid);
  installExitHook();
}

export function untrackGroup(pid: number | undefined): void {
  if (pid !== undefined) liveGroups.delete(pid);
}

export function trackTmpDir(dir: string): void {
  liveTmpDirs.add(dir);
  installExitHook();
}

export function untrackTmpDir(dir: string): void {
  liveTmpDirs.delete(dir);
}

/** A MatcherFailure whose one-line message ends with the program's last stderr lines. */
export function withTail(message: string, tail: StreamTail): MatcherFailure {
  const t = tail.oneLine();
  return new MatcherFailure(t ? `${message}; stderr: ${t}` : message, tail.lines().join('\n') || undefined);
}
