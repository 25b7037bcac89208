/**
 * Matcher specs and parameter values: parsing, validation, sweeps and labels.
 *
 * Grammar of a `--matcher` spec (whitespace around keys and values is ignored):
 *
 *   spec   := id [ ':' [ item { ',' item } ] ]
 *   item   := key '=' value | key '=' '[' value { ',' value } ']'
 *
 * `id` is a built-in or program id, a module path (`./x.mjs`, `/abs/x.js`) or an
 * installed package name. A bracketed list is a sweep: the configurations are the
 * cartesian product of all lists, in the schema's parameter order with the first
 * parameter varying slowest and each list in the order written (duplicates dropped).
 *
 * Every problem is a UsageError naming the option, the matcher and the parameter,
 * with the allowed values or range, in one line.
 */
import { UsageError } from '../core/errors.js';
import type { ParamSpec, ParamValue } from '../core/matcher.js';

/** Upper bound on the configurations one spec may expand to. */
export const MAX_SWEEP_CONFIGS = 10_000;

const PARAM_NAME = /^[A-Za-z_][A-Za-z0-9_]*$/;
const NUMBER_TEXT = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

/** A spec split into its id and raw (unparsed) value lists, one entry per key in written order. */
export interface RawSpec {
  readonly id: string;
  readonly assignments: readonly { readonly key: string; readonly values: readonly string[] }[];
}

/** Quote a user string for a one-line message (escapes control characters). */
export function quote(s: string): string {
  return JSON.stringify(s.length > 80 ? `${s.slice(0, 77)}...` : s);
}

/** True when a spec names a module file rather than a registered id. */
export function looksLikeModulePath(id: string): boolean {
  return id.startsWith('./') || id.startsWith('../') || id.startsWith('/') || /\.(m|c)?js$/.test(id);
}

/** Split `id:rest`. Module paths split at the first ':' that is followed by `key=` or nothing. */
function splitIdAndRest(spec: string): { id: string; rest: string | undefined } {
  const trimmed = spec.trim();
  const first = trimmed.indexOf(':');
  if (first < 0) return { id: trimmed, rest: undefined };
  const head = trimmed.slice(0, first).trim();
  if (!looksLikeModulePath(head) && !looksLikeModulePath(trimmed)) return { id: head, rest: trimmed.slice(first + 1) };
  // A path containing ':' (rare): find a ':' that starts a parameter list.
  for (let i = first; i >= 0; i = trimmed.indexOf(':', i + 1)) {
    const rest = trimmed.slice(i + 1);
    if (/^\s*$/.test(rest) || /^\s*[A-Za-z_][A-Za-z0-9_]*\s*=/.test(rest)) {
      return { id: trimmed.slice(0, i).trim(), rest };
    }
  }
  return { id: trimmed, rest: undefined };
}

/** Split on commas that are not inside brackets. */
function splitTopLevel(text: string, spec: string, option: string): string[] {
  const parts: string[] = [];
  let depth = 0;
  let start = 0;
  for (let i = 0; i < text.length; i++) {
    const c = text[i];
    if (c === '[') {
      depth++;
      if (depth > 1) throw new UsageError(option, `${quote(spec)}: nested brackets are not allowed`);
    } else if (c === ']') {
      depth--;
      if (depth < 0) throw new UsageError(option, `${quote(spec)}: ']' without '['`);
    } else if (c === ',' && depth === 0) {
      parts.push(text.slice(start, i));
      start = i + 1;
    }
  }
  if (depth !== 0) throw new UsageError(option, `${quote(spec)}: '[' without ']'`);
  parts.push(text.slice(start));
  return parts;
}

/** Parse a spec into its id and raw value lists. Throws UsageError on a malformed spec. */
export function parseMatcherSpec(spec: string, option = '--matcher'): RawSpec {
  if (typeof spec !== 'string') throw new UsageError(option, 'a matcher spec must be a string');
  const { id, rest } = splitIdAndRest(spec);
  if (id === '') throw new UsageError(option, `${quote(spec)}: missing matcher id before ':'`);
  // eslint-disable-next-line no-control-regex -- control characters are what this refuses
  if (/[\x00-\x1f\x7f]/.test(id)) throw new UsageError(option, `${quote(spec)}: control characters in the matcher id`);
  const assignments: { key: string; values: string[] }[] = [];
  if (rest === undefined || rest.trim() === '') return { id, assignments };
  const seen = new Set<string>();
  for (const item of splitTopLevel(rest, spec, option)) {
    const eq = item.indexOf('=');
    if (eq < 0) throw new UsageError(option, `${quote(spec)}: expected key=value, got ${quote(item.trim())}`);
    const key = item.slice(0, eq).trim();
    const valueText = item.slice(eq + 1).trim();
    if (!PARAM_NAME.test(key)) throw new UsageError(option, `${quote(spec)}: bad parameter name ${quote(key)}`);
    if (seen.has(key)) throw new UsageError(option, `${quote(spec)}: parameter ${key} given twice`);
    seen.add(key);
    let values: string[];
    if (valueText.startsWith('[')) {
      if (!valueText.endsWith(']')) throw new UsageError(option, `${quote(spec)}: ${key}: text after ']'`);
      values = valueText
        .slice(1, -1)
        .split(',')
        .map((v) => v.trim());
      if (values.length === 1 && values[0] === '') throw new UsageError(option, `${quote(spec)}: ${key}: empty list`);
    } else {
      if (valueText.includes('[') || valueText.includes(']')) {
        throw new UsageError(option, `${quote(spec)}: ${key}: a list must be the whole value, e.g. ${key}=[1,2]`);
      }
      values = [valueText];
    }
    for (const v of values) {
      if (v === '') throw new UsageError(option, `${quote(spec)}: ${key}: empty value`);
    }
    assignments.push({ key, values });
  }
  return { id, assignments };
}

/** Human-readable type and range of a parameter, e.g. `int 1..51, odd` or `one of: a, b`. */
export function describeAllowed(p: ParamSpec): string {
  switch (p.type) {
    case 'int':
    case 'number': {
      const lo = p.min ?? '-inf';
      const hi = p.max ?? 'inf';
      const range = p.min === undefined && p.max === undefined ? '' : ` ${lo}..${hi}`;
      return `${p.type}${range}${p.odd ? ', odd' : ''}`;
    }
    case 'boolean':
      return 'true or false';
    case 'enum':
      return `one of: ${p.values.join(', ')}`;
  }
}

/**
 * Parse (when given text) and validate one value against its spec.
 * Throws UsageError `option: matcher: name=value problem; allowed ...`.
 */
export function checkParamValue(matcherId: string, p: ParamSpec, raw: ParamValue, option = '--matcher'): ParamValue {
  const shown = typeof raw === 'string' ? quote(raw).slice(1, -1) : String(raw);
  const fail = (problem: string): never => {
    throw new UsageError(option, `${matcherId}: ${p.name}=${shown} ${problem}; allowed: ${describeAllowed(p)}`);
  };
  switch (p.type) {
    case 'int':
    case 'number': {
      let v: number;
      if (typeof raw === 'number') v = raw;
      else if (typeof raw === 'string') {
        const t = raw.trim();
        if (!NUMBER_TEXT.test(t)) fail('is not a number');
        v = Number(t);
      } else return fail('is not a number');
      if (!Number.isFinite(v)) fail('is not a finite number');
      if (p.type === 'int' && !Number.isInteger(v)) fail('is not an integer');
      if ((p.min !== undefined && v < p.min) || (p.max !== undefined && v > p.max)) fail('is out of range');
      if (p.type === 'int' && p.odd && Math.abs(v % 2) !== 1) fail('must be odd');
      return v === 0 ? 0 : v; // no -0 in labels
    }
    case 'boolean': {
      if (typeof raw === 'boolean') return raw;
      if (raw === 'true' || raw === '1') return true;
      if (raw === 'false' || raw === '0') return false;
      return fail('is not a boolean');
    }
    case 'enum': {
      // JSON lists may give enum values such as "8" as numbers.
      const text = typeof raw === 'string' ? raw : String(raw);
      if (p.values.includes(text)) return text;
      return fail('is not allowed');
    }
  }
}

/** Find a parameter by name or throw UsageError listing the known names. */
function findParam(matcherId: string, specs: readonly ParamSpec[], key: string, option: string): ParamSpec {
  const p = specs.find((s) => s.name === key);
  if (p) return p;
  const known = specs.length ? specs.map((s) => s.name).join(', ') : '(none)';
  throw new UsageError(option, `${matcherId}: unknown parameter ${quote(key)}; known: ${known}`);
}

/**
 * Expand a grid of values (one list per key; a single value is a list of one) into
 * full parameter sets with defaults filled in. Order: schema order, first parameter
 * slowest, values in given order; duplicate values within a list are dropped.
 */
export function expandSweep(
  matcherId: string,
  specs: readonly ParamSpec[],
  grid: Readonly<Record<string, readonly ParamValue[] | ParamValue>>,
  option = '--matcher',
): Record<string, ParamValue>[] {
  for (const key of Object.keys(grid)) findParam(matcherId, specs, key, option);
  const lists: ParamValue[][] = specs.map((p) => {
    const given = grid[p.name];
    if (given === undefined) return [p.default];
    const arr: readonly ParamValue[] = Array.isArray(given) ? given : [given as ParamValue];
    if (arr.length === 0) throw new UsageError(option, `${matcherId}: ${p.name}: empty list`);
    const out: ParamValue[] = [];
    for (const raw of arr) {
      const v = checkParamValue(matcherId, p, raw, option);
      if (!out.includes(v)) out.push(v);
    }
    return out;
  });
  let total = 1;
  for (const l of lists) total *= l.length;
  if (total > MAX_SWEEP_CONFIGS) {
    throw new UsageError(option, `${matcherId}: sweep expands to ${total} configurations; the limit is ${MAX_SWEEP_CONFIGS}`);
  }
  const result: Record<string, ParamValue>[] = [];
  const idx = new Array<number>(lists.length).fill(0);
  for (let n = 0; n < total; n++) {
    const params: Record<string, ParamValue> = {};
    for (let k = 0; k < specs.length; k++) params[specs[k].name] = lists[k][idx[k]];
    result.push(params);
    for (let k = lists.length - 1; k >= 0; k--) {
      if (++idx[k] < lists[k].length) break;
      idx[k] = 0;
    }
  }
  return result;
}

/** Expand a parsed spec against a schema. */
export function expandRawSpec(
  matcherId: string,
  specs: readonly ParamSpec[],
  raw: RawSpec,
  option = '--matcher',
): Record<string, ParamValue>[] {
  const grid: Record<string, ParamValue[]> = {};
  for (const a of raw.assignments) grid[a.key] = [...a.values];
  return expandSweep(matcherId, specs, grid, option);
}

/** Format a value for a label. */
export function formatParamValue(v: ParamValue): string {
  return String(v);
}

/**
 * Configuration label: the id, then `:key=value,...` for non-default keys in the
 * schema's order; the bare id when every value is the default.
 */
/** What a configuration name may be: 1-80 characters, a letter or digit first, then letters, digits and . _ + - */
export const CONFIG_NAME = /^[A-Za-z0-9][A-Za-z0-9._+-]{0,79}$/;

/** Refuse a configuration name that cannot serve as a table key and a file-name part. */
export function checkConfigName(name: string, option: string): string {
  if (!CONFIG_NAME.test(name)) {
    throw new UsageError(option, `configuration name ${quote(name)} must be 1-80 letters, digits, '.', '_', '+' or '-', starting with a letter or digit`);
  }
  return name;
}

/**
 * A command-line spec with an optional name in front: `production=sgm:p2=400`. The name
 * is what comes before the first '=' when that '=' precedes the first ':' (a spec's own
 * `key=value` pairs follow its ':').
 */
export function splitConfigName(spec: string, option = '--matcher'): { name?: string; spec: string } {
  const eq = spec.indexOf('=');
  const colon = spec.indexOf(':');
  if (eq < 0 || (colon >= 0 && colon < eq)) return { spec };
  const name = spec.slice(0, eq).trim();
  return { name: checkConfigName(name, option), spec: spec.slice(eq + 1).trim() };
}

/**
 * Labels of the configurations of one named entry: the name itself for one
 * configuration; for a sweep, the name and the swept parameters (`name:p2=64`).
 */
export function namedLabels(name: string, specs: readonly ParamSpec[], paramsList: readonly Readonly<Record<string, ParamValue>>[]): string[] {
  if (paramsList.length === 1) return [name];
  const varying = specs.filter((p) => paramsList.some((q) => q[p.name] !== paramsList[0][p.name]));
  return paramsList.map((q) => `${name}:${varying.map((p) => `${p.name}=${formatParamValue(q[p.name])}`).join(',')}`);
}

export function configLabel(id: string, specs: readonly ParamSpec[], params: Readonly<Record<string, ParamValue>>): string {
  const parts: string[] = [];
  for (const p of specs) {
    const v = params[p.name];
    if (v !== undefined && v !== p.default) parts.push(`${p.name}=${formatParamValue(v)}`);
  }
  return parts.length ? `${id}:${parts.join(',')}` : id;
}

/**
 * Check a parameter schema supplied by a module or program (names unique and
 * well formed, defaults valid). Throws UsageError naming `where`.
 */
export function checkParamSchema(where: string, matcherId: string, specs: readonly ParamSpec[], option = '--matcher'): void {
  const names = new Set<string>();
  for (const p of specs) {
    if (!p || typeof p !== 'object' || typeof p.name !== 'string' || !PARAM_NAME.test(p.name)) {
      throw new UsageError(option, `${where}: bad parameter name ${quote(String(p?.name))}`);
    }
    if (names.has(p.name)) throw new UsageError(option, `${where}: parameter ${p.name} declared twice`);
    names.add(p.name);
    if (p.type === 'enum' && (!Array.isArray(p.values) || p.values.length === 0)) {
      throw new UsageError(option, `${where}: parameter ${p.name}: enum without values`);
    }
    if (!['int', 'number', 'boolean', 'enum'].includes(p.type)) {
      throw new UsageError(option, `${where}: parameter ${p.name}: unknown type ${quote(String(p.type))}`);
    }
    try {
      checkParamValue(matcherId, p, p.default, option);
    } catch (e) {
      if (e instanceof UsageError) throw new UsageError(option, `${where}: default of ${p.name} is invalid (${e.message})`);
      throw e;
    }
  }
}
