/**
 * Stopping a run from outside: SIGTERM (and SIGINT when nobody else listens for it,
 * e.g. when the runner is used without the CLI session, which handles Ctrl-C itself)
 * aborts the returned signal. The runner then cancels in-flight jobs, keeps the
 * journal whole, writes partial tables and says how to resume.
 */
export interface InterruptWatch {
  readonly signal: AbortSignal;
  /** Which signal arrived, if any. */
  received(): NodeJS.Signals | undefined;
  dispose(): void;
}

/** Follow `outer` and the process signals; dispose() removes the listeners. */
export function watchInterrupts(outer: AbortSignal | undefined, signals: readonly NodeJS.Signals[] = ['SIGTERM', 'SIGINT']): InterruptWatch {
  const ac = new AbortController();
  let got: NodeJS.Signals | undefined;
  const onOuter = (): void => ac.abort();
  if (outer?.aborted) ac.abort();
  outer?.addEventListener('abort', onOuter, { once: true });
  const handlers: [NodeJS.Signals, () => void][] = [];
  for (const s of signals) {
    if (s === 'SIGINT' && process.listenerCount('SIGINT') > 0) continue; // the CLI session handles Ctrl-C
    const h = (): void => {
      if (ac.signal.aborted) process.exit(s === 'SIGINT' ? 130 : 143); // a second signal: quit at once
      got = s;
      process.stderr.write(`\nparallax: ${s} received; stopping (in-flight jobs are cancelled)\n`);
      ac.abort();
    };
    process.on(s, h);
    handlers.push([s, h]);
  }
  return {
    signal: ac.signal,
    received: () => got,
    dispose(): void {
      outer?.removeEventListener('abort', onOuter);
      for (const [s, h] of handlers) process.off(s, h);
    },
  };
}
