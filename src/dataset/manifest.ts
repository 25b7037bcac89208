/**
 * The dataset manifest (`dataset.json`): schema, validation and path resolution.
 *
 * Every problem is reported as one line that names the manifest file and, for a
 * schema problem, the field path (e.g. `pairs[2].truth`). Paths inside the manifest
 * are relative to its data folder (the manifest's folder, or `dataRoot`, or the
 * `--data-root` option) and may not leave it, neither lexically nor after following
 * symbolic links.
 */
import { readFileSync, realpathSync, statSync } from 'node:fs';
import { dirname, extname, isAbsolute, join, relative, resolve, sep } from 'node:path';
import { z } from 'zod';
import type { Camera } from '../core/camera.js';
import { InputError } from '../core/errors.js';
import type { DisparityRange, PairEntry } from '../core/pair.js';
import { issueText, type ZodIssueLike } from '../core/text.js';
import { byCodeUnits } from '../core/order.js';
import { REGION_IDS } from '../core/regions.js';
export { formatFieldPath, issueMessage, issueText, type ZodIssueLike } from '../core/text.js';

export const MANIFEST_FILE = 'dataset.json';

/** Pair ids become file names (predictions, previews): keep them plain. */
export const PAIR_ID_PATTERN = /^[A-Za-z0-9][A-Za-z0-9._-]{0,127}$/;

const finite = z.number().refine(Number.isFinite, 'must be a finite number');

const cameraSchema = z.strictObject({
  focalPx: finite.refine((v) => v > 0, 'must be > 0'),
  baselineM: finite.refine((v) => v > 0, 'must be > 0'),
  cxShiftPx: finite.default(0),
});

const relPath = z.string().min(1, 'must be a non-empty path');

/** Names of the user's own regions: plain words that cannot be taken for a built-in one. */
export const MASK_NAME_PATTERN = /^[a-z][a-z0-9_-]{0,31}$/;
const maskMap = z.record(z.string().regex(MASK_NAME_PATTERN, 'region names are 1-32 lower-case letters, digits, "_" or "-", starting with a letter'), relPath);

const pairSchema = z.strictObject({
  id: z.string().regex(PAIR_ID_PATTERN, 'must be 1-128 letters, digits, ".", "_" or "-", starting with a letter or digit'),
  left: relPath,
  right: relPath,
  truth: relPath,
  occlusion: relPath.optional(),
  /** Pixels that leave every region (the vehicle's own body, a sky band): non-zero = ignored. */
  ignore: relPath.optional(),
  /** The user's own regions: name -> mask file (non-zero = in the region). */
  masks: maskMap.optional(),
  camera: cameraSchema.optional(),
  group: z.string().min(1).optional(),
  /** Index of the pair within its group's sequence (consecutive frames give flicker). */
  frame: z.number().int().min(0).optional(),
  tags: z.array(z.string().min(1)).optional(),
});

export const manifestSchema = z.strictObject({
  name: z.string().regex(PAIR_ID_PATTERN, 'must be 1-128 letters, digits, ".", "_" or "-", starting with a letter or digit'),
  description: z.string().optional(),
  camera: cameraSchema.optional(),
  /** The folder the paths are relative to: absolute, or relative to the manifest's folder. */
  dataRoot: z.string().min(1).optional(),
  /** What the truth files hold: disparity in px (default) or depth (needs a camera). */
  truthKind: z.enum(['disparity', 'depth']).default('disparity'),
  /** Unit of depth truth (and of depth predictions that do not say otherwise). */
  depthUnit: z.enum(['m', 'mm']).optional(),
  /** The truth is sparse (a lidar): no limit on its unknown share, regions found from the known samples. */
  sparseTruth: z.boolean().default(false),
  ignore: relPath.optional(),
  masks: maskMap.optional(),
  disparityRange: z
    .tuple([finite, finite])
    .refine(([a, b]) => a <= b, 'must be [min, max] with min <= max'),
  truthEncoding: z
    .strictObject({
      scale: finite.refine((v) => v > 0, 'must be > 0'),
      invalid: z.number().int().min(0).max(65535).default(0),
    })
    .optional(),
  pairs: z.array(pairSchema).min(1, 'must list at least one pair'),
});

export type ManifestJson = z.infer<typeof manifestSchema>;

/**
 * A loaded manifest: the schema's fields, with the file and folder it was read from and
 * the pairs' paths resolved to absolute paths (PairEntry: the schema's pair, resolved).
 */
export type Manifest = Readonly<Omit<ManifestJson, 'pairs' | 'disparityRange' | 'ignore' | 'masks'>> & {
  /** Absolute path of the manifest file. */
  readonly file: string;
  /** Absolute data folder: the paths are relative to it (the manifest's folder unless dataRoot or --data-root says otherwise). */
  readonly dir: string;
  readonly disparityRange: DisparityRange;
  /** Pairs in manifest order, paths resolved to absolute paths. */
  readonly pairs: readonly PairEntry[];
  /** The user's own region names over all pairs (dataset-level and pair masks), sorted. */
  readonly regionNames: readonly string[];
};

/** At most this many named regions (mask files) per dataset: each is a bit of the region map. */
export const MAX_USER_REGIONS = 8;

export interface ManifestOptions {
  /** The data folder, overriding the manifest's dataRoot (the `--data-root` option). */
  dataRoot?: string;
}

/** Resolve a folder or a file argument to the manifest file path. */
export function manifestPath(pathOrDir: string): string {
  const abs = resolve(pathOrDir);
  let st;
  try {
    st = statSync(abs);
  } catch {
    throw new InputError(pathOrDir, 'no such dataset folder or manifest file');
  }
  return st.isDirectory() ? join(abs, MANIFEST_FILE) : abs;
}

function isInside(root: string, p: string): boolean {
  const rel = relative(root, p);
  return rel === '' || (!rel.startsWith('..' + sep) && rel !== '..' && !isAbsolute(rel));
}

/**
 * Resolve a manifest-relative path. Returns the absolute path or a problem text.
 * Refuses absolute paths, paths that leave the folder, and (for files that exist)
 * paths whose real path, after following symbolic links, lies outside the folder.
 */
export function resolveInside(dir: string, realDir: string, p: string): { path: string } | { problem: string } {
  if (isAbsolute(p) || /^[A-Za-z]:[\\/]/.test(p)) return { problem: `path "${p}" is absolute; paths must be relative to the manifest` };
  const abs = resolve(dir, p);
  if (!isInside(dir, abs)) return { problem: `path "${p}" leaves the dataset folder` };
  let real: string | undefined;
  try {
    real = realpathSync(abs);
  } catch {
    real = undefined; // missing: reported when the pair is loaded or checked
  }
  if (real !== undefined && !isInside(realDir, real)) {
    return { problem: `path "${p}" resolves (through a symbolic link) outside the dataset folder` };
  }
  return { path: abs };
}

/** Result of validating a manifest: the manifest when usable, and every problem found. */
export interface ManifestValidation {
  manifest?: Manifest;
  /**
   * The manifest as far as it could be read when the schema holds but other problems
   * exist (duplicate ids, bad paths: such paths are left empty). For `dataset check`.
   */
  partial?: Manifest;
  /** One-line problems (without the file name, which the caller prefixes). */
  problems: string[];
}

/**
 * The folder a manifest's paths are relative to: --data-root, else the manifest's
 * dataRoot (relative to the manifest), else the manifest's own folder; with its real path.
 */
function dataFolder(file: string, field: string | undefined, option: string | undefined): { dir: string; realDir: string; problem?: string } {
  const manifestDir = dirname(resolve(file));
  const dir = option !== undefined ? resolve(option) : field !== undefined ? resolve(manifestDir, field) : manifestDir;
  try {
    return { dir, realDir: realpathSync(dir) };
  } catch {
    if (option !== undefined) return { dir, realDir: dir, problem: `--data-root: no such folder "${option}"` };
    if (field !== undefined) return { dir, realDir: dir, problem: `field dataRoot: no such folder "${field}"` };
    return { dir, realDir: dir }; // the manifest's own folder: reading its files reports what is missing
  }
}

/** Duplicate pair ids, and frame indices without a group or used twice within one group. */
function pairIdentityProblems(list: readonly { id: string; group?: string | undefined; frame?: number | undefined }[]): string[] {
  const problems: string[] = [];
  const seen = new Map<string, number>();
  const frames = new Map<string, number>();
  list.forEach((p, i) => {
    const first = seen.get(p.id);
    if (first !== undefined) problems.push(`field pairs[${i}].id: duplicate pair id "${p.id}" (also pairs[${first}])`);
    else seen.set(p.id, i);
    if (p.frame === undefined) return;
    const key = `${p.group ?? ''}\u0000${p.frame}`;
    const other = frames.get(key);
    if (p.group === undefined) problems.push(`field pairs[${i}].frame: a frame index needs the pair's "group" (the sequence it belongs to)`);
    else if (other !== undefined) problems.push(`field pairs[${i}].frame: frame ${p.frame} of group "${p.group}" is also pairs[${other}]`);
    else frames.set(key, i);
  });
  return problems;
}

/** Depth truth needs its unit, and a camera for every pair (its own or the dataset's). */
function depthTruthProblems(m: { depthUnit?: string | undefined; camera?: unknown; pairs: readonly { id: string; camera?: unknown }[] }): string[] {
  const problems: string[] = [];
  if (m.depthUnit === undefined) problems.push('field depthUnit: required when truthKind is "depth" ("m" or "mm")');
  m.pairs.forEach((p, i) => {
    if (!p.camera && !m.camera) problems.push(`field pairs[${i}].camera: depth truth needs a camera (focalPx, baselineM) for pair ${p.id}, here or at the dataset level`);
  });
  return problems;
}

/** Named regions may not reuse a built-in region's name, and there are at most MAX_USER_REGIONS of them. */
function regionNameProblems(names: ReadonlySet<string>): string[] {
  const problems: string[] = [];
  for (const name of names) {
    if ((REGION_IDS as readonly string[]).includes(name)) problems.push(`field masks.${name}: "${name}" is a built-in region; give your region another name`);
  }
  if (names.size > MAX_USER_REGIONS) problems.push(`field masks: ${names.size} named regions, at most ${MAX_USER_REGIONS} are supported`);
  return problems;
}

/** The manifest text as JSON checked against the schema, or its problems. */
function parseManifestJson(text: string): { data: z.infer<typeof manifestSchema> } | { problems: string[] } {
  let json: unknown;
  try {
    json = JSON.parse(text);
  } catch (e) {
    return { problems: [`not valid JSON (${(e as Error).message.split('\n')[0]})`] };
  }
  const parsed = manifestSchema.safeParse(json);
  if (!parsed.success) return { problems: parsed.error.issues.map((issue) => issueText(issue as ZodIssueLike)) };
  return { data: parsed.data };
}

/**
 * Validate manifest text. Collects every problem (schema issues, duplicate ids,
 * paths leaving the folder, PNG truth without truthEncoding) instead of stopping at
 * the first; `manifest` is set only when there is none.
 */
export function validateManifest(text: string, file: string, opts: ManifestOptions = {}): ManifestValidation {
  const parsed = parseManifestJson(text);
  if ('problems' in parsed) return { problems: parsed.problems };
  const m = parsed.data;
  const problems: string[] = [];
  const { dir, realDir, problem } = dataFolder(file, m.dataRoot, opts.dataRoot);
  if (problem !== undefined) problems.push(problem);
  const inside = (field: string, v: string): string | undefined => {
    const r = resolveInside(dir, realDir, v);
    if ('problem' in r) {
      problems.push(`field ${field}: ${r.problem}`);
      return undefined;
    }
    return r.path;
  };
  const datasetIgnore = m.ignore !== undefined ? inside('ignore', m.ignore) : undefined;
  const datasetMasks: Record<string, string> = {};
  for (const [name, v] of Object.entries(m.masks ?? {})) {
    const r = inside(`masks.${name}`, v);
    if (r !== undefined) datasetMasks[name] = r;
  }
  const regionNames = new Set(Object.keys(m.masks ?? {}));
  if (m.truthKind === 'depth') problems.push(...depthTruthProblems(m));
  problems.push(...pairIdentityProblems(m.pairs));
  const pairs: PairEntry[] = [];
  m.pairs.forEach((p, i) => {
    const fields = ['left', 'right', 'truth', 'occlusion', 'ignore'] as const;
    const out: Record<string, string> = {};
    for (const f of fields) {
      const v = p[f];
      if (v === undefined) continue;
      const r = inside(`pairs[${i}].${f}`, v);
      if (r !== undefined) out[f] = r;
    }
    const masks: Record<string, string> = { ...datasetMasks };
    for (const [name, v] of Object.entries(p.masks ?? {})) {
      regionNames.add(name);
      const r = inside(`pairs[${i}].masks.${name}`, v);
      if (r !== undefined) masks[name] = r;
    }
    if (extname(p.truth).toLowerCase() === '.png' && m.truthEncoding === undefined) {
      problems.push(`field truthEncoding: required for PNG truth "${p.truth}" (pair ${p.id}); give its scale`);
    }
    const ignore = out.ignore ?? datasetIgnore;
    pairs.push({
      id: p.id,
      left: out.left ?? '',
      right: out.right ?? '',
      truth: out.truth ?? '',
      ...(out.occlusion !== undefined ? { occlusion: out.occlusion } : {}),
      ...(ignore !== undefined ? { ignore } : {}),
      ...(Object.keys(masks).length ? { masks } : {}),
      ...(p.camera ? { camera: p.camera } : {}),
      ...(p.group !== undefined ? { group: p.group } : {}),
      ...(p.frame !== undefined ? { frame: p.frame } : {}),
      ...(p.tags ? { tags: p.tags } : {}),
    });
  });
  problems.push(...regionNameProblems(regionNames));
  const manifest: Manifest = {
    file: resolve(file),
    dir,
    name: m.name,
    ...(m.description !== undefined ? { description: m.description } : {}),
    ...(m.camera ? { camera: m.camera } : {}),
    ...(m.dataRoot !== undefined ? { dataRoot: m.dataRoot } : {}),
    truthKind: m.truthKind,
    ...(m.depthUnit !== undefined ? { depthUnit: m.depthUnit } : {}),
    sparseTruth: m.sparseTruth,
    regionNames: [...regionNames].sort(byCodeUnits),
    disparityRange: [m.disparityRange[0], m.disparityRange[1]],
    ...(m.truthEncoding ? { truthEncoding: m.truthEncoding } : {}),
    pairs,
  };
  return problems.length ? { problems, partial: manifest } : { problems, manifest };
}

/** Read the manifest bytes; an unreadable file is an InputError naming it. */
export function readManifestBytes(file: string): Buffer {
  try {
    return readFileSync(file);
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    throw new InputError(file, code === 'ENOENT' ? `no ${MANIFEST_FILE} here (missing file)` : `cannot read (${code ?? 'error'})`);
  }
}

/**
 * Load a manifest from a dataset folder (reads its dataset.json) or a manifest file.
 * Throws an InputError (one line, naming the file and the field) on the first problem.
 */
export function loadManifest(pathOrDir: string, opts: ManifestOptions = {}): Manifest {
  const file = manifestPath(pathOrDir);
  const bytes = readManifestBytes(file);
  const v = validateManifest(bytes.toString('utf8'), file, opts);
  if (!v.manifest) {
    const first = v.problems[0] ?? 'invalid manifest';
    const more = v.problems.length > 1 ? ` (and ${v.problems.length - 1} more problem${v.problems.length > 2 ? 's' : ''}; see \`parallax dataset check\`)` : '';
    throw new InputError(file, first + more);
  }
  return v.manifest;
}

/** Camera of a pair: the pair's own, else the dataset's, else undefined. */
export function pairCamera(m: Manifest, p: PairEntry): Camera | undefined {
  return p.camera ?? m.camera;
}

/** Pairs sorted by id (code-unit order), the order every run and sum uses. */
export function sortedPairs(m: Manifest): PairEntry[] {
  return [...m.pairs].sort((a, b) => byCodeUnits(a.id, b.id));
}
