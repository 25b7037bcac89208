/**
 * `parallax dataset init`: a manifest built from the files of a folder, found by glob
 * patterns (picomatch syntax, relative to the folder) for the left images, right images
 * and truth, and optionally occlusion masks, an ignore mask and named region masks.
 *
 * Pairing: a file's stem is what the wildcards of its pattern matched, joined by `/`
 * (`left/*.png` gives `000123` for left/000123.png; a `*` folder before `/left.png` gives
 * `crates-01` for crates-01/left.png). Files of the different kinds with the same stem
 * form a pair; a stem with left, right and truth is a pair, its id the stem with every
 * character a pair id cannot hold replaced by `-`. A file whose stem has no partner of
 * another kind is listed as unpartnered (not an error: the caller says so).
 * A pattern without a wildcard (an ignore mask or a named mask) names one file for the
 * whole dataset.
 */
import { readdirSync, statSync } from 'node:fs';
import { join, sep } from 'node:path';
import picomatch from 'picomatch';
import { UsageError } from '../core/errors.js';
import { byNatural } from '../core/order.js';
import type { ManifestJson } from './manifest.js';
import { MASK_NAME_PATTERN, PAIR_ID_PATTERN } from './manifest.js';

export interface InitPatterns {
  left: string;
  right: string;
  truth: string;
  occlusion?: string;
  ignore?: string;
  /** Named region -> pattern. */
  masks?: Record<string, string>;
}

/** The manifest's other fields, as given on the command line. */
export type InitFields = Omit<ManifestJson, 'pairs' | 'ignore' | 'masks'>;

export interface InitResult {
  manifest: ManifestJson;
  /** Files (relative to the folder) matched by a pattern whose stem makes no pair, with the kind. */
  unpartnered: { kind: string; file: string }[];
}

/** Every regular file under `dir`, relative, with `/` separators, sorted; folders starting with `.` are left out. */
export function listFiles(dir: string): string[] {
  const out: string[] = [];
  const walk = (sub: string): void => {
    for (const e of readdirSync(join(dir, sub), { withFileTypes: true })) {
      if (e.name.startsWith('.')) continue;
      const rel = sub ? `${sub}/${e.name}` : e.name;
      if (e.isDirectory()) walk(rel);
      else if (e.isFile() || (e.isSymbolicLink() && statSync(join(dir, rel), { throwIfNoEntry: false })?.isFile())) out.push(rel);
    }
  };
  walk('');
  return out.sort(byNatural);
}

const hasWildcard = (pattern: string): boolean => picomatch.scan(pattern).isGlob;

/** stem -> file for one pattern; a UsageError naming `option` when two files share a stem or none matches. */
export function stemsOf(files: readonly string[], pattern: string, option: string): Map<string, string> {
  if (!hasWildcard(pattern)) throw new UsageError(option, `"${pattern}" has no wildcard; a per-pair pattern needs one (e.g. left/*.png)`);
  const re = picomatch.makeRe(pattern.split(sep).join('/'), { capture: true, dot: false });
  const out = new Map<string, string>();
  for (const f of files) {
    const m = re.exec(f);
    if (!m) continue;
    const stem = m.slice(1).filter((g) => g !== undefined).join('/');
    const other = out.get(stem);
    if (other !== undefined) throw new UsageError(option, `"${pattern}" gives the stem "${stem}" to both ${other} and ${f}; make the pattern tell them apart`);
    out.set(stem, f);
  }
  if (!out.size) throw new UsageError(option, `"${pattern}" matches no file`);
  return out;
}

/** A pair id from a stem: characters a pair id cannot hold become `-`. */
export function pairIdOf(stem: string): string {
  const id = stem.replace(/[^A-Za-z0-9._-]/g, '-').replace(/^[._-]+/, '').slice(0, 128);
  if (!PAIR_ID_PATTERN.test(id)) throw new UsageError('--left', `the stem "${stem}" gives no usable pair id`);
  return id;
}

/** Build the manifest of folder `dir` (see the file comment). */
export function buildManifest(dir: string, patterns: InitPatterns, fields: InitFields): InitResult {
  const files = listFiles(dir);
  const perPair: [string, string, string][] = [
    ['left', patterns.left, '--left'],
    ['right', patterns.right, '--right'],
    ['truth', patterns.truth, '--truth'],
  ];
  if (patterns.occlusion !== undefined) perPair.push(['occlusion', patterns.occlusion, '--occlusion']);
  const datasetLevel: Record<string, string> = {};
  const single = (kind: string, pattern: string, option: string): void => {
    if (hasWildcard(pattern)) perPair.push([kind, pattern, option]);
    else if (!files.includes(pattern)) throw new UsageError(option, `no file ${pattern} in ${dir}`);
    else datasetLevel[kind] = pattern;
  };
  if (patterns.ignore !== undefined) single('ignore', patterns.ignore, '--ignore');
  for (const [name, pattern] of Object.entries(patterns.masks ?? {})) {
    if (!MASK_NAME_PATTERN.test(name)) throw new UsageError('--mask', `"${name}": region names are 1-32 lower-case letters, digits, "_" or "-", starting with a letter`);
    single(`mask:${name}`, pattern, '--mask');
  }
  const byKind = new Map(perPair.map(([kind, pattern, option]) => [kind, stemsOf(files, pattern, option)]));
  const core = ['left', 'right', 'truth'].map((k) => byKind.get(k)!);
  const stems = [...new Set([...byKind.values()].flatMap((m) => [...m.keys()]))].sort(byNatural);
  const pairs: ManifestJson['pairs'] = [];
  const unpartnered: InitResult['unpartnered'] = [];
  const ids = new Map<string, string>();
  for (const stem of stems) {
    if (!core.every((m) => m.has(stem))) {
      for (const [kind, m] of byKind) if (m.has(stem)) unpartnered.push({ kind, file: m.get(stem)! });
      continue;
    }
    const id = pairIdOf(stem);
    const clash = ids.get(id);
    if (clash !== undefined) throw new UsageError('--left', `the stems "${clash}" and "${stem}" both give the pair id "${id}"`);
    ids.set(id, stem);
    const at = (kind: string): string | undefined => byKind.get(kind)?.get(stem);
    const masks: Record<string, string> = {};
    for (const name of Object.keys(patterns.masks ?? {})) {
      const f = at(`mask:${name}`);
      if (f !== undefined) masks[name] = f;
    }
    const occlusion = at('occlusion');
    const ignore = at('ignore');
    pairs.push({
      id,
      left: at('left')!,
      right: at('right')!,
      truth: at('truth')!,
      ...(occlusion !== undefined ? { occlusion } : {}),
      ...(ignore !== undefined ? { ignore } : {}),
      ...(Object.keys(masks).length ? { masks } : {}),
    });
  }
  if (!pairs.length) throw new UsageError('--left', `no stem has a left image, a right image and a truth file together (${unpartnered.length} unpartnered file(s))`);
  const dsMasks = Object.fromEntries(Object.entries(datasetLevel).flatMap(([k, f]) => (k.startsWith('mask:') ? [[k.slice(5), f]] : [])));
  const manifest: ManifestJson = {
    ...fields,
    ...(datasetLevel.ignore !== undefined ? { ignore: datasetLevel.ignore } : {}),
    ...(Object.keys(dsMasks).length ? { masks: dsMasks } : {}),
    pairs,
  };
  return { manifest, unpartnered: unpartnered.map((u) => ({ kind: u.kind.replace(/^mask:/, 'mask '), file: u.file })) };
}
