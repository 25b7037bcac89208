/**
 * The project's seeded pseudo-random generators, in one place. Pure 32-bit integer
 * arithmetic, so the same seed gives the same stream on every platform.
 *
 * - fmix32: the murmur3 32-bit finaliser (Appleby), a bijection with good avalanche.
 * - splitmix32: a 32-bit variant of Steele, Lea & Flood's SplitMix (2014): a Weyl
 *   sequence with step 0x9e3779b9 passed through fmix32; one state word, period 2^32.
 * - mulberry32: Tommy Ettinger's public-domain 32-bit generator; one state word.
 *
 * src/synth and src/stats build their richer generators on these; tests and benches
 * use mulberry32 for reproducible data.
 */

/** The murmur3 32-bit finaliser: a bijection on 32-bit words with good avalanche. */
export function fmix32(h: number): number {
  h ^= h >>> 16;
  h = Math.imul(h, 0x85ebca6b);
  h ^= h >>> 13;
  h = Math.imul(h, 0xc2b2ae35);
  h ^= h >>> 16;
  return h >>> 0;
}

/** splitmix32 stream: each call returns the next unsigned 32-bit word. */
export function splitmix32Words(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x9e3779b9) >>> 0;
    return fmix32(state);
  };
}

/** mulberry32 stream: each call returns the next uniform float in [0, 1). */
export function mulberry32(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** A 32-bit seed from a seed and a text (FNV-1a over UTF-16 code units, then fmix32): streams per pair and camera. */
export function seedFor(seed: number, text: string): number {
  let h = (0x811c9dc5 ^ (seed >>> 0)) >>> 0;
  for (let i = 0; i < text.length; i++) h = Math.imul(h ^ text.charCodeAt(i), 0x01000193) >>> 0;
  return fmix32(h);
}
