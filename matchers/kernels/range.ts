/**
 * The integer disparity levels a matcher searches: ceil(minDisparity) ..
 * floor(maxDisparity), inclusive. An empty range is a MatcherFailure.
 */
import { MatcherFailure } from '../../src/core/errors.js';
import type { MatchInput } from '../../src/core/matcher.js';

export interface Levels {
  readonly minDisparity: number;
  readonly levels: number;
}

export function disparityLevels(minDisparity: number, maxDisparity: number): Levels {
  const lo = Math.ceil(minDisparity);
  const hi = Math.floor(maxDisparity);
  if (!Number.isFinite(lo) || !Number.isFinite(hi) || hi < lo) {
    throw new MatcherFailure(`empty disparity range [${minDisparity}, ${maxDisparity}]`);
  }
  return { minDisparity: lo, levels: hi - lo + 1 };
}

/** True when some pixel of a row of this width can match at disparity d (|d| < width). */
export function levelHasCandidates(d: number, width: number): boolean {
  return d > -width && d < width;
}

/** Checks the images' sizes against width * height (a matcher bug or a bad caller, not user input). */
export function checkInputSizes(width: number, height: number, left: Float32Array, right: Float32Array): void {
  const n = width * height;
  if (!(width > 0 && height > 0) || left.length !== n || right.length !== n) {
    throw new MatcherFailure(
      `image arrays do not match ${width}x${height}: left ${left.length}, right ${right.length} values`,
    );
  }
}

/** The checks and levels every built-in match starts with: image sizes, then the searched levels. */
export function matchLevels(input: MatchInput): Levels {
  checkInputSizes(input.width, input.height, input.left, input.right);
  return disparityLevels(input.minDisparity, input.maxDisparity);
}
