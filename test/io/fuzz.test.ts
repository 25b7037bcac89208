/**
 * Property-based tests of every file parser with hostile input (fast-check).
 *
 * Property of the parser contract (README, "Exit codes": "Every error a user can cause ... is reported this way":
 * one line naming the file or option): for any bytes, a decoder either
 * returns an image within the pixel limit or throws an InputError naming the file in
 * one line; never another exception, never a hang (CPU time), never an allocation above the
 * configured pixel limit. Inputs: random bytes, mutated valid files, and valid-looking
 * headers with random sizes (for which the limit error is also predicted).
 *
 * Allocation is watched through process.memoryUsage().arrayBuffers: garbage collection
 * can only lower that figure, so growth beyond the bound within one synchronous decode
 * proves an allocation above the limit.
 */
import fc from 'fast-check';
import { deflateSync } from 'node:zlib';
import { describe, expect, it } from 'vitest';
import { InputError } from '../../src/core/errors.js';
import { decodeNpy, decodePfm, decodePng, decodePngDisparity, encodeNpy, encodePfm, encodePng } from '../../src/io/index.js';
import { adam7Scanlines, be16, buildPng, concat, ihdr, pngChunk, PNG_SIGNATURE, specCrc32, unfilteredScanlines } from './helpers.js';

const NAME = 'fuzzed.bin';
/** Bytes a decode may allocate beyond the input at these small limits (pngjs and zlib buffers included). */
const ALLOC_SLACK = 8 * 1024 * 1024;
/**
 * CPU time (not wall time, which a loaded machine stretches) above which a decode of
 * these tiny inputs counts as a hang; they normally take well under a millisecond.
 */
const HANG_CPU_MS = 1000;

type Outcome = { ok: true; width: number; height: number } | { ok: false; message: string };

/** Runs one decode and checks the contract; returns what happened for further predictions. */
function checkContract(decode: (b: Uint8Array, maxPixels: number) => { width: number; height: number; data: ArrayLike<number> }, buf: Uint8Array, maxPixels: number, channelsOf?: (img: unknown) => number): Outcome {
  const before = process.memoryUsage().arrayBuffers;
  const cpu0 = process.cpuUsage();
  let outcome: Outcome;
  // plain checks rather than expect(): this runs more than ten thousand times
  try {
    const img = decode(buf, maxPixels);
    const n = img.width * img.height;
    if (!(n > 0 && n <= maxPixels)) throw new Error(`decoded ${img.width}x${img.height}, limit ${maxPixels}`);
    const want = n * (channelsOf ? channelsOf(img) : 1);
    if (img.data.length !== want) throw new Error(`data length ${img.data.length}, expected ${want}`);
    outcome = { ok: true, width: img.width, height: img.height };
  } catch (e) {
    if (!(e instanceof InputError)) throw e; // any other exception breaks the contract
    // one line, printable ASCII only: text quoted from the file must not break the line or the terminal
    if (!e.message.startsWith(`${NAME}: `) || /[^\x20-\x7e]/.test(e.message)) throw new Error(`not a one-line message naming the file: ${JSON.stringify(e.message)}`, { cause: e });
    outcome = { ok: false, message: e.message };
  }
  const cpu = process.cpuUsage(cpu0);
  const ms = (cpu.user + cpu.system) / 1000;
  const grew = process.memoryUsage().arrayBuffers - before;
  if (ms >= HANG_CPU_MS) throw new Error(`decode took ${ms.toFixed(0)} ms of CPU time`);
  if (grew > ALLOC_SLACK + buf.length * 4) throw new Error(`array buffers grew by ${grew} bytes during one decode`);
  return outcome;
}

// ------------------------------------------------------------ mutations

type Mutation =
  | { kind: 'flip'; at: number; bit: number }
  | { kind: 'set'; at: number; value: number }
  | { kind: 'truncate'; at: number }
  | { kind: 'insert'; at: number; bytes: Uint8Array }
  | { kind: 'delete'; at: number; count: number };

/** Positions biased towards the header, where parsers make their decisions. */
const position = fc.oneof(fc.nat({ max: 63 }), fc.nat({ max: 100_000 }));
const mutation: fc.Arbitrary<Mutation> = fc.oneof(
  fc.record({ kind: fc.constant('flip' as const), at: position, bit: fc.integer({ min: 0, max: 7 }) }),
  fc.record({ kind: fc.constant('set' as const), at: position, value: fc.constantFrom(0, 0x20, 0x0a, 0x2d, 0x30, 0x39, 0x7f, 0x80, 0xff) }),
  fc.record({ kind: fc.constant('truncate' as const), at: position }),
  fc.record({ kind: fc.constant('insert' as const), at: position, bytes: fc.uint8Array({ minLength: 1, maxLength: 8 }) }),
  fc.record({ kind: fc.constant('delete' as const), at: position, count: fc.integer({ min: 1, max: 8 }) }),
);

function mutate(src: Uint8Array, muts: Mutation[]): Uint8Array {
  let b: Uint8Array = src.slice();
  for (const m of muts) {
    if (b.length === 0) break;
    const at = m.at % b.length;
    if (m.kind === 'flip') b[at] ^= 1 << m.bit;
    else if (m.kind === 'set') b[at] = m.value;
    else if (m.kind === 'truncate') b = b.slice(0, at);
    else if (m.kind === 'insert') b = concat([b.subarray(0, at), m.bytes, b.subarray(at)]);
    else b = concat([b.subarray(0, at), b.subarray(at + m.count)]);
  }
  return b;
}

const ascii = (s: string) => Uint8Array.from(s, (c) => c.charCodeAt(0));
const maxPixelsArb = fc.constantFrom(16, 64, 4096);
const smallDim = fc.integer({ min: 1, max: 12 });

// ------------------------------------------------------------ PFM

const decPfm = (b: Uint8Array, maxPixels: number) => decodePfm(b, NAME, { maxPixels });

const validPfm = fc
  .record({ w: smallDim, h: smallDim, le: fc.boolean(), seed: fc.integer() })
  .map(({ w, h, le, seed }) => {
    const data = Float32Array.from({ length: w * h }, (_, i) => Math.sin(seed + i) * 100);
    return new Uint8Array(encodePfm({ width: w, height: h, data }, { littleEndian: le }));
  });

const whitespace = fc.array(fc.constantFrom(' ', '\t', '\n', '\r', '\v', '\f'), { minLength: 1, maxLength: 3 }).map((a) => a.join(''));
const sizeToken = fc.oneof(
  fc.integer({ min: 0, max: 70 }).map(String),
  fc.integer({ min: 0, max: 2 ** 31 }).map(String),
  fc.bigInt({ min: 0n, max: 10n ** 30n }).map(String),
  fc.constantFrom('-3', '1e3', '0x10', '+4', '3.0', '', '٣'),
);
const scaleToken = fc.oneof(fc.constantFrom('-1', '1', '0', '-0.0', '2.5', '-1e-3', 'nan', 'inf', '1e999', '--1'), fc.double().map(String));

/** The property on valid files damaged by 1-4 byte mutations: decoded within the limit, or a typed one-line error. */
function mutatedValidFiles(valid: fc.Arbitrary<Uint8Array>, dec: Parameters<typeof checkContract>[0], numRuns: number): void {
  it('mutated valid files', () => {
    fc.assert(
      fc.property(valid, fc.array(mutation, { minLength: 1, maxLength: 4 }), maxPixelsArb, (file, muts, mp) => {
        checkContract(dec, mutate(file, muts), mp);
      }),
      { numRuns },
    );
  });
}

describe('PFM decoder under hostile input', () => {
  it('random bytes (with and without a "Pf" start)', () => {
    fc.assert(
      fc.property(fc.uint8Array({ maxLength: 300 }), fc.boolean(), maxPixelsArb, (bytes, prefix, mp) => {
        checkContract(decPfm, prefix ? concat([ascii('Pf\n'), bytes]) : bytes, mp);
      }),
      { numRuns: 2000 },
    );
  });

  mutatedValidFiles(validPfm, decPfm, 2000);

  it('random headers with random sizes: a well-formed header above the limit is refused by the limit', () => {
    fc.assert(
      fc.property(
        fc.constantFrom('Pf', 'Pf', 'PF', 'pf', 'P5'),
        sizeToken,
        sizeToken,
        scaleToken,
        fc.tuple(whitespace, whitespace, whitespace),
        fc.constantFrom(' ', '\n', '\r'),
        fc.integer({ min: -8, max: 8 }),
        maxPixelsArb,
        (magic, wt, ht, st, [s1, s2, s3], last, bodyDelta, mp) => {
          const header = `${magic}${s1}${wt}${s2}${ht}${s3}${st}${last}`;
          const w = /^[0-9]+$/.test(wt) ? Number(wt) : NaN;
          const h = /^[0-9]+$/.test(ht) ? Number(ht) : NaN;
          const scale = Number(st);
          const wellFormed = magic === 'Pf' && w > 0 && h > 0 && /^[+-]?([0-9]+\.?[0-9]*|\.[0-9]+)([eE][+-]?[0-9]+)?$/.test(st) && Number.isFinite(scale) && scale !== 0;
          // the body is sized from the header when the size is small, else just a few bytes
          const small = w * h <= 4096;
          const bodyLen = Math.max(0, (small ? w * h * 4 : 16) + bodyDelta);
          const out = checkContract(decPfm, concat([ascii(header), new Uint8Array(bodyLen)]), mp);
          if (wellFormed && w * h > mp) {
            expect(out.ok).toBe(false);
            if (!out.ok) expect(out.message).toMatch(/above the limit/);
          }
          if (wellFormed && w * h <= mp && bodyDelta === 0) expect(out).toEqual({ ok: true, width: w, height: h });
        },
      ),
      { numRuns: 2000 },
    );
  });
});

// ------------------------------------------------------------ PNG

const decPng = (b: Uint8Array, maxPixels: number) => decodePng(b, NAME, { maxPixels });
const pngChannels = (img: unknown) => (img as { channels: number }).channels;

/** Rewrites every CRC that the (possibly mutated) chunk layout still allows, so mutations reach the pixel decoder. */
function fixCrcs(b: Uint8Array): Uint8Array {
  const out = b.slice();
  const dv = new DataView(out.buffer);
  let pos = 8;
  while (pos + 12 <= out.length) {
    const len = dv.getUint32(pos);
    if (pos + 12 + len > out.length) break;
    dv.setUint32(pos + 8 + len, specCrc32(out.subarray(pos + 4, pos + 8 + len)));
    pos += 12 + len;
  }
  return out;
}

const validPng = fc.oneof(
  fc
    .record({ w: smallDim, h: smallDim, channels: fc.constantFrom(1, 2, 3, 4) as fc.Arbitrary<1 | 2 | 3 | 4>, depth: fc.constantFrom(8, 16) as fc.Arbitrary<8 | 16>, seed: fc.nat() })
    .map(({ w, h, channels, depth, seed }) => {
      const n = w * h * channels;
      const data = depth === 16 ? Uint16Array.from({ length: n }, (_, i) => (seed + i * 7919) % 65536) : Uint8Array.from({ length: n }, (_, i) => (seed + i * 31) % 256);
      return new Uint8Array(encodePng({ width: w, height: h, channels, bitDepth: depth, data }));
    }),
  // palette, 2-bit indices, with tRNS
  fc.constant(buildPng(ihdr(4, 2, 2, 3), unfilteredScanlines([Uint8Array.of(0x19), Uint8Array.of(0xe4)]), [pngChunk('PLTE', Uint8Array.from([1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12])), pngChunk('tRNS', Uint8Array.of(0, 128))])),
  // Adam7-interlaced 16-bit gray
  fc.constant(buildPng(ihdr(5, 4, 16, 0, 1), adam7Scanlines(be16(Array.from({ length: 20 }, (_, i) => i * 3001)), 5, 4, 2))),
  // 4-bit gray
  fc.constant(buildPng(ihdr(3, 2, 4, 0), unfilteredScanlines([Uint8Array.of(0x05, 0xf0), Uint8Array.of(0x12, 0x30)]))),
);

describe('PNG decoder under hostile input', () => {
  it('random bytes (with and without the PNG signature)', () => {
    fc.assert(
      fc.property(fc.uint8Array({ maxLength: 300 }), fc.boolean(), maxPixelsArb, (bytes, sig, mp) => {
        checkContract(decPng, sig ? concat([PNG_SIGNATURE, bytes]) : bytes, mp, pngChannels);
      }),
      { numRuns: 1000 },
    );
  });

  it('mutated valid files, with CRCs repaired half of the time so the damage reaches the pixel decoder', () => {
    fc.assert(
      fc.property(validPng, fc.array(mutation, { minLength: 1, maxLength: 4 }), fc.boolean(), maxPixelsArb, (file, muts, repair, mp) => {
        const m = mutate(file, muts);
        checkContract(decPng, repair ? fixCrcs(m) : m, mp, pngChannels);
        checkContract((b, max) => decodePngDisparity(b, NAME, { scale: 4 }, { maxPixels: max }), repair ? fixCrcs(m) : m, mp);
      }),
      { numRuns: 2000 },
    );
  });

  it('random IHDR fields and image data: a valid IHDR above the limit is refused by the limit', () => {
    const dim = fc.oneof(fc.integer({ min: 0, max: 20 }), fc.integer({ min: 0, max: 0xffffffff }));
    fc.assert(
      fc.property(
        dim,
        dim,
        fc.constantFrom(0, 1, 2, 3, 4, 5, 8, 16, 32),
        fc.integer({ min: 0, max: 7 }),
        fc.integer({ min: 0, max: 2 }),
        fc.uint8Array({ maxLength: 200 }),
        fc.boolean(),
        maxPixelsArb,
        (w, h, depth, colorType, interlace, payload, deflate, mp) => {
          const idat = pngChunk('IDAT', deflate ? deflateSync(payload) : payload);
          const plte = pngChunk('PLTE', new Uint8Array(48));
          const file = concat([PNG_SIGNATURE, ihdr(w, h, depth, colorType, interlace), plte, idat, pngChunk('IEND', new Uint8Array(0))]);
          const out = checkContract(decPng, file, mp, pngChannels);
          const allowed: Record<number, number[]> = { 0: [1, 2, 4, 8, 16], 2: [8, 16], 3: [1, 2, 4, 8], 4: [8, 16], 6: [8, 16] };
          const validHeader = w > 0 && h > 0 && w < 2 ** 31 && h < 2 ** 31 && (allowed[colorType] ?? []).includes(depth) && interlace < 2;
          if (validHeader && w * h > mp) {
            expect(out.ok).toBe(false);
            if (!out.ok) expect(out.message).toMatch(/above the limit/);
          }
        },
      ),
      { numRuns: 1500 },
    );
  });
});

// ------------------------------------------------------------ .npy

const decNpy = (b: Uint8Array, maxPixels: number) => decodeNpy(b, NAME, { maxPixels });
const NPY_MAGIC = concat([Uint8Array.of(0x93), ascii('NUMPY')]);

function npyFile(major: number, header: string, body: Uint8Array): Uint8Array {
  const h = ascii(header);
  const len = major === 1 ? Uint8Array.of(h.length & 0xff, (h.length >> 8) & 0xff) : Uint8Array.of(h.length & 0xff, (h.length >> 8) & 0xff, (h.length >> 16) & 0xff, 0);
  return concat([NPY_MAGIC, Uint8Array.of(major, 0), len, h, body]);
}

const validNpy = fc.oneof(
  fc.record({ w: smallDim, h: smallDim, f8: fc.boolean(), seed: fc.integer() }).map(({ w, h, f8, seed }) => {
    const data = Float32Array.from({ length: w * h }, (_, i) => Math.cos(seed + i) * 50);
    return new Uint8Array(encodeNpy({ width: w, height: h, data }, f8 ? 'float64' : 'float32'));
  }),
  fc
    .record({ w: smallDim, h: smallDim, major: fc.constantFrom(1, 2, 3), descr: fc.constantFrom('>f4', '<f8', '>f8', '|u1', '<i2', '>u4', '<f2') })
    .map(({ w, h, major, descr }) => npyFile(major, `{"descr": "${descr}", "fortran_order": False, "shape": (${h}, ${w}, 1)}\n`, new Uint8Array(w * h * Number(descr[2])).fill(0x41))),
);

describe('.npy decoder under hostile input', () => {
  it('random bytes (with and without the magic)', () => {
    fc.assert(
      fc.property(fc.uint8Array({ maxLength: 300 }), fc.boolean(), maxPixelsArb, (bytes, magic, mp) => {
        checkContract(decNpy, magic ? concat([NPY_MAGIC, bytes]) : bytes, mp);
      }),
      { numRuns: 1000 },
    );
  });

  mutatedValidFiles(validNpy, decNpy, 1500);

  it('random header dictionaries with random shapes: a valid header above the limit is refused by the limit', () => {
    const dimArb = fc.oneof(fc.integer({ min: 0, max: 40 }), fc.integer({ min: 0, max: 2 ** 31 }), fc.bigInt({ min: 0n, max: 10n ** 21n }).map(Number));
    fc.assert(
      fc.property(
        fc.constantFrom(1, 2, 3),
        fc.constantFrom('<f4', '>f8', '|u1', '<c8', '<f4 ', "f4", '<i8', '|f4'),
        fc.boolean(),
        fc.array(dimArb, { minLength: 0, maxLength: 4 }),
        fc.constantFrom("'", '"'),
        fc.boolean(),
        fc.integer({ min: -4, max: 4 }),
        maxPixelsArb,
        (major, descr, fortran, shape, q, trailingComma, bodyDelta, mp) => {
          const shapeText = `(${shape.map((d) => String(BigInt(Math.floor(d)))).join(', ')}${shape.length === 1 || trailingComma ? ',' : ''})`;
          const header = `{${q}descr${q}: ${q}${descr}${q}, ${q}fortran_order${q}: ${fortran ? 'True' : 'False'}, ${q}shape${q}: ${shapeText}${trailingComma ? ', ' : ''}}\n`;
          const size = Number(descr[2]);
          const n = shape.length >= 2 ? shape[0] * shape[1] : NaN;
          const small = n <= 4096;
          const body = new Uint8Array(Math.max(0, (small ? n * size : 16) + bodyDelta));
          const out = checkContract(decNpy, npyFile(major, header, body), mp);
          const accepted = ['<f4', '>f8', '|u1'].includes(descr) && !fortran;
          const twoD = shape.length === 2 || (shape.length === 3 && shape[2] === 1);
          const valid = accepted && twoD && shape[0] > 0 && shape[1] > 0 && Number.isSafeInteger(n);
          if (valid && n > mp) {
            expect(out.ok).toBe(false);
            if (!out.ok) expect(out.message).toMatch(/above the limit/);
          }
          if (valid && n <= mp && bodyDelta === 0) expect(out).toEqual({ ok: true, width: shape[1], height: shape[0] });
        },
      ),
      { numRuns: 1500 },
    );
  });
});

