/**
 * Job enumeration, kept apart from execution: a run is a deterministic, sorted list
 * of job keys (dataset / pair / configuration label). A worker pool, --resume (skip
 * keys already in the journal) or --shard k/N (take every N-th key) only have to
 * filter or partition this list.
 */
import { byCodeUnits } from '../core/order.js';
import { CLEAN, compareConditions } from '../conditions/spec.js';

export interface JobKey {
  readonly dataset: string;
  readonly pair: string;
  /** Configuration label (matcher column). */
  readonly label: string;
  /** Camera-fault condition (condition column): `clean` or `kind=strength` (src/conditions/spec.ts). */
  readonly condition: string;
}


export function compareJobKeys(a: JobKey, b: JobKey): number {
  return byCodeUnits(a.dataset, b.dataset) || byCodeUnits(a.pair, b.pair) || compareConditions(a.condition, b.condition) || byCodeUnits(a.label, b.label);
}

/** `dataset/pair/label`, with `/condition` under a fault: unique per job (dataset names, pair ids and conditions contain no "/"). */
export function jobKeyString(k: { readonly dataset: string; readonly pair: string; readonly label: string; readonly condition?: string }): string {
  const c = k.condition ?? CLEAN;
  return c === CLEAN ? `${k.dataset}/${k.pair}/${k.label}` : `${k.dataset}/${k.pair}/${k.label}/${c}`;
}

/**
 * Every job of a run, sorted by dataset, pair id, condition, then label.
 * `datasets` maps each dataset name to its pair ids; `conditions` default to clean only.
 */
export function enumerateJobs(datasets: readonly { name: string; pairIds: readonly string[] }[], labels: readonly string[], conditions: readonly string[] = [CLEAN]): JobKey[] {
  const keys: JobKey[] = [];
  for (const d of datasets) for (const p of d.pairIds) for (const c of conditions) for (const l of labels) keys.push({ dataset: d.name, pair: p, label: l, condition: c });
  return keys.sort(compareJobKeys);
}

/** Consecutive runs of jobs sharing a dataset and pair (each pair is loaded once). */
export function groupByPair(keys: readonly JobKey[]): JobKey[][] {
  const groups: JobKey[][] = [];
  let cur: JobKey[] = [];
  for (const k of keys) {
    const last = cur[cur.length - 1];
    if (last && (last.dataset !== k.dataset || last.pair !== k.pair)) {
      groups.push(cur);
      cur = [];
    }
    cur.push(k);
  }
  if (cur.length) groups.push(cur);
  return groups;
}
