/**
 * Frames of a sequence within one run: a pair with a `frame` (and its `group`) keeps its
 * prediction until the next frame of the same group and configuration has been scored
 * against it (flicker, src/metrics/flicker.ts). The scheduler starts pairs in frame order
 * (sequenceOrder), so a frame's predecessor has always started before it; a frame whose
 * predecessor is not in this run (the first frame, a frame missing from the dataset, a
 * frame run by another shard or an earlier part of a resumed run) gets no flicker.
 */
import { configLabel } from '../conditions/spec.js';
import type { LoadedPair } from '../core/pair.js';
import type { RegionMap } from '../core/regions.js';
import type { JobResult } from '../core/score.js';
import { flickerBySlice, type FrameMaps } from '../metrics/flicker.js';
import type { JobKey } from './jobs.js';

const frameKey = (label: string, dataset: string, group: string, frame: number): string => `${label}\u0000${dataset}\u0000${group}\u0000${frame}`;

/** A frame's maps once its job is done (null: failed, nothing to compare). */
type Pending = { promise: Promise<FrameMaps | null>; settle: (m: FrameMaps | null) => void; settled: boolean };

export class SequenceTracker {
  private readonly frames = new Map<string, Pending>();

  /** Note that a framed pair's job starts; returns the handle its end must settle (undefined: not a frame). */
  begin(label: string, pair: LoadedPair): Pending | undefined {
    if (pair.frame === undefined || pair.group === undefined) return undefined;
    let settle!: (m: FrameMaps | null) => void;
    const promise = new Promise<FrameMaps | null>((r) => (settle = r));
    const entry: Pending = { promise, settle: (m) => ((entry.settled = true), settle(m)), settled: false };
    this.frames.set(frameKey(label, pair.dataset, pair.group, pair.frame), entry);
    return entry;
  }

  /**
   * The job of a framed pair is done: keep its maps for the next frame, and give its
   * result the flicker against the previous frame when that frame ran in this run.
   */
  async finish(own: Pending | undefined, result: JobResult, disparity: Float32Array | null, pair: LoadedPair, regions: RegionMap): Promise<void> {
    if (!own || pair.frame === undefined || pair.group === undefined) return;
    const maps: FrameMaps | null = disparity ? { pred: disparity, truth: pair.truth.data, regions } : null;
    own.settle(maps);
    const prevKey = frameKey(configLabel(result), pair.dataset, pair.group, pair.frame - 1);
    const prev = this.frames.get(prevKey);
    if (!prev) return;
    this.frames.delete(prevKey); // each frame has one successor
    const before = await prev.promise;
    if (!before || !maps) return;
    const f = flickerBySlice(before, maps);
    for (const [key, v] of Object.entries(f)) {
      const sc = result.scores[key];
      if (sc) sc.figures.flicker = v;
    }
  }

  /** A job that ended without finish (abort, error): release whoever waits for it. */
  abandon(own: Pending | undefined): void {
    if (own && !own.settled) own.settle(null);
  }
}

/** Where a framed pair sits: its sequence (group) and frame index. */
export interface FramePlace {
  group: string;
  frame: number;
}

/** The framed pairs of some manifests, by `dataset\0pair`: the one lookup behind frame order and sequence shards. */
export function framePlaces(manifests: Iterable<{ name: string; pairs: readonly { id: string; group?: string; frame?: number }[] }>): (dataset: string, pair: string) => FramePlace | undefined {
  const places = new Map<string, FramePlace>();
  for (const m of manifests) {
    for (const e of m.pairs) if (e.frame !== undefined && e.group !== undefined) places.set(`${m.name}\u0000${e.id}`, { group: e.group, frame: e.frame });
  }
  return (dataset, pair) => places.get(`${dataset}\u0000${pair}`);
}

/**
 * Pair groups of the job list in the order the scheduler starts them: as listed, except
 * that framed pairs of one dataset and group follow each other in frame order.
 */
export function sequenceOrder(groups: JobKey[][], frameOf: (dataset: string, pair: string) => FramePlace | undefined): JobKey[][] {
  const rank = groups.map((g, i) => ({ g, i, f: frameOf(g[0].dataset, g[0].pair) }));
  const firstOfSeq = new Map<string, number>();
  for (const r of rank) {
    if (!r.f) continue;
    const k = `${r.g[0].dataset}\u0000${r.f.group}`;
    if (!firstOfSeq.has(k)) firstOfSeq.set(k, r.i);
  }
  const at = (r: (typeof rank)[number]): number => (r.f ? firstOfSeq.get(`${r.g[0].dataset}\u0000${r.f.group}`)! : r.i);
  return rank
    .sort((x, y) => at(x) - at(y) || (x.f && y.f ? x.f.frame - y.f.frame : 0) || x.i - y.i)
    .map((r) => r.g);
}
