/**
 * What changed between a baseline and a candidate configuration, from their run
 * records: matcher id, version, parameters, code hash, program command line, module
 * time limit, prediction source. One line per change, for compare.md and the console.
 */
import type { RunConfigRecord } from '../io/run-record.js';

export type ConfigRecord = RunConfigRecord['matchers'][number];

const show = (v: unknown): string => (v === undefined ? '(none)' : typeof v === 'string' ? v : JSON.stringify(v));

/** The changes from `base` to `cand`, in a fixed order; empty when they are the same. */
export function configChanges(base: ConfigRecord | undefined, cand: ConfigRecord | undefined): string[] {
  if (!base || !cand) return [`configuration record missing in the ${!base ? 'baseline' : 'candidate'} run`];
  const out: string[] = [];
  const line = (what: string, a: unknown, b: unknown): void => {
    if (JSON.stringify(a) !== JSON.stringify(b)) out.push(`${what}: ${show(a)} → ${show(b)}`);
  };
  line('matcher', base.matcherId, cand.matcherId);
  line('version', base.version, cand.version);
  const keys = [...new Set([...Object.keys(base.params), ...Object.keys(cand.params)])];
  for (const k of keys) line(`param ${k}`, base.params[k], cand.params[k]);
  if (base.codeHash !== cand.codeHash) out.push(`code hash: ${short(base.codeHash)} → ${short(cand.codeHash)}`);
  line('command', base.command?.join(' '), cand.command?.join(' '));
  line('time limit (ms)', base.timeoutMs, cand.timeoutMs);
  line('predictions', base.predictions, cand.predictions);
  return out;
}

function short(hash: string | undefined): string {
  return hash === undefined ? '(none)' : hash.slice(0, 12);
}
