/**
 * Files built byte by byte from the format descriptions, then decoded by src/io.
 * Each expected value comes from the bytes written in the test itself.
 */
import pngjs from 'pngjs';
import { deflateSync } from 'node:zlib';
import { describe, expect, it } from 'vitest';
import { decodeNpy, decodePfm, decodePng, encodeNpy, encodePfm, encodePng } from '../../src/io/index.js';
import {
  adam7Scanlines,
  be16,
  buildPng,
  concat,
  filteredScanlines,
  ihdr,
  pngChunk,
  specCrc32,
  unfilteredScanlines,
  PNG_SIGNATURE,
} from './helpers.js';

const ascii = (s: string) => Uint8Array.from(s, (c) => c.charCodeAt(0));

/** IEEE-754 bytes of the values, float32 (`bytes` 4) or float64 (8), in the given byte order. */
function packed(values: number[], little: boolean, bytes: 4 | 8): Uint8Array {
  const out = new Uint8Array(values.length * bytes);
  const dv = new DataView(out.buffer);
  values.forEach((v, i) => (bytes === 4 ? dv.setFloat32(4 * i, v, little) : dv.setFloat64(8 * i, v, little)));
  return out;
}
const floats = (values: number[], little: boolean): Uint8Array => packed(values, little, 4);

describe('PFM built by hand', () => {
  it('big-endian, scale 2.5, rows bottom to top; scale magnitude ignored; inf/NaN -> NaN', () => {
    // README, "File formats": positive scale = big-endian, rows bottom to top,
    // magnitude ignored, infinities and NaN invalid. Bottom row first in the file.
    const bottom = [7.5, -1.25, Infinity];
    const top = [0.5, NaN, 1e-3];
    const file = concat([ascii('Pf\n3 2\n2.5\n'), floats(bottom, false), floats(top, false)]);
    const img = decodePfm(file, 'hand.pfm');
    expect([img.width, img.height]).toEqual([3, 2]); // header tokens written above
    // top row first in memory; values as stored (not multiplied by 2.5); 1e-3 as float32
    expect(Array.from(img.data)).toEqual([0.5, NaN, Math.fround(1e-3), 7.5, -1.25, NaN]);
  });

  it('little-endian with mixed whitespace between tokens', () => {
    // README, "File formats": tokens separated by any whitespace; negative scale = little-endian.
    const file = concat([ascii('Pf \t 2\r\n\n2   -0.5\n'), floats([3, 4], true), floats([1, 2], true)]);
    const img = decodePfm(file, 'ws.pfm');
    expect(Array.from(img.data)).toEqual([1, 2, 3, 4]); // top row = second row in the file
  });

  it('exactly one whitespace byte after the scale, even when the first data byte is whitespace', () => {
    // 2^-63 as a big-endian float32 is 0x20 00 00 00: its first byte is a space (IEEE 754 binary32).
    const v = 2 ** -63;
    const body = floats([v], false);
    expect(body[0]).toBe(0x20); // worked out by hand: exponent 127-63 = 64 -> 0x20000000
    const img = decodePfm(concat([ascii('Pf\n1 1\n1\n'), body]), 'space.pfm');
    expect(img.data[0]).toBe(v);
  });

  it('encodePfm writes the header and bottom row first, little-endian by default', () => {
    // Expected bytes assembled by hand from the README's PFM layout ("File formats").
    const img = { width: 2, height: 2, data: Float32Array.from([1, 2, 3, 4]) };
    const le = encodePfm(img);
    expect(new Uint8Array(le)).toEqual(concat([ascii('Pf\n2 2\n-1\n'), floats([3, 4, 1, 2], true)]));
    const be = encodePfm(img, { littleEndian: false });
    expect(new Uint8Array(be)).toEqual(concat([ascii('Pf\n2 2\n1\n'), floats([3, 4, 1, 2], false)]));
  });
});

describe('PNG built by hand (ISO/IEC 15948 / W3C PNG: IHDR, IDAT zlib stream, IEND, CRC-32 per Annex D)', () => {
  it('16-bit gray keeps values above 255 exactly', () => {
    const values = [0, 255, 256, 1000, 65535, 4660];
    const file = buildPng(ihdr(3, 2, 16, 0), unfilteredScanlines([be16(values.slice(0, 3)), be16(values.slice(3))]));
    const img = decodePng(file, 'g16.png');
    expect(img.bitDepth).toBe(16);
    expect(img.channels).toBe(1);
    expect(img.data).toBeInstanceOf(Uint16Array);
    expect(Array.from(img.data)).toEqual(values); // the samples written above
  });

  it('16-bit RGBA and gray+alpha keep every sample', () => {
    const rgba = [1, 300, 65535, 12345, 40000, 2, 3, 0];
    const img = decodePng(buildPng(ihdr(2, 1, 16, 6), unfilteredScanlines([be16(rgba)])), 'rgba16.png');
    expect([img.channels, img.bitDepth]).toEqual([4, 16]);
    expect(Array.from(img.data)).toEqual(rgba);
    const ga = [513, 65534, 7, 256];
    const img2 = decodePng(buildPng(ihdr(2, 1, 16, 4), unfilteredScanlines([be16(ga)])), 'ga16.png');
    expect([img2.channels, img2.bitDepth]).toEqual([2, 16]);
    expect(Array.from(img2.data)).toEqual(ga);
  });

  it('8-bit RGB', () => {
    const rgb = [10, 20, 30, 250, 251, 252];
    const img = decodePng(buildPng(ihdr(1, 2, 8, 2), unfilteredScanlines([Uint8Array.from(rgb.slice(0, 3)), Uint8Array.from(rgb.slice(3))])), 'rgb8.png');
    expect([img.width, img.height, img.channels, img.bitDepth]).toEqual([1, 2, 3, 8]);
    expect(Array.from(img.data)).toEqual(rgb);
  });

  it('every filter type (None, Sub, Up, Average, Paeth) reverses to the original rows; pngjs agrees', () => {
    // Rows filtered in the test with the spec formulas (helpers.filteredScanlines);
    // pngjs (a general-purpose decoder, skipRescale) decodes the same bytes as a second opinion.
    const cases = [
      { depth: 8, colorType: 2, channels: 3, bytesPerSample: 1 },
      { depth: 16, colorType: 4, channels: 2, bytesPerSample: 2 },
      { depth: 8, colorType: 0, channels: 1, bytesPerSample: 1 },
    ];
    for (const c of cases) {
      const w = 7;
      const h = 10; // two rounds of the five filter types
      const rowLen = w * c.channels * c.bytesPerSample;
      // half the rows vary widely, half take only 6 values (many Paeth ties between a, b and c)
      const rows = Array.from({ length: h }, (_, y) =>
        Uint8Array.from({ length: rowLen }, (_, i) => (y % 4 < 2 ? (y * 37 + i * 11 + ((i * y) % 7) * 29) & 0xff : ((i * 7 + y * 3) % 11) % 6)),
      );
      const file = concat([PNG_SIGNATURE, ihdr(w, h, c.depth, c.colorType), pngChunk('IDAT', deflateSync(filteredScanlines(rows, c.channels * c.bytesPerSample, [0, 1, 2, 3, 4]))), pngChunk('IEND', new Uint8Array(0))]);
      const img = decodePng(file, 'filters.png');
      const want: number[] = [];
      for (const r of rows) {
        if (c.bytesPerSample === 1) want.push(...r);
        else for (let i = 0; i < r.length; i += 2) want.push((r[i] << 8) | r[i + 1]);
      }
      expect(Array.from(img.data)).toEqual(want);
      const ref = pngjs.PNG.sync.read(Buffer.from(file), { skipRescale: true });
      const refData = ref.data as unknown as ArrayLike<number>;
      const fromRef: number[] = [];
      for (let p = 0; p < w * h; p++) {
        if (c.channels === 1) fromRef.push(refData[4 * p]);
        else if (c.channels === 2) fromRef.push(refData[4 * p], refData[4 * p + 3]);
        else fromRef.push(refData[4 * p], refData[4 * p + 1], refData[4 * p + 2]);
      }
      expect(fromRef).toEqual(want);
    }
  });

  it('Paeth tie-break order a, b, c (PNG spec PaethPredictor), worked by hand', () => {
    // Row 0 = [2, 4] unfiltered; row 1 = [1, 9] with Paeth. At x = 1: a = 1, b = 4, c = 2,
    // p = a + b - c = 3, pa = 2, pb = 1, pc = 1 -> tie pb = pc resolves to b = 4, so the
    // filtered byte is 9 - 4 = 5. At x = 0: a = c = 0 and b = 2 (the byte above), so the
    // predictor is b and the filtered byte is 1 - 2 = 255 (mod 256).
    const lines = Uint8Array.of(0, 2, 4, 4, 255, 5);
    const img = decodePng(concat([PNG_SIGNATURE, ihdr(2, 2, 8, 0), pngChunk('IDAT', deflateSync(lines)), pngChunk('IEND', new Uint8Array(0))]), 'paeth.png');
    expect(Array.from(img.data)).toEqual([2, 4, 1, 9]);
  });

  it('2-bit gray rows with every filter type (filter unit is one byte below 8 bits per pixel)', () => {
    // 8 pixels of 2 bits = 2 bytes per row; bpp rounds up to 1 (PNG spec).
    const rows = [Uint8Array.of(0x1b, 0xe4), Uint8Array.of(0xff, 0x00), Uint8Array.of(0x55, 0xaa), Uint8Array.of(0x0f, 0xf0), Uint8Array.of(0x36, 0xc9)];
    const file = concat([PNG_SIGNATURE, ihdr(8, 5, 2, 0), pngChunk('IDAT', deflateSync(filteredScanlines(rows, 1, [0, 1, 2, 3, 4]))), pngChunk('IEND', new Uint8Array(0))]);
    const img = decodePng(file, 'g2.png');
    // unpack by hand: each byte holds 4 samples, high bits first; 2-bit v widens to v * 85
    const want: number[] = [];
    for (const r of rows) for (const byte of r) for (let s = 6; s >= 0; s -= 2) want.push(((byte >> s) & 3) * 85);
    expect(Array.from(img.data)).toEqual(want);
  });

  it('palette images expand to RGB, or RGBA with a tRNS chunk; 2-bit indices unpacked', () => {
    // PLTE: three RGB entries; 2-bit indices packed MSB first (PNG spec, "Scanline packing").
    const plte = pngChunk('PLTE', Uint8Array.from([255, 0, 0, 0, 128, 0, 1, 2, 3]));
    // indices 0,1,2,1 -> byte 0b00_01_10_01 = 0x19
    const lines = unfilteredScanlines([Uint8Array.of(0x19)]);
    const rgb = decodePng(buildPng(ihdr(4, 1, 2, 3), lines, [plte]), 'pal.png');
    expect([rgb.channels, rgb.bitDepth]).toEqual([3, 8]);
    expect(Array.from(rgb.data)).toEqual([255, 0, 0, 0, 128, 0, 1, 2, 3, 0, 128, 0]);
    const trns = pngChunk('tRNS', Uint8Array.from([10, 20])); // entry 2 has no alpha -> 255
    const rgba = decodePng(buildPng(ihdr(4, 1, 2, 3), lines, [plte, trns]), 'palt.png');
    expect(rgba.channels).toBe(4);
    expect(Array.from(rgba.data)).toEqual([255, 0, 0, 10, 0, 128, 0, 20, 1, 2, 3, 255, 0, 128, 0, 20]);
  });

  it('1- and 4-bit gray widen exactly to 8 bits (PNG spec sample depth scaling: v * 255 / (2^d - 1))', () => {
    // 4-bit: samples 0, 5, 15 packed as 0x05 0xF0 -> 0, 85, 255
    const g4 = decodePng(buildPng(ihdr(3, 1, 4, 0), unfilteredScanlines([Uint8Array.of(0x05, 0xf0)])), 'g4.png');
    expect(Array.from(g4.data)).toEqual([0, 85, 255]);
    // 1-bit: 1,0,1 packed as 0b101_00000 -> 255, 0, 255
    const g1 = decodePng(buildPng(ihdr(3, 1, 1, 0), unfilteredScanlines([Uint8Array.of(0xa0)])), 'g1.png');
    expect(Array.from(g1.data)).toEqual([255, 0, 255]);
    expect(g1.bitDepth).toBe(8);
  });

  it('a tRNS key colour in a gray image leaves the samples as stored (documented choice)', () => {
    const trns = pngChunk('tRNS', be16([7]));
    const img = decodePng(buildPng(ihdr(3, 1, 8, 0), unfilteredScanlines([Uint8Array.of(7, 8, 9)]), [trns]), 'key.png');
    expect(img.channels).toBe(1);
    expect(Array.from(img.data)).toEqual([7, 8, 9]);
  });

  it('Adam7-interlaced 16-bit gray decodes to the same samples', () => {
    const w = 5;
    const h = 4;
    const values = Array.from({ length: w * h }, (_, i) => i * 3001); // up to 57019, many above 255
    const file = buildPng(ihdr(w, h, 16, 0, 1), adam7Scanlines(be16(values), w, h, 2));
    expect(Array.from(decodePng(file, 'adam7.png').data)).toEqual(values);
  });

  it('bytes after IEND are ignored; a corrupted CRC is refused', () => {
    const file = buildPng(ihdr(1, 1, 8, 0), unfilteredScanlines([Uint8Array.of(42)]));
    expect(Array.from(decodePng(concat([file, ascii('trailing')]), 't.png').data)).toEqual([42]);
    const bad = file.slice();
    bad[bad.length - 13 - 1] ^= 1; // last byte of the IDAT CRC (IEND chunk is the last 12 bytes)
    expect(() => decodePng(bad, 'crc.png')).toThrow(/crc\.png: .*CRC/);
  });

  it('encodePng writes IHDR fields and CRCs that the spec CRC-32 reproduces', () => {
    const img = { width: 3, height: 2, channels: 3 as const, bitDepth: 16 as const, data: Uint16Array.from({ length: 18 }, (_, i) => i * 3000) };
    const file = new Uint8Array(encodePng(img));
    expect(file.subarray(0, 8)).toEqual(PNG_SIGNATURE);
    const dv = new DataView(file.buffer, file.byteOffset);
    let pos = 8;
    const types: string[] = [];
    while (pos < file.length) {
      const len = dv.getUint32(pos);
      const type = String.fromCharCode(...file.subarray(pos + 4, pos + 8));
      types.push(type);
      expect(dv.getUint32(pos + 8 + len)).toBe(specCrc32(file.subarray(pos + 4, pos + 8 + len)));
      if (type === 'IHDR') {
        // width, height, bit depth 16, colour type 2 (truecolour), no interlace
        expect([dv.getUint32(pos + 8), dv.getUint32(pos + 12), file[pos + 16], file[pos + 17], file[pos + 20]]).toEqual([3, 2, 16, 2, 0]);
      }
      pos += 12 + len;
    }
    expect(types[0]).toBe('IHDR');
    expect(types[types.length - 1]).toBe('IEND');
  });
});

describe('.npy built by hand (NEP 1)', () => {
  function npy(major: number, header: string, data: Uint8Array): Uint8Array {
    const h = ascii(header);
    const lenBytes = major === 1 ? new Uint8Array(2) : new Uint8Array(4);
    const dv = new DataView(lenBytes.buffer);
    if (major === 1) dv.setUint16(0, h.length, true);
    else dv.setUint32(0, h.length, true);
    return concat([Uint8Array.of(0x93), ascii('NUMPY'), Uint8Array.of(major, 0), lenBytes, h, data]);
  }
  const f64 = (values: number[], little: boolean): Uint8Array => packed(values, little, 8);

  it('version 1.0, <f4, shape (2, 3)', () => {
    const img = decodeNpy(npy(1, "{'descr': '<f4', 'fortran_order': False, 'shape': (2, 3), }      \n", floats([1, 2, 3, 4, 5, -6], true)), 'a.npy');
    expect([img.width, img.height]).toEqual([3, 2]);
    expect(Array.from(img.data)).toEqual([1, 2, 3, 4, 5, -6]);
  });

  it('version 2.0, >f8, shape (2, 2, 1), keys in another order with double quotes', () => {
    const img = decodeNpy(npy(2, '{"shape": (2, 2, 1), "fortran_order": False, "descr": ">f8"}\n', f64([0.1, Infinity, -2.5, 1e300], false)), 'b.npy');
    // float64 -> float32 rounding; infinity and 1e300 (beyond float32) -> NaN (documented)
    expect(Array.from(img.data)).toEqual([Math.fround(0.1), NaN, -2.5, NaN]);
  });

  it('version 3.0 header, <u2 integers taken as stored', () => {
    const u2 = new Uint8Array(4);
    new DataView(u2.buffer).setUint16(0, 513, true);
    new DataView(u2.buffer).setUint16(2, 65535, true);
    const img = decodeNpy(npy(3, "{'descr': '<u2', 'fortran_order': False, 'shape': (1, 2), }\n", u2), 'c.npy');
    expect(Array.from(img.data)).toEqual([513, 65535]);
  });

  it('encodeNpy: version 1.0, data aligned to 64 bytes, header ends in a newline', () => {
    // NEP 1: magic, version, uint16 LE header length, header padded so the data are aligned.
    const buf = new Uint8Array(encodeNpy({ width: 2, height: 1, data: Float32Array.of(1.5, -2) }));
    expect(Array.from(buf.subarray(0, 8))).toEqual([0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59, 1, 0]);
    const hlen = buf[8] | (buf[9] << 8);
    expect((10 + hlen) % 64).toBe(0);
    expect(buf[10 + hlen - 1]).toBe(0x0a);
    expect(String.fromCharCode(...buf.subarray(10, 10 + hlen))).toMatch(/'descr': '<f4'.*'fortran_order': False.*'shape': \(1, 2\)/);
    expect(buf.subarray(10 + hlen)).toEqual(floats([1.5, -2], true));
  });
});
