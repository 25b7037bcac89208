/**
 * Error cases: every user-caused problem is an InputError (or UsageError for a
 * missing option) whose one-line message names the file. Source: the parser
 * contract in the README's "Exit codes" ("Every error a user can cause ... one line ... names it")
 * and the format descriptions (PFM in the README's "File formats", NEP 1, PNG spec).
 */
import { describe, expect, it } from 'vitest';
import { InputError, UsageError } from '../../src/core/errors.js';
import { decodeNpy, decodePfm, decodePng, decodePngDisparity, encodeNpy, encodePfm, encodePng, encodePngDisparity } from '../../src/io/index.js';
import { buildPng, concat, ihdr, pngChunk, PNG_SIGNATURE, unfilteredScanlines } from './helpers.js';

const ascii = (s: string) => Uint8Array.from(s, (c) => c.charCodeAt(0));

/** Runs f, expects an InputError naming `file` in a single-line message matching `re`. */
function expectInputError(f: () => unknown, file: string, re: RegExp): void {
  let caught: unknown;
  try {
    f();
  } catch (e) {
    caught = e;
  }
  expect(caught).toBeInstanceOf(InputError);
  const err = caught as InputError;
  expect(err.file).toBe(file);
  expect(err.message.startsWith(`${file}: `)).toBe(true);
  expect(err.message).not.toMatch(/\n/);
  expect(err.message).toMatch(re);
}

const pfm2x2 = () => new Uint8Array(encodePfm({ width: 2, height: 2, data: Float32Array.of(1, 2, 3, 4) }));

describe('PFM errors', () => {
  it('bad magic', () => {
    expectInputError(() => decodePfm(ascii('P6\n2 2\n255\n'), 'x.pfm'), 'x.pfm', /not a PFM/);
    expectInputError(() => decodePfm(new Uint8Array(0), 'empty.pfm'), 'empty.pfm', /not a PFM/);
  });
  it('3-channel PF is refused (documented choice)', () => {
    const file = concat([ascii('PF\n1 1\n-1\n'), new Uint8Array(12)]);
    expectInputError(() => decodePfm(file, 'rgb.pfm'), 'rgb.pfm', /3-channel/);
  });
  it('zero, negative and non-integer sizes', () => {
    expectInputError(() => decodePfm(ascii('Pf\n0 2\n-1\n'), 'z.pfm'), 'z.pfm', /width is zero/);
    expectInputError(() => decodePfm(ascii('Pf\n2 -2\n-1\n'), 'n.pfm'), 'n.pfm', /height "-2" is not a positive integer/);
    expectInputError(() => decodePfm(ascii('Pf\n2.5 2\n-1\n'), 'f.pfm'), 'f.pfm', /width "2.5"/);
  });
  it('zero or non-numeric scale', () => {
    expectInputError(() => decodePfm(concat([ascii('Pf\n1 1\n0\n'), new Uint8Array(4)]), 's.pfm'), 's.pfm', /byte order/);
    expectInputError(() => decodePfm(concat([ascii('Pf\n1 1\nabc\n'), new Uint8Array(4)]), 's.pfm'), 's.pfm', /scale "abc"/);
  });
  it('truncated body: a header that lies about its size (larger than the body)', () => {
    const good = pfm2x2();
    expectInputError(() => decodePfm(good.subarray(0, good.length - 1), 't.pfm'), 't.pfm', /truncated.*2x2 \(16 bytes of data\) but 15/);
    const lying = concat([ascii('Pf\n4 4\n-1\n'), new Uint8Array(16)]);
    expectInputError(() => decodePfm(lying, 'lie.pfm'), 'lie.pfm', /truncated: header says 4x4/);
  });
  it('truncated header', () => {
    expectInputError(() => decodePfm(ascii('Pf\n2 2'), 'h.pfm'), 'h.pfm', /truncated/);
    expectInputError(() => decodePfm(ascii('Pf\n2 2\n-1'), 'h.pfm'), 'h.pfm', /truncated/);
  });
  it('trailing bytes are refused (documented choice); a CR LF header is one of the causes', () => {
    expectInputError(() => decodePfm(concat([pfm2x2(), Uint8Array.of(0)]), 'tr.pfm'), 'tr.pfm', /1 bytes after/);
    const crlf = concat([ascii('Pf\r\n1 1\r\n-1\r\n'), new Uint8Array(4)]);
    expectInputError(() => decodePfm(crlf, 'crlf.pfm'), 'crlf.pfm', /more than one whitespace byte/);
  });
  it('absurd size above the limit is refused before allocating', () => {
    // 100000 x 100000 float32 would be 40 GB: refused by the default 200 Mpx limit
    // with no data present at all (had it allocated, it would have thrown a RangeError).
    expectInputError(() => decodePfm(ascii('Pf\n100000 100000\n-1\n'), 'big.pfm'), 'big.pfm', /above the limit of 200000000/);
    // the limit option works with a small limit: 2x2 = 4 pixels > 3
    expectInputError(() => decodePfm(pfm2x2(), 'small.pfm', { maxPixels: 3 }), 'small.pfm', /4 pixels\) is above the limit of 3/);
    expect(decodePfm(pfm2x2(), 'ok.pfm', { maxPixels: 4 }).width).toBe(2);
  });
  it('a bad maxPixels option is a UsageError naming the option', () => {
    expect(() => decodePfm(pfm2x2(), 'a.pfm', { maxPixels: 0 })).toThrow(UsageError);
    expect(() => decodePfm(pfm2x2(), 'a.pfm', { maxPixels: NaN })).toThrow(/^maxPixels: /);
  });
});

describe('.npy errors', () => {
  const good = () => new Uint8Array(encodeNpy({ width: 3, height: 2, data: Float32Array.of(1, 2, 3, 4, 5, 6) }));
  function withHeader(dict: string, data = new Uint8Array(24)): Uint8Array {
    const h = ascii(dict + '\n');
    return concat([Uint8Array.of(0x93), ascii('NUMPY'), Uint8Array.of(1, 0, h.length & 0xff, h.length >> 8), h, data]);
  }
  it('bad magic and unknown version', () => {
    expectInputError(() => decodeNpy(ascii('PK\x03\x04 not npy'), 'z.npy'), 'z.npy', /not a \.npy/);
    const v9 = good();
    v9[6] = 9;
    expectInputError(() => decodeNpy(v9, 'v.npy'), 'v.npy', /version 9\.0/);
  });
  it('Fortran order refused', () => {
    expectInputError(
      () => decodeNpy(withHeader("{'descr': '<f4', 'fortran_order': True, 'shape': (2, 3), }"), 'f.npy'),
      'f.npy',
      /Fortran/,
    );
  });
  it('unsupported dtypes and shapes', () => {
    expectInputError(() => decodeNpy(withHeader("{'descr': '<c8', 'fortran_order': False, 'shape': (2, 3), }"), 'c.npy'), 'c.npy', /dtype "<c8"/);
    expectInputError(() => decodeNpy(withHeader("{'descr': '<i8', 'fortran_order': False, 'shape': (2, 3), }"), 'c.npy'), 'c.npy', /dtype "<i8"/);
    expectInputError(() => decodeNpy(withHeader("{'descr': [('a', '<f4')], 'fortran_order': False, 'shape': (2, 3), }"), 's.npy'), 's.npy', /structured/);
    expectInputError(() => decodeNpy(withHeader("{'descr': '<f4', 'fortran_order': False, 'shape': (6,), }"), 'd.npy'), 'd.npy', /shape \(6\)/);
    expectInputError(() => decodeNpy(withHeader("{'descr': '<f4', 'fortran_order': False, 'shape': (2, 1, 3), }"), 'd.npy'), 'd.npy', /shape \(2, 1, 3\)/);
    expectInputError(() => decodeNpy(withHeader("{'descr': '<f4', 'fortran_order': False, 'shape': (0, 3), }"), 'e.npy'), 'e.npy', /empty/);
  });
  it('header that is not a dictionary, or code instead of a literal, is refused without eval', () => {
    expectInputError(() => decodeNpy(withHeader("__import__('os').system('true')"), 'p.npy'), 'p.npy', /not a valid dictionary/);
    expectInputError(() => decodeNpy(withHeader("{'descr': '<f4', 'fortran_order': False}"), 'k.npy'), 'k.npy', /lacks/);
  });
  it('truncated data, trailing data, truncated header, size above the limit', () => {
    const g = good();
    expectInputError(() => decodeNpy(g.subarray(0, g.length - 2), 't.npy'), 't.npy', /truncated: shape 2x3 of <f4 needs 24 bytes, 22/);
    expectInputError(() => decodeNpy(concat([g, Uint8Array.of(1)]), 'x.npy'), 'x.npy', /1 bytes after/);
    expectInputError(() => decodeNpy(g.subarray(0, 40), 'h.npy'), 'h.npy', /header is truncated/);
    expectInputError(
      () => decodeNpy(withHeader("{'descr': '<f8', 'fortran_order': False, 'shape': (300000, 300000), }"), 'big.npy'),
      'big.npy',
      /above the limit/,
    );
    expectInputError(() => decodeNpy(g, 'small.npy', { maxPixels: 5 }), 'small.npy', /6 pixels\) is above the limit of 5/);
  });
});

describe('PNG errors', () => {
  const tiny = () => buildPng(ihdr(2, 1, 8, 0), unfilteredScanlines([Uint8Array.of(1, 2)]));
  it('bad signature, truncated file, missing IHDR', () => {
    expectInputError(() => decodePng(ascii('GIF89a......'), 'g.png'), 'g.png', /not a PNG/);
    const t = tiny();
    expectInputError(() => decodePng(t.subarray(0, t.length - 20), 't.png'), 't.png', /truncated/);
  });
  it('size above the limit refused from the IHDR alone (no IDAT needed)', () => {
    // IHDR says 60000 x 60000 with no image data following: refused by the limit first.
    const onlyHeader = concat([Uint8Array.of(0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a), ihdr(60000, 60000, 16, 6)]);
    expectInputError(() => decodePng(onlyHeader, 'huge.png'), 'huge.png', /3600000000 pixels\) is above the limit/);
    expectInputError(() => decodePng(tiny(), 'small.png', { maxPixels: 1 }), 'small.png', /above the limit of 1/);
  });
  it('invalid IHDR fields (PNG spec table of allowed bit depths)', () => {
    expectInputError(() => decodePng(buildPng(ihdr(2, 1, 16, 3), new Uint8Array(8)), 'p.png'), 'p.png', /bit depth 16 is not valid for colour type 3/);
    expectInputError(() => decodePng(buildPng(ihdr(0, 1, 8, 0), new Uint8Array(2)), 'z.png'), 'z.png', /size 0x1/);
    expectInputError(() => decodePng(buildPng(ihdr(2, 1, 8, 5), new Uint8Array(3)), 'c.png'), 'c.png', /colour type 5/);
  });
  it('image data shorter than the IHDR says', () => {
    const short = buildPng(ihdr(4, 4, 8, 0), unfilteredScanlines([Uint8Array.of(1, 2, 3, 4)]));
    // 4x4 8-bit gray: 4 rows of (1 filter byte + 4 samples) = 20 bytes; one row written = 5 (by hand)
    expectInputError(() => decodePng(short, 's.png'), 's.png', /truncated: 5 of 20 bytes/);
  });
  it('image data longer than the IHDR says, and a damaged zlib stream', () => {
    const long = buildPng(ihdr(1, 1, 8, 0), unfilteredScanlines([Uint8Array.of(1), Uint8Array.of(2)]));
    expectInputError(() => decodePng(long, 'l.png'), 'l.png', /longer than the 1x1 image/);
    // a zlib header (0x78 0x9c, RFC 1950) followed by an invalid deflate block type (RFC 1951: BTYPE 11 is reserved)
    const broken = concat([PNG_SIGNATURE, ihdr(1, 1, 8, 0), pngChunk('IDAT', Uint8Array.of(0x78, 0x9c, 0x07, 0x00)), pngChunk('IEND', new Uint8Array(0))]);
    expectInputError(() => decodePng(broken, 'z.png'), 'z.png', /corrupt/);
  });
  it('palette index beyond the palette, palette of a bad length, tRNS longer than the palette', () => {
    const plte2 = pngChunk('PLTE', Uint8Array.of(1, 2, 3, 4, 5, 6)); // 2 entries
    const row = unfilteredScanlines([Uint8Array.of(0, 1, 2)]); // index 2 is beyond
    expectInputError(() => decodePng(buildPng(ihdr(3, 1, 8, 3), row, [plte2]), 'pal.png'), 'pal.png', /palette index 2 at \(x 2, y 0\) is beyond the 2-entry palette/);
    expectInputError(() => decodePng(buildPng(ihdr(3, 1, 8, 3), row, [pngChunk('PLTE', Uint8Array.of(1, 2))]), 'pl.png'), 'pl.png', /palette has an invalid length \(2 bytes\)/);
    expectInputError(
      () => decodePng(buildPng(ihdr(3, 1, 8, 3), row, [plte2, pngChunk('tRNS', Uint8Array.of(1, 2, 3))]), 'tr.png'),
      'tr.png',
      /tRNS chunk has more entries than the palette/,
    );
    expectInputError(() => decodePng(buildPng(ihdr(3, 1, 8, 3), row), 'np.png'), 'np.png', /no PLTE/);
  });
  it('an unknown critical chunk is refused (PNG spec: critical = uppercase first letter)', () => {
    const file = buildPng(ihdr(1, 1, 8, 0), unfilteredScanlines([Uint8Array.of(1)]), [pngChunk('ZZZZ', Uint8Array.of(1))]);
    expectInputError(() => decodePng(file, 'cc.png'), 'cc.png', /unknown critical chunk ZZZZ/);
    // an ancillary one (lowercase first letter) is skipped
    const ok = buildPng(ihdr(1, 1, 8, 0), unfilteredScanlines([Uint8Array.of(1)]), [pngChunk('zzZZ', Uint8Array.of(1))]);
    expect(Array.from(decodePng(ok, 'an.png').data)).toEqual([1]);
  });
  it('unknown filter type', () => {
    const file = buildPng(ihdr(2, 1, 8, 0), Uint8Array.of(5, 1, 2));
    expectInputError(() => decodePng(file, 'f.png'), 'f.png', /row 0 has an unknown filter type 5/);
  });
  it('disparity PNG must be gray 8/16 bit; scale and invalid code are checked', () => {
    const rgb = encodePng({ width: 1, height: 1, channels: 3, bitDepth: 8, data: Uint8Array.of(1, 2, 3) });
    expectInputError(() => decodePngDisparity(rgb, 'rgb.png', { scale: 1 }), 'rgb.png', /8- or 16-bit gray/);
    expectInputError(() => decodePngDisparity(tiny(), 'd.png', { scale: 0 }), 'd.png', /scale must be a positive number/);
    expectInputError(() => decodePngDisparity(tiny(), 'd.png', { scale: 1, invalid: 256 }), 'd.png', /invalid code must be an integer in 0\.\.255/);
  });
  it('disparity PNG encoding refuses what cannot be stored', () => {
    const img = (v: number[]) => ({ width: v.length, height: 1, data: Float32Array.from(v) });
    // 300 px * scale 256 = 76800 > 65535 (worked by hand)
    expectInputError(() => encodePngDisparity(img([1, 300]), { scale: 256 }, 'out.png'), 'out.png', /300 at \(x 1, y 0\) times scale 256 = 76800 does not fit 16 bits/);
    expectInputError(() => encodePngDisparity(img([1, 256]), { scale: 1, bitDepth: 8 }, 'out.png'), 'out.png', /does not fit 8 bits/);
    // 0.001 * 256 = 0.256 rounds to 0 = the invalid code
    expectInputError(() => encodePngDisparity(img([0.001]), { scale: 256 }, 'out.png'), 'out.png', /rounds onto the invalid code 0/);
    expectInputError(() => encodePngDisparity(img([2, -0.5]), { scale: 256, invalid: 65535 }, 'out.png'), 'out.png', /negative disparity -0.5/);
  });
});
