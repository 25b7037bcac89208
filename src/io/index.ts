/** File formats: PFM, PNG (images, masks, disparity) and .npy, plus file helpers. */
export { DEFAULT_MAX_PIXELS, type DecodeOptions } from './limits.js';
export { decodePfm, encodePfm } from './pfm.js';
export {
  decodePng,
  encodePng,
  decodePngDisparity,
  encodePngDisparity,
  readPngHeader,
  type PngHeader,
  type PngDisparityEncoding,
} from './png.js';
export { decodeNpy, encodeNpy } from './npy.js';
export {
  readImageFile,
  readDisparityFile,
  readMaskFile,
  writeFileAtomic,
  maskFromRaster,
  type MaskImage,
  type DisparityReadOptions,
} from './files.js';
