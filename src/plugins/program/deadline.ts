/**
 * The one deadline-and-kill rule of program matchers: a piece of work on a process group
 * ends when it settles, when its time limit passes, or when the run is aborted; in the
 * last two cases the process group is killed first (SIGTERM, then SIGKILL after the
 * grace) and the work fails with the timeout's error or an AbortedError. Once a kill has
 * started, what the dying process does is not the outcome.
 */
import { AbortedError } from '../../core/errors.js';
import { killGroup } from '../process-group.js';

export interface DeadlineOptions {
  timeoutMs: number;
  signal: AbortSignal;
  graceMs: number;
  /** The group to kill (read when the kill starts). */
  pid: () => number | undefined;
  /** The error of a passed time limit. */
  timeoutError: () => Error;
  /** Called when a kill starts (before the group is signalled). */
  onKill?: () => void;
}

export interface Settle<T> {
  (err: Error): void;
  (err: undefined, value: T): void;
}

/** Run `start` under the deadline; `start` calls `settle` once with the outcome. `killing()` says a kill has started. */
export function underDeadline<T>(o: DeadlineOptions, start: (settle: Settle<T>, killing: () => boolean) => void): Promise<T> {
  if (o.signal.aborted) return Promise.reject(new AbortedError());
  return new Promise<T>((resolveP, rejectP) => {
    let settled = false;
    let killing = false;
    const settle = ((err: Error | undefined, value?: T) => {
      if (settled) return;
      settled = true;
      clearTimeout(timer);
      o.signal.removeEventListener('abort', onAbort);
      if (err) rejectP(err);
      else resolveP(value as T);
    }) as Settle<T>;
    const killThen = (make: () => Error): void => {
      if (killing || settled) return;
      killing = true;
      o.onKill?.();
      void killGroup(o.pid(), o.graceMs).then(() => settle(make()));
    };
    const onAbort = (): void => killThen(() => new AbortedError());
    const timer = setTimeout(() => killThen(o.timeoutError), o.timeoutMs);
    o.signal.addEventListener('abort', onAbort, { once: true });
    start(settle, () => killing);
  });
}
