/**
 * The block matcher when build/wasm/block.wasm is missing or out of date: `auto` falls
 * back to the TypeScript kernel with one warning, `wasm` is a MatcherFailure that says how
 * to build it. The module locator is pointed at a path that does not exist, or at another
 * kernel's module (sgm.wasm, which lacks the block exports). This file runs in its own
 * worker, so the module cache of other test files is untouched.
 */
import { existsSync } from 'node:fs';
import { describe, expect, it, vi } from 'vitest';
import { randomDotStereogram } from './block-rds.js';
import type * as WasmModule from '../../matchers/sgm/wasm.js';

const target = vi.hoisted(() => ({ path: '' }));
vi.mock('../../matchers/sgm/wasm.js', async (importOriginal) => {
  const real = await importOriginal<typeof WasmModule>();
  return { ...real, wasmPath: (name: string) => (name === 'block' ? target.path : real.wasmPath(name)) };
});

async function freshBlock(path: string) {
  target.path = path;
  vi.resetModules();
  // the error class too: after the reset the matcher throws the fresh module's class
  const { MatcherFailure } = await import('../../src/core/errors.js');
  return { ...(await import('../../matchers/block/index.js')), MatcherFailure };
}

describe('block matcher without a usable wasm kernel', () => {
  const s = randomDotStereogram(48, 32, 2, 6, 3);
  const input = { width: 48, height: 32, left: s.left, right: s.right, minDisparity: 0, maxDisparity: 9 };
  const missing = '/nonexistent-parallax-test/build/wasm/block.wasm';

  it('auto: TypeScript kernel, same map as kernel=ts, one warning naming the missing file', async () => {
    const { blockLastRun, blockMatch } = await freshBlock(missing);
    const warn = vi.spyOn(process, 'emitWarning').mockImplementation(() => undefined);
    const a = blockMatch(input, { cost: 'sad', window: 5 });
    expect(blockLastRun.kernel).toBe('ts');
    const b = blockMatch(input, { cost: 'sad', window: 5, kernel: 'ts' });
    expect(Array.from(a, String)).toEqual(Array.from(b, String));
    blockMatch(input, { cost: 'ssd', window: 3 });
    // one-time warning (common practice for a fallback; the sgm matcher does the same)
    expect(warn).toHaveBeenCalledTimes(1);
    expect(String(warn.mock.calls[0][0])).toContain(missing);
    warn.mockRestore();
  });

  it('wasm: a MatcherFailure that names the file and the build command', async () => {
    const { blockMatch, MatcherFailure } = await freshBlock(missing);
    expect(() => blockMatch(input, { kernel: 'wasm' })).toThrow(MatcherFailure);
    expect(() => blockMatch(input, { kernel: 'wasm' })).toThrow(/block\.wasm is missing or out of date; run npm run build:wasm/);
  });

  it('a module without the block exports (out of date) counts as missing', async () => {
    const { wasmPath } = await vi.importActual<typeof WasmModule>('../../matchers/sgm/wasm.js');
    const other = wasmPath('sgm')!;
    expect(existsSync(other)).toBe(true); // built by npm run build with the block kernel
    const { blockMatch, MatcherFailure } = await freshBlock(other);
    expect(() => blockMatch(input, { kernel: 'wasm' })).toThrow(MatcherFailure);
    expect(() => blockMatch(input, { kernel: 'wasm' })).toThrow(/sgm\.wasm is missing or out of date/);
  });
});
