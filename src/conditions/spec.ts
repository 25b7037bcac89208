/**
 * Camera-fault conditions: the one catalogue of kinds, their units, which camera each
 * touches, the range of strengths allowed, and how a condition is written
 * (`noise=4`, `vshift=0.5`; `clean` = no fault). Parsing of `--condition kind=strength`
 * and `kind=[a,b,c]` sweeps lives here too; applying a condition is apply.ts.
 */
import { UsageError } from '../core/errors.js';

/** The condition of the unchanged images. */
export const CLEAN = 'clean';

export interface ConditionKind {
  readonly id: string;
  /** Unit of the strength, in words (for help, tables and axes). */
  readonly unit: string;
  /** What the fault is, in words. */
  readonly what: string;
  /** Which camera the fault touches; `both` also covers the truth for `scale`. */
  readonly camera: 'right' | 'both';
  readonly min: number;
  readonly max: number;
  /** Whether `min` itself is allowed. */
  readonly minInclusive: boolean;
  /** The strength that changes nothing (a sweep may include it; it is scored like any level). */
  readonly neutral: number;
  /**
   * How far a strength is from `neutral`, for ordering levels from weak to strong (the
   * breaking point is the weakest failing level): |ln s| for factors, |s| for offsets,
   * 100 - q for a compression quality.
   */
  severity(strength: number): number;
}

const abs = (s: number): number => Math.abs(s);
const logAbs = (s: number): number => Math.abs(Math.log(s));

/** Every kind, in the order tables and the report list them. */
export const CONDITION_KINDS: readonly ConditionKind[] = [
  { id: 'gain', unit: 'factor', what: 'right camera gain (values multiplied)', camera: 'right', min: 0, max: 10, minInclusive: false, neutral: 1, severity: logAbs },
  { id: 'offset', unit: 'grey levels', what: 'right camera offset (added, 0-255 scale)', camera: 'right', min: -255, max: 255, minInclusive: true, neutral: 0, severity: abs },
  { id: 'gamma', unit: 'exponent', what: 'right camera gamma (v = 255 (v/255)^g)', camera: 'right', min: 0, max: 10, minInclusive: false, neutral: 1, severity: logAbs },
  { id: 'noise', unit: 'grey levels', what: 'sensor noise on both cameras, sigma at mid grey (read plus shot noise)', camera: 'both', min: 0, max: 100, minInclusive: true, neutral: 0, severity: abs },
  { id: 'blur', unit: 'px', what: 'defocus on both cameras (Gaussian sigma)', camera: 'both', min: 0, max: 20, minInclusive: true, neutral: 0, severity: abs },
  { id: 'blur-right', unit: 'px', what: 'defocus on the right camera (Gaussian sigma)', camera: 'right', min: 0, max: 20, minInclusive: true, neutral: 0, severity: abs },
  { id: 'vshift', unit: 'px', what: 'right image content moved down (up when negative)', camera: 'right', min: -20, max: 20, minInclusive: true, neutral: 0, severity: abs },
  { id: 'rotate', unit: 'mrad', what: 'right image rotated about its centre (counter-clockwise on screen when positive)', camera: 'right', min: -100, max: 100, minInclusive: true, neutral: 0, severity: abs },
  { id: 'scale', unit: 'factor', what: 'lower resolution: pair, truth and disparities scaled by the factor', camera: 'both', min: 0.05, max: 1, minInclusive: true, neutral: 1, severity: (s) => -Math.log(s) },
  { id: 'jpeg', unit: 'quality', what: 'lossy JPEG compression of both images at quality q', camera: 'both', min: 1, max: 100, minInclusive: true, neutral: 100, severity: (q) => 100 - q },
];

export function conditionKind(id: string): ConditionKind | undefined {
  return CONDITION_KINDS.find((k) => k.id === id);
}

export interface Condition {
  readonly kind: string;
  readonly strength: number;
  /** `kind=strength` as the tables write it. */
  readonly name: string;
}

/** `kind=strength` with the strength in its shortest exact form. */
export function conditionName(kind: string, strength: number): string {
  return `${kind}=${String(strength)}`;
}

/** A condition's parts from its table name; null for `clean` or a name of no known kind. */
export function parseConditionName(name: string): Condition | null {
  const m = /^([a-z-]+)=(-?\d+(?:\.\d+)?(?:e-?\d+)?)$/.exec(name);
  if (!m || !conditionKind(m[1])) return null;
  return { kind: m[1], strength: Number(m[2]), name };
}

function checkStrength(k: ConditionKind, v: number, text: string, option: string): void {
  const low = k.minInclusive ? v >= k.min : v > k.min;
  if (!Number.isFinite(v) || !low || v > k.max) {
    const from = k.minInclusive ? `from ${k.min}` : `above ${k.min}`;
    throw new UsageError(option, `strength ${String(v)} in "${text}" is out of range: ${k.id} takes ${from} to ${k.max} (${k.unit})`);
  }
  if (k.id === 'jpeg' && !Number.isInteger(v)) throw new UsageError(option, `jpeg quality in "${text}" must be a whole number from 1 to 100`);
}

/** `kind=strength` or `kind=[a,b,c]` -> its conditions; errors name `option`. */
export function parseConditionSpec(text: string, option = '--condition'): Condition[] {
  const m = /^\s*([a-z-]+)\s*=\s*(.+?)\s*$/.exec(text);
  if (!m) throw new UsageError(option, `"${text}" is not kind=strength (e.g. noise=4 or vshift=[0.25,0.5,1])`);
  const [, id, rest] = m as unknown as [string, string, string];
  const k = conditionKind(id);
  if (!k) throw new UsageError(option, `unknown condition "${id}" in "${text}" (kinds: ${CONDITION_KINDS.map((c) => c.id).join(', ')})`);
  const list = /^\[(.*)\]$/.exec(rest);
  const parts = (list ? list[1].split(',') : [rest]).map((s) => s.trim());
  return parts.map((p) => {
    if (!/^-?(\d+(\.\d*)?|\.\d+)(e-?\d+)?$/i.test(p)) throw new UsageError(option, `"${p}" in "${text}" is not a number`);
    const v = Number(p);
    checkStrength(k, v, text, option);
    return { kind: id, strength: v, name: conditionName(id, v) };
  });
}

/**
 * The condition names of a run: `clean` first, then each kind in catalogue order with
 * its levels from weak to strong; a level given twice is kept once.
 */
export function conditionList(specs: readonly string[], option = '--condition'): string[] {
  if (!specs.length) return [CLEAN];
  const all = new Map<string, Condition>();
  for (const s of specs) for (const c of parseConditionSpec(s, option)) all.set(c.name, c);
  const order = (c: Condition): number => CONDITION_KINDS.findIndex((k) => k.id === c.kind);
  const sorted = [...all.values()].sort((a, b) => order(a) - order(b) || conditionKind(a.kind)!.severity(a.strength) - conditionKind(b.kind)!.severity(b.strength) || a.strength - b.strength);
  return [CLEAN, ...sorted.map((c) => c.name)];
}

/** The condition of a job or table row: absent means clean (results written before conditions existed). */
export function conditionOf(r: { readonly condition?: string }): string {
  return r.condition ?? CLEAN;
}

/**
 * The configuration a job belongs to, as one label: the matcher label under `clean`,
 * `label [condition]` under a fault. Labels hold no spaces or brackets, so the two
 * forms never collide.
 */
export function configLabel(r: { readonly matcher: string; readonly condition?: string }): string {
  const c = conditionOf(r);
  return c === CLEAN ? r.matcher : `${r.matcher} [${c}]`;
}

/** Order of conditions in tables: clean first, then kinds in catalogue order, weak to strong. */
export function compareConditions(a: string, b: string): number {
  if (a === b) return 0;
  if (a === CLEAN) return -1;
  if (b === CLEAN) return 1;
  const ca = parseConditionName(a);
  const cb = parseConditionName(b);
  if (!ca || !cb) return (ca ? -1 : cb ? 1 : 0) || (a < b ? -1 : 1);
  const ka = CONDITION_KINDS.findIndex((k) => k.id === ca.kind);
  const kb = CONDITION_KINDS.findIndex((k) => k.id === cb.kind);
  const kind = conditionKind(ca.kind)!;
  return ka - kb || kind.severity(ca.strength) - kind.severity(cb.strength) || ca.strength - cb.strength;
}

/** Whether a condition draws random numbers (noise): only then does its seed change the images. */
export function usesSeed(name: string): boolean {
  return parseConditionName(name)?.kind === 'noise';
}

/** Whether a condition changes the pair's size (`scale`): its maps do not fit the pair's thumbnails. */
export function changesSize(name: string): boolean {
  return parseConditionName(name)?.kind === 'scale';
}
