/**
 * The block matcher when build/wasm/block.wasm is missing: `auto` falls back to the
 * TypeScript kernel with one warning, `wasm` is a MatcherFailure that says how to build it.
 * The module locator is pointed at a path that does not exist (this file runs in its own
 * worker, so the real module cache of other test files is untouched).
 */
import { describe, expect, it, vi } from 'vitest';
import { MatcherFailure } from '../../src/core/errors.js';

vi.mock('../../matchers/sgm/wasm.js', () => ({
  wasmPath: (name: string) => `/nonexistent-parallax-test/build/wasm/${name}.wasm`,
}));

const { blockLastRun, blockMatch } = await import('../../matchers/block/index.js');
const { randomDotStereogram } = await import('./block-rds.js');

describe('block matcher without the wasm kernel', () => {
  const s = randomDotStereogram(48, 32, 2, 6, 3);
  const input = { width: 48, height: 32, left: s.left, right: s.right, minDisparity: 0, maxDisparity: 9 };

  it('auto: TypeScript kernel, same map as kernel=ts, one warning naming the missing file', () => {
    const warn = vi.spyOn(process, 'emitWarning').mockImplementation(() => undefined);
    const a = blockMatch(input, { cost: 'sad', window: 5 });
    expect(blockLastRun.kernel).toBe('ts');
    const b = blockMatch(input, { cost: 'sad', window: 5, kernel: 'ts' });
    expect(Array.from(a, String)).toEqual(Array.from(b, String));
    blockMatch(input, { cost: 'ssd', window: 3 });
    // one-time warning (common practice for a fallback; the sgm matcher does the same)
    expect(warn).toHaveBeenCalledTimes(1);
    expect(String(warn.mock.calls[0][0])).toContain('/nonexistent-parallax-test/build/wasm/block.wasm');
    warn.mockRestore();
  });

  it('wasm: a MatcherFailure that names the file and the build command', () => {
    expect(() => blockMatch(input, { kernel: 'wasm' })).toThrow(MatcherFailure);
    expect(() => blockMatch(input, { kernel: 'wasm' })).toThrow(/block\.wasm is missing; run npm run build:wasm/);
  });
});
