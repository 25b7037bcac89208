/**
 * SGM path aggregation kernels: the TypeScript kernel against hand-worked values and
 * an independent whole-image reference written here, and the WebAssembly SIMD kernel
 * against the TypeScript kernel (exact).
 */
import { existsSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { aggregatePaths, createArena, type SgmArena } from '../../matchers/sgm/aggregate.js';
import { pathRowTs, SGM_MAX_COST, SGM_MAX_P2, SGM_PAD, sgmLayout } from '../../matchers/kernels/sgm.js';
import { dropKernelPool, wasmPath } from '../../matchers/sgm/wasm.js';
import { sgmMatch } from '../../matchers/sgm/index.js';
import { censusTransform } from '../../matchers/kernels/census.js';
import { EXCLUDED_U16, wta, wtaRight } from '../../matchers/kernels/wta.js';
import { mulberry32 as prng } from '../support/rng.js';

function fillArena(arena: SgmArena, cost: number[][][], gray: number[][]): void {
  const { width, height, levels, stride } = arena.layout;
  for (let y = 0; y < height; y++)
    for (let x = 0; x < width; x++) {
      arena.gray[y * width + x] = gray[y][x];
      for (let k = 0; k < levels; k++) arena.cost[(y * width + x) * stride + k] = cost[y][x][k];
    }
}

function randomProblem(seed: number, W: number, H: number, D: number, maxCost: number) {
  const r = prng(seed);
  const cost: number[][][] = [];
  const gray: number[][] = [];
  for (let y = 0; y < H; y++) {
    cost.push([]);
    gray.push([]);
    for (let x = 0; x < W; x++) {
      gray[y].push(Math.floor(r() * 256));
      const c: number[] = [];
      for (let k = 0; k < D; k++) c.push(Math.floor(r() * (maxCost + 1)));
      cost[y].push(c);
    }
  }
  return { cost, gray };
}

/**
 * Independent reference: Hirschmüller 2008, eq. (13), computed per direction over the
 * whole image in plain nested arrays, scanning so that p - r is always visited first.
 * P2' = max(P1, floor(P2 * k / (k + |I(p) - I(p - r)|))) as documented in kernels/sgm.ts.
 */
function referenceSum(
  cost: number[][][],
  gray: number[][],
  W: number,
  H: number,
  D: number,
  p1: number,
  p2: number,
  k: number,
  dirs: [number, number][],
): number[][][] {
  const S = cost.map((row) => row.map(() => new Array<number>(D).fill(0)));
  for (const [dx, dy] of dirs) {
    const Lr = cost.map((row) => row.map(() => new Array<number>(D).fill(0)));
    const ys = [...Array(H).keys()];
    const xs = [...Array(W).keys()];
    if (dy < 0) ys.reverse();
    if (dx < 0) xs.reverse();
    for (const y of ys)
      for (const x of xs) {
        const px = x - dx;
        const py = y - dy;
        if (px < 0 || px >= W || py < 0 || py >= H) {
          for (let d = 0; d < D; d++) Lr[y][x][d] = cost[y][x][d];
        } else {
          const prev = Lr[py][px];
          const mp = Math.min(...prev);
          let p2e = p2;
          if (k > 0) p2e = Math.max(p1, Math.floor((p2 * k) / (k + Math.abs(gray[y][x] - gray[py][px]))));
          for (let d = 0; d < D; d++) {
            const cands = [prev[d], mp + p2e];
            if (d > 0) cands.push(prev[d - 1] + p1);
            if (d < D - 1) cands.push(prev[d + 1] + p1);
            Lr[y][x][d] = cost[y][x][d] + Math.min(...cands) - mp;
          }
        }
        for (let d = 0; d < D; d++) S[y][x][d] += Lr[y][x][d];
      }
  }
  return S;
}

const DIRS8: [number, number][] = [
  [1, 0], [1, 1], [0, 1], [-1, 1],
  [-1, 0], [-1, -1], [0, -1], [1, -1],
];
const DIRS4: [number, number][] = [[1, 0], [0, 1], [-1, 0], [0, -1]];

function readSum(arena: SgmArena): number[][][] {
  const { width, height, levels, stride } = arena.layout;
  const out: number[][][] = [];
  for (let y = 0; y < height; y++) {
    out.push([]);
    for (let x = 0; x < width; x++) {
      const base = (y * width + x) * stride;
      out[y].push(Array.from(arena.sum.subarray(base, base + levels)));
    }
  }
  return out;
}

const hasWasm = existsSync(wasmPath('sgm')!);

describe('SGM path recurrence', () => {
  it('matches a hand-worked 1x5 row, path from the left (Hirschmüller 2008, L_r recurrence)', async () => {
    // P1 = 2, P2 = 5, constant P2 (k = 0). C(x, d), 4 levels:
    const C = [
      [4, 1, 6, 9],
      [3, 5, 0, 2],
      [7, 2, 2, 8],
      [0, 9, 8, 1],
      [5, 5, 1, 3],
    ];
    // Worked by hand, L(x,d) = C + min(L'(d), L'(d-1)+P1, L'(d+1)+P1, m'+P2) - m'
    // x0: first pixel of the path, L = C = [4,1,6,9], m = 1
    // x1: m'=1, m'+P2=6
    //   d0: min(4, 1+2, 6)=3 -> 3+3-1=5;   d1: min(1, 4+2, 6+2, 6)=1 -> 5+1-1=5
    //   d2: min(6, 1+2, 9+2, 6)=3 -> 0+3-1=2;   d3: min(9, 6+2, 6)=6 (P2) -> 2+6-1=7
    // x2: L'=[5,5,2,7], m'=2, m'+P2=7
    //   d0: min(5, 5+2, 7)=5 -> 7+5-2=10;  d1: min(5, 5+2, 2+2, 7)=4 -> 2+4-2=4
    //   d2: min(2, 5+2, 7+2, 7)=2 -> 2+2-2=2;  d3: min(7, 2+2, 7)=4 -> 8+4-2=10
    // x3: L'=[10,4,2,10], m'=2, m'+P2=7
    //   d0: min(10, 4+2, 7)=6 -> 0+6-2=4;  d1: min(4, 10+2, 2+2, 7)=4 -> 9+4-2=11
    //   d2: min(2, 4+2, 10+2, 7)=2 -> 8+2-2=8;  d3: min(10, 2+2, 7)=4 -> 1+4-2=3
    // x4: L'=[4,11,8,3], m'=3, m'+P2=8
    //   d0: min(4, 11+2, 8)=4 -> 5+4-3=6;  d1: min(11, 4+2, 8+2, 8)=6 -> 5+6-3=8
    //   d2: min(8, 11+2, 3+2, 8)=5 -> 1+5-3=3;  d3: min(3, 8+2, 8)=3 -> 3+3-3=3
// Same shape as C above: both are the worked example's tables, written out for the reader.
    const expected = [
      [4, 1, 6, 9],
      [5, 5, 2, 7],
      [10, 4, 2, 10],
      [4, 11, 8, 3],
      [6, 8, 3, 3],
    ];
    const expectedMin = [1, 2, 2, 3, 3];
    for (const kernel of hasWasm ? (['ts', 'wasm'] as const) : (['ts'] as const)) {
      const arena = await createArena(5, 1, 4, kernel);
      expect(arena.kernel).toBe(kernel);
      fillArena(arena, [C], [[0, 0, 0, 0, 0]]);
      const L = arena.layout;
      // one forward row, direction 0 only (from the left)
      arena.pathRow(L.cost, L.sum, L.gray, L.gray, 5, 4, L.stride, 1, L.rows[1], L.rows[0], L.mins[1], L.mins[0], 0, 1, 2, 5, 0, 0);
      for (let x = 0; x < 5; x++) {
        const base = L.rows[0] / 2 + x * L.stride;
        expect(Array.from(arena.u16.subarray(base, base + 4)), `L at x=${x} (${kernel})`).toEqual(expected[x]);
        // padded levels hold the PAD value (kernels/sgm.ts layout)
        expect(arena.u16[base + 4]).toBe(SGM_PAD);
        expect(arena.u16[L.mins[0] / 2 + x], `min at x=${x}`).toBe(expectedMin[x]);
        // with only one path, S = L
        expect(Array.from(arena.sum.subarray(x * L.stride, x * L.stride + 4))).toEqual(expected[x]);
      }
    }
  });

  it('aggregates 4 and 8 paths like the whole-image reference (Hirschmüller 2008 eq. 13-14)', async () => {
    const cases = [
      { seed: 1, W: 7, H: 5, D: 5, p1: 3, p2: 20, k: 0 },
      { seed: 2, W: 9, H: 6, D: 11, p1: 4, p2: 40, k: 16 },
      { seed: 3, W: 6, H: 8, D: 16, p1: 1, p2: 9, k: 3 },
    ];
    for (const c of cases) {
      const { cost, gray } = randomProblem(c.seed, c.W, c.H, c.D, 60);
      for (const paths of [4, 8] as const) {
        const want = referenceSum(cost, gray, c.W, c.H, c.D, c.p1, c.p2, c.k, paths === 8 ? DIRS8 : DIRS4);
        const arena = await createArena(c.W, c.H, c.D, 'ts');
        fillArena(arena, cost, gray);
        aggregatePaths(arena, { p1: c.p1, p2: c.p2, edgeK: c.k, paths });
        expect(readSum(arena), `seed ${c.seed}, ${paths} paths`).toEqual(want);
      }
      // the 8-path sum differs from the 4-path sum (the diagonals contribute)
      const a4 = referenceSum(cost, gray, c.W, c.H, c.D, c.p1, c.p2, c.k, DIRS4);
      const a8 = referenceSum(cost, gray, c.W, c.H, c.D, c.p1, c.p2, c.k, DIRS8);
      expect(a8).not.toEqual(a4);
    }
  });

  it('stays within uint16 at the largest costs and P2 (overflow proof in kernels/sgm.ts)', async () => {
    // Worst case: every cost SGM_MAX_COST except level 0 (cost 0; now and then another
    // level), P1 = P2 = SGM_MAX_P2, 8 paths: along each path L(d > 0) - min grows by 255
    // per step up to P2, so inside the image S approaches 8 * (255 + 7936) = 65528.
    // The reference runs in float64, so a wrap in the kernel would show as a mismatch.
    const W = 72, H = 72, D = 9;
    const r = prng(7);
    const cost = Array.from({ length: H }, () =>
      Array.from({ length: W }, () => {
        const c = new Array<number>(D).fill(SGM_MAX_COST);
        c[r() < 0.02 ? Math.floor(r() * D) : 0] = 0;
        return c;
      }),
    );
    const gray = Array.from({ length: H }, () => Array.from({ length: W }, () => 0));
    const want = referenceSum(cost, gray, W, H, D, SGM_MAX_P2, SGM_MAX_P2, 0, DIRS8);
    const maxRef = Math.max(...want.flat(2));
    expect(maxRef).toBeLessThan(65536);
    expect(maxRef).toBeGreaterThan(60000); // the case does push the sums near the bound
    for (const kernel of hasWasm ? (['ts', 'wasm'] as const) : (['ts'] as const)) {
      const arena = await createArena(W, H, D, kernel);
      fillArena(arena, cost, gray);
      aggregatePaths(arena, { p1: SGM_MAX_P2, p2: SGM_MAX_P2, edgeK: 0, paths: 8 });
      expect(readSum(arena)).toEqual(want);
    }
  });

  it('honours the abort signal between rows', async () => {
    const arena = await createArena(8, 8, 8, 'ts');
    const ac = new AbortController();
    ac.abort();
    expect(() => aggregatePaths(arena, { p1: 1, p2: 2, edgeK: 0, paths: 4 }, ac.signal)).toThrow(/abort/);
  });
});

describe('SGM WebAssembly SIMD kernel', () => {
  it('is built (scripts/build-wasm.sh runs in npm run build)', () => {
    expect(hasWasm).toBe(true);
  });

  it('gives exactly the TypeScript kernel bytes on random volumes', async () => {
    const r = prng(99);
    for (let t = 0; t < 12; t++) {
      const W = 3 + Math.floor(r() * 20);
      const H = 2 + Math.floor(r() * 12);
      const D = 1 + Math.floor(r() * 40);
      const p1 = Math.floor(r() * 30);
      const p2 = p1 + Math.floor(r() * (t % 3 === 0 ? SGM_MAX_P2 - p1 : 200));
      const k = t % 2 === 0 ? 0 : 1 + Math.floor(r() * 40);
      const paths = t % 4 < 2 ? 8 : 4;
      const { cost, gray } = randomProblem(1000 + t, W, H, D, SGM_MAX_COST);
      const a = await createArena(W, H, D, 'ts');
      const b = await createArena(W, H, D, 'wasm');
      expect(b.kernel).toBe('wasm');
      fillArena(a, cost, gray);
      fillArena(b, cost, gray);
      aggregatePaths(a, { p1, p2, edgeK: k, paths }, undefined);
      aggregatePaths(b, { p1, p2, edgeK: k, paths }, undefined);
      // whole sum volume, padded levels included, byte for byte
      expect(Buffer.from(b.sum.buffer, b.sum.byteOffset, b.sum.byteLength).equals(
        Buffer.from(a.sum.buffer, a.sum.byteOffset, a.sum.byteLength),
      ), `case ${t}: ${W}x${H}, ${D} levels, P1 ${p1}, P2 ${p2}, k ${k}, ${paths} paths`).toBe(true);
    }
  });
});

// keep the layout helper honest: the arena holds every buffer without overlap
describe('SGM arena layout', () => {
  it('places buffers without overlap and 16-byte aligned', () => {
    const L = sgmLayout(13, 7, 21);
    expect(L.stride).toBe(24);
    const spans = [
      [L.cost, 13 * 7 * 24 * 2], [L.sum, 13 * 7 * 24 * 2], [L.gray, 13 * 7],
      [L.rows[0], 4 * 13 * 24 * 2], [L.rows[1], 4 * 13 * 24 * 2], [L.mins[0], 4 * 13 * 2], [L.mins[1], 4 * 13 * 2],
    ].sort((a, b) => a[0] - b[0]);
    for (let i = 0; i < spans.length; i++) {
      expect(spans[i][0] % 16).toBe(0);
      if (i > 0) expect(spans[i][0]).toBeGreaterThanOrEqual(spans[i - 1][0] + spans[i - 1][1]);
    }
    expect(L.bytes).toBeGreaterThanOrEqual(spans[spans.length - 1][0] + spans[spans.length - 1][1]);
    void pathRowTs;
  });
});

describe('SGM WebAssembly pipeline stages', () => {
  it('census rows equal censusTransform (kernels/census.ts) bit for bit', async () => {
    const r = prng(4242);
    for (const [cw, ch] of [[9, 7], [5, 5], [11, 11], [3, 1]] as const) {
      const W = 23, H = 17;
      // integer and fractional luminance with ties (equal values give 0 bits)
      const img = Float32Array.from({ length: W * H }, () => (r() < 0.3 ? 100 : Math.floor(r() * 64) / 4));
      const want = censusTransform(img, W, H, cw, ch);
      const arena = await createArena(W, H, 8, 'wasm', want.words);
      const L = arena.layout;
      new Float32Array(arena.buffer, L.imgL, W * H).set(img);
      for (let y = 0; y < H; y++) arena.stages!.censusRow(L.imgL, L.bitsL, W, H, y, cw, ch, want.words);
      const got = new Uint32Array(arena.buffer, L.bitsL, W * H * want.words);
      expect(Array.from(got), `${cw}x${ch}`).toEqual(Array.from(want.bits));
    }
  });

  it('WTA rows equal wta() and wtaRight() (kernels/wta.ts) on random sums', async () => {
    const r = prng(777);
    for (let t = 0; t < 6; t++) {
      const W = 5 + Math.floor(r() * 30), H = 3, D = 1 + Math.floor(r() * 30), minD = Math.floor(r() * 9) - 4;
      const arena = await createArena(W, H, D, 'wasm');
      const L = arena.layout;
      const compact = new Uint16Array(W * H * D);
      for (let p = 0; p < W * H; p++)
        for (let k = 0; k < D; k++) {
          // few distinct values so ties and the uniqueness margin both occur
          const v = r() < 0.05 ? EXCLUDED_U16 : 100 + Math.floor(r() * 12) * 7;
          compact[p * D + k] = v;
          arena.sum[p * L.stride + k] = v;
        }
      const uniq = t % 2 === 0 ? 0 : 10;
      const rowVol = W * L.stride * 2;
      for (let y = 0; y < H; y++) {
        arena.stages!.wtaRow(L.sum + y * rowVol, L.dispL + y * W * 4, W, D, L.stride, minD, 1, uniq);
        arena.stages!.wtaRightRow(L.sum + y * rowVol, L.dispR + y * W * 4, W, D, L.stride, minD, 1, L.scratch);
      }
      const wantL = wta(compact, W, H, D, minD, { subpix: true, uniqueness: uniq });
      const wantR = wtaRight(compact, W, H, D, minD, { subpix: true });
      expect(Array.from(new Float32Array(arena.buffer, L.dispL, W * H))).toEqual(Array.from(wantL));
      expect(Array.from(new Float32Array(arena.buffer, L.dispR, W * H))).toEqual(Array.from(wantR));
    }
  });

  it('the whole sgm match gives the same map with the wasm and the TypeScript kernels', async () => {
    const r = prng(31337);
    const W = 61, H = 29;
    const left = Float32Array.from({ length: W * H }, () => r() * 255);
    const right = new Float32Array(W * H);
    for (let y = 0; y < H; y++) for (let x = 0; x < W; x++) right[y * W + x] = left[y * W + Math.min(W - 1, x + 5)] + (r() - 0.5) * 20;
    const sets: Record<string, string | number>[] = [{}, { cost: 'bt', paths: '4', p2edge: 20 }, { censusW: 5, censusH: 5, uniq: 0, lr: 0 }];
    for (const params of sets) {
      const input = { width: W, height: H, left, right, minDisparity: -3, maxDisparity: 13 };
      const a = await sgmMatch(input, { ...params, kernel: 'wasm' });
      const b = await sgmMatch(input, { ...params, kernel: 'ts' });
      expect(Array.from(a), JSON.stringify(params)).toEqual(Array.from(b));
    }
  });
});

describe('SGM kernel choice', () => {
  it('falls back to TypeScript with one warning when the wasm file is missing, and fails on kernel=wasm', async () => {
    const seen: string[] = [];
    const onWarn = (w: Error) => seen.push(w.message);
    process.on('warning', onWarn);
    try {
      const a = await createArena(4, 3, 5, 'auto', 2, 'no-such-kernel');
      const b = await createArena(4, 3, 5, 'auto', 2, 'no-such-kernel');
      expect(a.kernel).toBe('ts');
      expect(b.kernel).toBe('ts');
      await new Promise((r) => setTimeout(r, 10)); // warnings are emitted on the next tick
      expect(seen.filter((m) => m.includes('no-such-kernel.wasm not found'))).toHaveLength(1);
      await expect(createArena(4, 3, 5, 'wasm', 2, 'no-such-kernel')).rejects.toThrow(/no-such-kernel\.wasm is missing/);
    } finally {
      process.off('warning', onWarn);
    }
  });
});

describe('SGM wasm memory pool', () => {
  it('reuses one memory for consecutive matches and gives a fresh one while it is leased', async () => {
    // common practice (buffer pooling); checked here because views must never alias
    dropKernelPool();
    const a = await createArena(16, 8, 8, 'wasm');
    const b = await createArena(16, 8, 8, 'wasm'); // a still leased
    expect(b.buffer).not.toBe(a.buffer);
    a.release();
    b.release();
    const c = await createArena(16, 8, 8, 'wasm');
    expect(c.buffer).toBe(a.buffer); // same memory, not grown
    c.release();
    const d = await createArena(64, 48, 40, 'wasm'); // larger: the pooled memory grows
    expect(d.buffer.byteLength).toBeGreaterThanOrEqual(d.layout.bytes);
    d.release();
    dropKernelPool();
  });
});
