/**
 * The matcher contract. A matcher is declarative metadata plus one function.
 * It never reads files: the runner hands it arrays.
 */
import type { RasterImage } from './image.js';

import type { ParamValue } from './params.js';
export type { ParamValue };
export type ParamValues = Readonly<Record<string, ParamValue>>;

/** One tunable parameter. The schema validates `--matcher id:key=value`, drives help text and sweeps. */
export type ParamSpec =
  | {
      readonly name: string;
      readonly type: 'int' | 'number';
      readonly default: number;
      readonly min?: number;
      readonly max?: number;
      /** For ints: value must be odd (window sides). */
      readonly odd?: boolean;
      readonly description: string;
    }
  | { readonly name: string; readonly type: 'boolean'; readonly default: boolean; readonly description: string }
  | {
      readonly name: string;
      readonly type: 'enum';
      readonly default: string;
      readonly values: readonly string[];
      readonly description: string;
    };

export interface MatchInput {
  readonly width: number;
  readonly height: number;
  /** Luminance on a 0-255 scale (ITU-R BT.601), float32, row-major, top row first. */
  readonly left: Float32Array;
  readonly right: Float32Array;
  /** The decoded colour images, for matchers that want colour. */
  readonly leftColor?: RasterImage;
  readonly rightColor?: RasterImage;
  /** Inclusive search range: d = x_left - x_right in [minDisparity, maxDisparity]. */
  readonly minDisparity: number;
  readonly maxDisparity: number;
  /**
   * Source files (for outside programs that want paths); never read by built-in matchers.
   * `condition` is set when a camera fault changed the images: the files are then not
   * what the matcher must see, and programs get the changed images written for them.
   */
  readonly source?: { readonly pairId: string; readonly left: string; readonly right: string; readonly condition?: string };
  /** Threads this job may use (the runner's share of the thread budget); default 1. */
  readonly threads?: number;
}

export interface MatchOutput {
  /** Left-referenced disparity, width * height, NaN = no answer. */
  readonly disparity: Float32Array;
  /** Match time the matcher measured itself (e.g. a network excluding weight loading), ms. */
  readonly selfTimeMs?: number;
  /**
   * Optional confidence per pixel, width * height, higher = more trusted (any scale; NaN =
   * none, ranked below every other). Scored by sparsification (src/metrics/sparsify.ts).
   */
  readonly confidence?: Float32Array;
}

/** params[lower] <= params[upper] (numbers), declared beside the parameter schema. */
export interface ParamRelation {
  readonly lower: string;
  readonly upper: string;
}

/** The first relation a full parameter set breaks, as a message (`p1=200 must not exceed p2=100`), or undefined. */
export function brokenRelation(relations: readonly ParamRelation[] | undefined, params: Readonly<Record<string, ParamValue>>): string | undefined {
  for (const r of relations ?? []) {
    const lo = params[r.lower];
    const hi = params[r.upper];
    if (typeof lo === 'number' && typeof hi === 'number' && lo > hi) return `${r.lower}=${lo} must not exceed ${r.upper}=${hi}`;
  }
  return undefined;
}

export interface MatcherPlugin {
  /** Short id used on the command line, e.g. `block`, `sgm`. */
  readonly id: string;
  /** One line for `parallax matchers`. */
  readonly summary: string;
  /** Bump when the output for the same input and parameters changes. */
  readonly version: string;
  readonly params: readonly ParamSpec[];
  /**
   * Constraints across parameters, checked by the registry before any job runs (like
   * each parameter's own range): `{ lower: 'p1', upper: 'p2' }` means p1 <= p2.
   */
  readonly relations?: readonly ParamRelation[];
  /**
   * Compute a disparity map. May return a Float32Array directly or a MatchOutput.
   * Must check `signal` between rows or stages on long work and throw when aborted.
   */
  match(
    input: MatchInput,
    params: ParamValues,
    signal: AbortSignal,
  ): Float32Array | MatchOutput | Promise<Float32Array | MatchOutput>;
  /** Optional: release resources (long-lived programs). */
  dispose?(): void | Promise<void>;
}

/** Fill in the schema's default for any parameter the caller did not set (no validation). */
export function withDefaults(specs: readonly ParamSpec[], params: ParamValues): Record<string, ParamValue> {
  const out: Record<string, ParamValue> = {};
  for (const p of specs) out[p.name] = params[p.name] ?? p.default;
  return out;
}
