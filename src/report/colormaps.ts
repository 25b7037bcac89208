/**
 * The report's colour maps, as exact 256-entry RGB tables.
 *
 * Source: matplotlib's `_cm_listed.py` (the ListedColormap data of matplotlib 3.6.3 as
 * shipped by Debian's python3-matplotlib), each float channel rounded to the nearest
 * 1/255: `np.rint(matplotlib.colormaps[name](np.arange(256))[:, :3] * 255)`.
 * - viridis and magma: S. van der Walt & N. Smith (2015), released CC0;
 * - cividis: J. R. Nuñez, C. R. Anderton & R. S. Renslow (2018), "Optimizing colormaps
 *   with consideration for color vision deficiency", PLOS ONE 13(7): e0199239 (CC0 in
 *   matplotlib).
 * All three are perceptually uniform (lightness rises monotonically) and readable with
 * the common colour-vision deficiencies; cividis is made for them. Disparity uses
 * viridis (or cividis), absolute error uses magma, clipped at a stated px value. No
 * rainbow map, no logarithmic error scale. test/report/colormaps.test.ts compares every
 * entry with matplotlib's table read at test time.
 *
 * Each table is a hex string of 768 bytes (R, G, B per entry, entry 0 first).
 */
const VIRIDIS_HEX =
  '44015444025645045745055946075a46085c460a5d460b5e470d60470e61471063471164471365481467481668481769' +
  '48186a481a6c481b6d481c6e481d6f481f70482071482173482374482475482576482677482878482979472a7a472c7a' +
  '472d7b472e7c472f7d46307e46327e46337f463480453581453781453882443983443a83443b84433d84433e85423f85' +
  '4240864241864142874144874045884046883f47883f48893e49893e4a893e4c8a3d4d8a3d4e8a3c4f8a3c508b3b518b' +
  '3b528b3a538b3a548c39558c39568c38588c38598c375a8c375b8d365c8d365d8d355e8d355f8d34608d34618d33628d' +
  '33638d32648e32658e31668e31678e31688e30698e306a8e2f6b8e2f6c8e2e6d8e2e6e8e2e6f8e2d708e2d718e2c718e' +
  '2c728e2c738e2b748e2b758e2a768e2a778e2a788e29798e297a8e297b8e287c8e287d8e277e8e277f8e27808e26818e' +
  '26828e26828e25838e25848e25858e24868e24878e23888e23898e238a8d228b8d228c8d228d8d218e8d218f8d21908d' +
  '21918c20928c20928c20938c1f948c1f958b1f968b1f978b1f988b1f998a1f9a8a1e9b8a1e9c891e9d891f9e891f9f88' +
  '1fa0881fa1881fa1871fa28720a38620a48621a58521a68522a78522a88423a98324aa8325ab8225ac8226ad8127ad81' +
  '28ae8029af7f2ab07f2cb17e2db27d2eb37c2fb47c31b57b32b67a34b67935b77937b87838b9773aba763bbb753dbc74' +
  '3fbc7340bd7242be7144bf7046c06f48c16e4ac16d4cc26c4ec36b50c46a52c56954c56856c66758c7655ac8645cc863' +
  '5ec96260ca6063cb5f65cb5e67cc5c69cd5b6ccd5a6ece5870cf5773d05675d05477d1537ad1517cd2507fd34e81d34d' +
  '84d44b86d54989d5488bd6468ed64590d74393d74195d84098d83e9bd93c9dd93ba0da39a2da37a5db36a8db34aadc32' +
  'addc30b0dd2fb2dd2db5de2bb8de29bade28bddf26c0df25c2df23c5e021c8e020cae11fcde11dd0e11cd2e21bd5e21a' +
  'd8e219dae319dde318dfe318e2e418e5e419e7e419eae51aece51befe51cf1e51df4e61ef6e620f8e621fbe723fde725';
const CIVIDIS_HEX =
  '00224e00234f00245100255300255400265600275800285900285b00295d002a5f002a61002b62002c64002c66002d68' +
  '002e6a002e6c002f6d00306f0030700031700031710132710533710833700c34700f357012357014367016377018376f' +
  '1a386f1c396f1e3a6f203a6f213b6e233c6e243c6e263d6e273e6e293f6e2a3f6d2b406d2d416d2e416d2f426d31436d' +
  '32436d33446d34456c35456c36466c38476c39486c3a486c3b496c3c4a6c3d4a6c3e4b6c3f4c6c404c6c414d6c424e6c' +
  '434e6c444f6c45506c46516c47516c48526c49536c4a536c4b546c4c556c4d556c4e566c4f576c50576c51586d52596d' +
  '535a6d545a6d555b6d555c6d565c6d575d6d585e6d595e6e5a5f6e5b606e5c616e5d616e5e626e5e636f5f636f60646f' +
  '61656f62656f636670646770656870656870666970676a71686a71696b716a6c716b6d726c6d726c6e726d6f726e6f73' +
  '6f70737071737172747272747273747374757474757575757676767777767777777878777979777a7a787b7a787c7b78' +
  '7d7c787e7c787e7d787f7e78807f78817f788280798381798482798582798683798784788885788985788a86788b8778' +
  '8c88788d88788e89788f8a78908b78918b78928c78928d78938e78948e77958f779690779791779892779992779a9376' +
  '9b94769c95769d95769e96769f9775a09875a19975a29975a39a74a49b74a59c74a69c74a79d73a89e73a99f73aaa073' +
  'aba072aca172ada272aea371afa471b0a571b1a570b3a670b4a76fb5a86fb6a96fb7a96eb8aa6eb9ab6dbaac6dbbad6d' +
  'bcae6cbdae6cbeaf6bbfb06bc0b16ac1b26ac2b369c3b369c4b468c5b568c6b667c7b767c8b866c9b965cbb965ccba64' +
  'cdbb63cebc63cfbd62d0be62d1bf61d2c060d3c05fd4c15fd5c25ed6c35dd7c45cd9c55cdac65bdbc75adcc859ddc858' +
  'dec958dfca57e0cb56e1cc55e2cd54e4ce53e5cf52e6d051e7d150e8d24fe9d34eead34cebd44bedd54aeed649efd748' +
  'f0d846f1d945f2da44f3db42f5dc41f6dd3ff7de3ef8df3cf9e03afbe138fce236fde334fee434fee535fee636fee838';
const MAGMA_HEX =
  '00000401000501010601010802010902020b02020d03030f03031204041405041606051806051a07061c08071e090720' +
  '0a08220b09240c09260d0a290e0b2b100b2d110c2f120d31130d34140e36150e38160f3b180f3d19103f1a10421c1044' +
  '1d11471e114920114b21114e22115024125325125527125829115a2a115c2c115f2d11612f1163311165331067341069' +
  '36106b38106c390f6e3b0f703d0f713f0f72400f74420f75440f764510774710784910784a10794c117a4e117b4f127b' +
  '51127c52137c54137d56147d57157e59157e5a167e5c167f5d177f5f187f601880621980641a80651a80671b80681c81' +
  '6a1c816b1d816d1d816e1e81701f81721f817320817521817621817822817922827b23827c23827e2482802582812581' +
  '8326818426818627818827818928818b29818c29818e2a81902a81912b81932b80942c80962c80982d80992d809b2e7f' +
  '9c2e7f9e2f7fa02f7fa1307ea3307ea5317ea6317da8327daa337dab337cad347cae347bb0357bb2357bb3367ab5367a' +
  'b73779b83779ba3878bc3978bd3977bf3a77c03a76c23b75c43c75c53c74c73d73c83e73ca3e72cc3f71cd4071cf4070' +
  'd0416fd2426fd3436ed5446dd6456cd8456cd9466bdb476adc4869de4968df4a68e04c67e24d66e34e65e44f64e55064' +
  'e75263e85362e95462ea5661eb5760ec5860ed5a5fee5b5eef5d5ef05f5ef1605df2625df2645cf3655cf4675cf4695c' +
  'f56b5cf66c5cf66e5cf7705cf7725cf8745cf8765cf9785df9795df97b5dfa7d5efa7f5efa815ffb835ffb8560fb8761' +
  'fc8961fc8a62fc8c63fc8e64fc9065fd9266fd9467fd9668fd9869fd9a6afd9b6bfe9d6cfe9f6dfea16efea36ffea571' +
  'fea772fea973feaa74feac76feae77feb078feb27afeb47bfeb67cfeb77efeb97ffebb81febd82febf84fec185fec287' +
  'fec488fec68afec88cfeca8dfecc8ffecd90fecf92fed194fed395fed597fed799fed89afdda9cfddc9efddea0fde0a1' +
  'fde2a3fde3a5fde5a7fde7a9fde9aafdebacfcecaefceeb0fcf0b2fcf2b4fcf4b6fcf6b8fcf7b9fcf9bbfcfbbdfcfdbf';

export type ColorMapName = 'viridis' | 'cividis' | 'magma';
/** The maps a report may use for disparity. */
export const DISPARITY_MAPS = ['viridis', 'cividis'] as const;
export type DisparityMapName = (typeof DISPARITY_MAPS)[number];
/** The map of absolute error. */
export const ERROR_MAP: ColorMapName = 'magma';

function fromHex(hex: string): Uint8Array {
  if (hex.length !== 256 * 6) throw new Error(`colour table of ${hex.length / 2} bytes`);
  const out = new Uint8Array(256 * 3);
  for (let i = 0; i < out.length; i++) out[i] = parseInt(hex.slice(2 * i, 2 * i + 2), 16);
  return out;
}

const TABLES: Record<ColorMapName, Uint8Array> = {
  viridis: fromHex(VIRIDIS_HEX),
  cividis: fromHex(CIVIDIS_HEX),
  magma: fromHex(MAGMA_HEX),
};

/** The 256 x RGB table of a map (shared; do not modify). */
export function colorTable(name: ColorMapName): Uint8Array {
  return TABLES[name];
}

/** `#rrggbb` of a map at t in [0, 1] (clamped; nearest of the 256 entries). */
export function colorHex(name: ColorMapName, t: number): string {
  const i = Math.round(Math.min(1, Math.max(0, t)) * 255) * 3;
  const tb = TABLES[name];
  return `#${[tb[i], tb[i + 1], tb[i + 2]].map((v) => v.toString(16).padStart(2, '0')).join('')}`;
}

/** Okabe & Ito (2008) colour-blind safe categorical colours, for configurations in charts. */
export const CATEGORICAL: readonly string[] = ['#0072B2', '#E69F00', '#009E73', '#CC79A7', '#56B4E9', '#D55E00', '#F0E442', '#000000'];
