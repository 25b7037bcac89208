/**
 * Job enumeration, kept apart from execution: a run is a deterministic, sorted list
 * of job keys (dataset / pair / configuration label). A worker pool, --resume (skip
 * keys already in the journal) or --shard k/N (take every N-th key) only have to
 * filter or partition this list.
 */
import { byCodeUnits } from '../core/order.js';

export interface JobKey {
  readonly dataset: string;
  readonly pair: string;
  /** Configuration label (matcher column). */
  readonly label: string;
}


export function compareJobKeys(a: JobKey, b: JobKey): number {
  return byCodeUnits(a.dataset, b.dataset) || byCodeUnits(a.pair, b.pair) || byCodeUnits(a.label, b.label);
}

/** `dataset/pair/label`: unique per job (dataset names and pair ids contain no "/"). */
export function jobKeyString(k: JobKey): string {
  return `${k.dataset}/${k.pair}/${k.label}`;
}

/**
 * Every job of a run, sorted by dataset, pair id, then label.
 * `datasets` maps each dataset name to its pair ids.
 */
export function enumerateJobs(datasets: readonly { name: string; pairIds: readonly string[] }[], labels: readonly string[]): JobKey[] {
  const keys: JobKey[] = [];
  for (const d of datasets) for (const p of d.pairIds) for (const l of labels) keys.push({ dataset: d.name, pair: p, label: l });
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
