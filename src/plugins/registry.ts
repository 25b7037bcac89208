/**
 * The matcher registry: built-in matchers, module plugins and outside programs,
 * resolved from `--matcher` specs or experiment-file entries into configurations
 * (one per point of a parameter sweep).
 */
import { createHash } from 'node:crypto';
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { z } from 'zod';
import { UsageError } from '../core/errors.js';
import { BUILTIN_MATCHERS } from '../../matchers/index.js';
import { brokenRelation, type MatcherPlugin, type ParamValue } from '../core/matcher.js';
import { loadModulePlugin, locateModule, isPackageName } from './module-plugin.js';
import { checkConfigName, configLabel, expandRawSpec, expandSweep, looksLikeModulePath, namedLabels, parseMatcherSpec, quote, splitConfigName, type RawSpec } from './params.js';
import { programCodeHash, programMatcher } from './program/index.js';
import { parseProgramMatcherDef, programMatcherDefSchema, type ProgramMatcherDef } from './program-def.js';
import { issuesLine } from '../core/text.js';
import { toolVersion } from '../io/package.js';

export { programMatcher } from './program/index.js';

/** Where a configuration's plugin comes from; serialisable, so a worker can rebuild the plugin. */
export type MatcherSource =
  | { readonly kind: 'builtin'; readonly id: string }
  | { readonly kind: 'module'; readonly file: string }
  | { readonly kind: 'program'; readonly def: ProgramMatcherDef; readonly baseDir: string };

export interface MatcherConfig {
  /**
   * The user's name when one is given (`name` for one configuration, `name:key=value` per
   * point of a named sweep); else `id` for defaults, `id:key=value,...` (non-default
   * keys, schema order).
   */
  label: string;
  /** Per-job time limit in ms (module plugins; programs carry theirs in the definition). */
  timeoutMs?: number;
  plugin: MatcherPlugin;
  /** Every parameter after defaults. */
  params: Record<string, ParamValue>;
  /** sha256 identifying the code (see codeHash notes in registry.ts). */
  codeHash: string;
  /** How to rebuild `plugin` elsewhere (worker threads), see pluginFromSource. */
  source: MatcherSource;
}

export interface ResolveOptions {
  /** Base for module paths and package lookup (default process.cwd()). */
  cwd?: string;
  /** Option named in errors (default `--matcher`). */
  option?: string;
  /** More matchers known by id, e.g. programs defined in an experiment file. */
  extra?: readonly MatcherConfigSourcePlugin[];
  /** Per-job time limit of module plugins, ms (default DEFAULT_MODULE_TIMEOUT_MS). */
  moduleTimeoutMs?: number;
}

/** Default per-job time limit of a module plugin (the same as a program's). */
export const DEFAULT_MODULE_TIMEOUT_MS = 300_000;

/** How one entry names and limits its configurations. */
interface EntryOptions {
  name?: string;
  timeoutMs?: number;
}

/** A plugin together with its source and code hash (programs from experiment files). */
export interface MatcherConfigSourcePlugin {
  plugin: MatcherPlugin;
  source: MatcherSource;
  codeHash: string;
}

/** The built-in matchers, in the order of matchers/index.ts. */
export function builtinMatchers(): readonly MatcherPlugin[] {
  return BUILTIN_MATCHERS;
}

// ------------------------------------------------------------------ code hashes

let treeHash: string | undefined;

function listFiles(dir: string, out: string[]): void {
  for (const e of readdirSync(dir, { withFileTypes: true })) {
    const p = join(dir, e.name);
    if (e.isDirectory()) {
      if (e.name !== 'examples' && e.name !== 'node_modules') listFiles(p, out);
    } else if (e.isFile() && !e.name.endsWith('.map')) out.push(p);
  }
}

/**
 * Hash of the package version and every file of the built-in matchers folder next to
 * this module (sources under vitest/tsx, compiled files under dist/), examples excluded.
 * Any change to a matcher or a shared kernel changes it. Falls back to the package
 * version alone when the folder cannot be read or is unexpectedly large.
 */
function builtinTreeHash(): string {
  if (treeHash) return treeHash;
  const here = dirname(fileURLToPath(import.meta.url));
  const h = createHash('sha256');
  h.update(`parallax@${toolVersion()}\0`);
  const dir = resolve(here, '..', '..', 'matchers');
  try {
    const files: string[] = [];
    listFiles(dir, files);
    files.sort();
    let total = 0;
    for (const f of files) total += statSync(f).size;
    if (total <= 64 * 1024 * 1024) {
      for (const f of files) {
        h.update(`\0${f.slice(dir.length)}\0`);
        h.update(readFileSync(f));
      }
    }
  } catch {
    // package version only
  }
  treeHash = h.digest('hex');
  return treeHash;
}

/** Code hash of a built-in matcher: id, version, package version and the matchers folder. */
export function builtinCodeHash(plugin: MatcherPlugin): string {
  return createHash('sha256').update(`builtin\0${plugin.id}\0${plugin.version}\0${builtinTreeHash()}`).digest('hex');
}

// ------------------------------------------------------------------ resolution

/** Result of planning one spec without loading anything. */
export type SpecPlan =
  | { kind: 'known'; plugin: MatcherPlugin; paramsList: Record<string, ParamValue>[] }
  | { kind: 'module'; id: string; raw: RawSpec };

function knownIdsText(known: readonly MatcherPlugin[]): string {
  return known.length ? known.map((p) => p.id).join(', ') : '(none)';
}

/**
 * Parse and validate one spec against known plugins (pure). Module paths and
 * package-like names that are not known ids come back as `module` for loading.
 */
export function planSpec(spec: string, known: readonly MatcherPlugin[], option = '--matcher'): SpecPlan {
  const raw = parseMatcherSpec(spec, option);
  const plugin = known.find((p) => p.id === raw.id);
  if (plugin) return { kind: 'known', plugin, paramsList: expandRawSpec(plugin.id, plugin.params, raw, option) };
  if (looksLikeModulePath(raw.id) || isPackageName(raw.id)) return { kind: 'module', id: raw.id, raw };
  throw new UsageError(option, `unknown matcher ${quote(raw.id)}; known: ${knownIdsText(known)}`);
}

function builtinEntries(): MatcherConfigSourcePlugin[] {
  return builtinMatchers().map((plugin) => ({
    plugin,
    source: { kind: 'builtin', id: plugin.id },
    get codeHash() {
      return builtinCodeHash(plugin);
    },
  }));
}

function configsOf(entry: MatcherConfigSourcePlugin, paramsList: Record<string, ParamValue>[], option: string, o: EntryOptions = {}): MatcherConfig[] {
  const specs = entry.plugin.params;
  for (const params of paramsList) {
    const broken = brokenRelation(entry.plugin.relations, params);
    if (broken !== undefined) throw new UsageError(option, `${entry.plugin.id}: ${broken}`);
  }
  const labels = o.name !== undefined ? namedLabels(o.name, specs, paramsList) : paramsList.map((params) => configLabel(entry.plugin.id, specs, params));
  const timeoutMs = entry.source.kind === 'module' ? (o.timeoutMs ?? DEFAULT_MODULE_TIMEOUT_MS) : undefined;
  return paramsList.map((params, i) => ({
    label: labels[i],
    plugin: entry.plugin,
    params,
    codeHash: entry.codeHash,
    source: entry.source,
    ...(timeoutMs !== undefined ? { timeoutMs } : {}),
  }));
}

/** Drop exact repeats (same label and code); a label shared by different code is an error. */
function dedupe(configs: MatcherConfig[], option: string): MatcherConfig[] {
  const byLabel = new Map<string, MatcherConfig>();
  const out: MatcherConfig[] = [];
  for (const c of configs) {
    const prev = byLabel.get(c.label);
    if (prev) {
      if (prev.codeHash !== c.codeHash) {
        throw new UsageError(option, `two different matchers share the label ${quote(c.label)}; rename one`);
      }
      continue;
    }
    byLabel.set(c.label, c);
    out.push(c);
  }
  return out;
}

async function moduleEntry(id: string, cwd: string, known: readonly MatcherPlugin[], option: string): Promise<MatcherConfigSourcePlugin> {
  const file = locateModule(id, cwd);
  if (!file) {
    if (looksLikeModulePath(id)) throw new UsageError(option, `module file not found: ${resolve(cwd, id)}`);
    throw new UsageError(option, `unknown matcher ${quote(id)} (not a built-in id nor an installed package); known: ${knownIdsText(known)}`);
  }
  const { plugin, codeHash } = await loadModulePlugin(file, id, option);
  if (known.some((p) => p.id === plugin.id)) {
    throw new UsageError(option, `module ${quote(id)} declares id ${quote(plugin.id)}, which is already taken by another matcher`);
  }
  return { plugin, source: { kind: 'module', file }, codeHash };
}

/** Resolve one spec (any kind) into its configurations. */
async function resolveOne(
  spec: string,
  entries: readonly MatcherConfigSourcePlugin[],
  cwd: string,
  option: string,
  o: EntryOptions & { grid?: Readonly<Record<string, readonly ParamValue[] | ParamValue>> } = {},
): Promise<MatcherConfig[]> {
  const known = entries.map((e) => e.plugin);
  const plan = planSpec(spec, known, option);
  if (plan.kind === 'known') {
    const entry = entries.find((e) => e.plugin === plan.plugin)!;
    const list = o.grid ? expandSweep(plan.plugin.id, plan.plugin.params, o.grid, option) : plan.paramsList;
    return configsOf(entry, list, option, o);
  }
  const entry = await moduleEntry(plan.id, cwd, known, option);
  const list = o.grid
    ? expandSweep(entry.plugin.id, entry.plugin.params, o.grid, option)
    : expandRawSpec(entry.plugin.id, entry.plugin.params, plan.raw, option);
  return configsOf(entry, list, option, o);
}

/**
 * Resolve `--matcher` specs into configurations, in spec order then sweep order.
 * Specs: a built-in id, `id:key=value,...`, `key=[a,b]` sweeps, a module path
 * (`./x.mjs`, `../x.js`, `/abs/x.cjs`) or an installed package name, each optionally
 * named: `production=sgm:p2=400`.
 */
export async function resolveMatchers(specs: string[], opts: ResolveOptions = {}): Promise<MatcherConfig[]> {
  const cwd = opts.cwd ?? process.cwd();
  const option = opts.option ?? '--matcher';
  const entries = [...builtinEntries(), ...(opts.extra ?? [])];
  const out: MatcherConfig[] = [];
  for (const text of specs) {
    const { name, spec } = splitConfigName(text, option);
    out.push(...(await resolveOne(spec, entries, cwd, option, { ...(name !== undefined ? { name } : {}), ...(opts.moduleTimeoutMs !== undefined ? { timeoutMs: opts.moduleTimeoutMs } : {}) })));
  }
  return dedupe(out, option);
}

// ------------------------------------------------------------------ experiment files

const gridValue = z.union([z.number(), z.boolean(), z.string()]);
const gridSchema = z.record(z.string(), z.union([gridValue, z.array(gridValue).min(1)]));

/**
 * One entry of an experiment file's `matchers` list:
 *   "sgm:p1=[4,8]"                                  a spec as on the command line (a name in front: "production=sgm:p2=400")
 *   {"id": "sgm", "name": "production", "params": {"p1": [4, 8]}}   arrays are sweeps
 *   {"id": "./m.mjs", "name": "mine", "timeoutMs": 60000}           a module with its time limit
 *   {"program": {...ProgramMatcherDef}, "name": "net", "params": {...}}
 */
const nameField = z.string().min(1).optional();
export const matcherEntrySchema = z.union([
  z.string().min(1),
  z.strictObject({ id: z.string().min(1), name: nameField, params: gridSchema.optional(), timeoutMs: z.number().int().positive().optional() }),
  z.strictObject({ program: z.unknown(), name: nameField, params: gridSchema.optional() }),
]);
export type MatcherEntry = z.input<typeof matcherEntrySchema>;

/** A program plugin with its source and code hash, for `ResolveOptions.extra`. */
export function programEntry(defIn: unknown, baseDir: string, option = 'program'): MatcherConfigSourcePlugin {
  const def = parseProgramMatcherDef(defIn, option);
  return { plugin: programMatcher(def, baseDir), source: { kind: 'program', def, baseDir }, codeHash: programCodeHash(def, baseDir) };
}

/**
 * Resolve an experiment file's `matchers` list. `baseDir` is the experiment file's
 * folder (module paths and program working folders are relative to it); `option`
 * names the list in errors (default `matchers`). Programs are registered by id in
 * list order, so a later string entry may name an earlier program with parameters.
 */
export async function resolveMatcherEntries(
  entries: readonly unknown[],
  opts: { baseDir: string; option?: string },
): Promise<MatcherConfig[]> {
  const option = opts.option ?? 'matchers';
  const known: MatcherConfigSourcePlugin[] = [...builtinEntries()];
  const out: MatcherConfig[] = [];
  for (let i = 0; i < entries.length; i++) {
    const where = `${option}[${i}]`;
    const r = matcherEntrySchema.safeParse(entries[i]);
    if (!r.success) {
      throw new UsageError(where, `expected a spec string, {"id", "name", "params", "timeoutMs"} or {"program", "name", "params"}; ${issuesLine(r.error.issues)}`);
    }
    const e = r.data;
    if (typeof e === 'string') {
      const { name, spec } = splitConfigName(e, where);
      out.push(...(await resolveOne(spec, known, opts.baseDir, where, name !== undefined ? { name } : {})));
      continue;
    }
    const name = e.name !== undefined ? checkConfigName(e.name, `${where}.name`) : undefined;
    if ('id' in e) {
      const configs = await resolveOne(e.id, known, opts.baseDir, where, { grid: e.params ?? {}, ...(name !== undefined ? { name } : {}), ...(e.timeoutMs !== undefined ? { timeoutMs: e.timeoutMs } : {}) });
      if (e.timeoutMs !== undefined && configs[0]?.source.kind !== 'module') {
        throw new UsageError(`${where}.timeoutMs`, `applies to module plugins; ${quote(e.id)} is not one (a program sets timeoutMs in its definition)`);
      }
      out.push(...configs);
    } else {
      const entry = programEntry(e.program, opts.baseDir, `${where}.program`);
      const prev = known.find((k) => k.plugin.id === entry.plugin.id);
      if (prev && prev.codeHash !== entry.codeHash) {
        throw new UsageError(`${where}.program.id`, `${quote(entry.plugin.id)} is already the id of another matcher`);
      }
      if (!prev) known.push(entry);
      const use = prev ?? entry;
      out.push(...configsOf(use, expandSweep(use.plugin.id, use.plugin.params, e.params ?? {}, where), where, name !== undefined ? { name } : {}));
    }
  }
  return dedupe(out, option);
}

/** Rebuild a configuration's plugin from its source (e.g. inside a worker thread). */
export async function pluginFromSource(source: MatcherSource): Promise<MatcherPlugin> {
  switch (source.kind) {
    case 'builtin': {
      const p = builtinMatchers().find((m) => m.id === source.id);
      if (!p) throw new UsageError('--matcher', `unknown matcher ${quote(source.id)}; known: ${knownIdsText(builtinMatchers())}`);
      return p;
    }
    case 'module':
      return (await loadModulePlugin(source.file, source.file)).plugin;
    case 'program':
      return programMatcher(source.def, source.baseDir);
  }
}

/** Re-exported for experiment-file schemas. */
export { programMatcherDefSchema };
