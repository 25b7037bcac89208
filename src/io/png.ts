/**
 * PNG (ISO/IEC 15948, W3C PNG) images and disparity maps: decode.ts (our own decoder
 * for non-interlaced files, pngjs for Adam7), encode.ts, disparity.ts (stored =
 * round(d * scale), an invalid code), filters.ts (row filters), chunks.ts (container).
 */
export { readPngHeader, decodePng, type PngHeader } from './png/decode.js';
export { unfilterRows } from './png/filters.js';
export { encodePng } from './png/encode.js';
export { decodePngDisparity, encodePngDisparity, type PngDisparityEncoding } from './png/disparity.js';
