/**
 * Matchers from JavaScript modules: a file path (`./my-matcher.mjs`) or an installed
 * package name. The module exports the contract (default export, a named export
 * `matcher`, or the module's own top-level exports): id, summary, params, match,
 * and optionally version and dispose.
 */
import { createHash } from 'node:crypto';
import { existsSync, readFileSync, statSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname, join, resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { UsageError } from '../core/errors.js';
import type { MatcherPlugin, ParamRelation, ParamSpec } from '../core/matcher.js';
import { checkParamSchema, looksLikeModulePath, quote } from './params.js';

const PACKAGE_NAME = /^(@[a-z0-9~][a-z0-9._~-]*\/)?[a-z0-9~][a-z0-9._~-]*$/;

/** Could `id` be an npm package name? */
export function isPackageName(id: string): boolean {
  return id.length <= 214 && PACKAGE_NAME.test(id);
}

/** Entry file of an installed package, searched from `cwd` upwards; undefined when not installed. */
export function resolvePackageEntry(name: string, cwd: string): string | undefined {
  try {
    return createRequire(join(cwd, '__parallax__.js')).resolve(name);
  } catch {
    // ESM-only packages may not resolve through require: read package.json ourselves.
  }
  for (let dir = resolve(cwd); ; dir = dirname(dir)) {
    const pkgDir = join(dir, 'node_modules', name);
    const pj = join(pkgDir, 'package.json');
    if (existsSync(pj)) {
      try {
        const pkg = JSON.parse(readFileSync(pj, 'utf8')) as {
          exports?: unknown;
          module?: string;
          main?: string;
        };
        const pick = (e: unknown): string | undefined => {
          if (typeof e === 'string') return e;
          if (e && typeof e === 'object') {
            const o = e as Record<string, unknown>;
            if ('.' in o) return pick(o['.']);
            return pick(o.import) ?? pick(o.node) ?? pick(o.default);
          }
          return undefined;
        };
        const rel = pick(pkg.exports) ?? pkg.module ?? pkg.main ?? 'index.js';
        const file = resolve(pkgDir, rel);
        return existsSync(file) ? file : undefined;
      } catch {
        return undefined;
      }
    }
    if (dirname(dir) === dir) return undefined;
  }
}

/** Absolute file of a module spec, or undefined when it names nothing installed or present. */
export function locateModule(id: string, cwd: string): string | undefined {
  if (looksLikeModulePath(id)) {
    const p = resolve(cwd, id);
    return existsSync(p) && statSync(p).isFile() ? p : undefined;
  }
  return isPackageName(id) ? resolvePackageEntry(id, cwd) : undefined;
}

function isPluginLike(x: unknown): boolean {
  return !!x && (typeof x === 'object' || typeof x === 'function') && 'match' in (x as object) && 'id' in (x as object);
}

/** Check an exported object against the contract; returns a plugin (version defaults to "0"). */
export function checkPluginExport(exp: unknown, where: string, option = '--matcher'): MatcherPlugin {
  const fail = (problem: string): never => {
    throw new UsageError(option, `${where}: ${problem}`);
  };
  if (!exp || (typeof exp !== 'object' && typeof exp !== 'function')) {
    return fail('does not export a matcher (expected id, summary, params and match)');
  }
  const o = exp as Record<string, unknown>;
  const missing = ['id', 'summary', 'params', 'match'].filter((k) => o[k] === undefined);
  if (missing.length) return fail(`the exported matcher lacks ${missing.join(', ')}`);
  if (typeof o.id !== 'string' || !/^[A-Za-z][A-Za-z0-9_.-]*$/.test(o.id)) {
    return fail(`id must be a string of letters, digits, _ . - starting with a letter (got ${quote(String(o.id))})`);
  }
  if (typeof o.summary !== 'string') return fail('summary must be a string');
  if (!Array.isArray(o.params)) return fail('params must be an array of parameter specs');
  if (typeof o.match !== 'function') return fail('match must be a function');
  if (o.version !== undefined && typeof o.version !== 'string') return fail('version must be a string');
  if (o.dispose !== undefined && typeof o.dispose !== 'function') return fail('dispose must be a function');
  checkParamSchema(where, o.id, o.params as ParamSpec[], option);
  const relations = checkRelations(o.relations, o.params as ParamSpec[], (m) => fail(m));
  const match = (o.match as MatcherPlugin['match']).bind(exp);
  const dispose = o.dispose ? (o.dispose as () => void | Promise<void>).bind(exp) : undefined;
  return {
    id: o.id,
    summary: o.summary,
    version: (o.version as string | undefined) ?? '0',
    params: o.params as ParamSpec[],
    ...(relations.length ? { relations } : {}),
    match,
    ...(dispose ? { dispose } : {}),
  };
}

/** A module's `relations`: absent, or an array of { lower, upper } naming declared numeric parameters. */
function checkRelations(value: unknown, specs: readonly ParamSpec[], fail: (message: string) => never): ParamRelation[] {
  if (value === undefined) return [];
  if (!Array.isArray(value)) return fail('relations must be an array of { lower, upper }');
  const numeric = new Set(specs.filter((p) => p.type === 'int' || p.type === 'number').map((p) => p.name));
  return value.map((r: unknown, i) => {
    const o = r as { lower?: unknown; upper?: unknown } | null;
    if (!o || typeof o.lower !== 'string' || typeof o.upper !== 'string' || !numeric.has(o.lower) || !numeric.has(o.upper)) {
      return fail(`relations[${i}] must be { lower, upper } naming two declared numeric parameters`);
    }
    return { lower: o.lower, upper: o.upper };
  });
}

/** Load a module plugin from its absolute file path. */
export async function loadModulePlugin(
  file: string,
  shownAs: string,
  option = '--matcher',
): Promise<{ plugin: MatcherPlugin; codeHash: string }> {
  let mod: Record<string, unknown>;
  try {
    mod = (await import(pathToFileURL(file).href)) as Record<string, unknown>;
  } catch (e) {
    const why = e instanceof Error ? e.message : String(e);
    throw new UsageError(option, `cannot load module ${quote(shownAs)}: ${why.split('\n')[0]}`);
  }
  const candidate = [mod.default, mod.matcher, mod].find(isPluginLike) ?? mod.default ?? mod.matcher ?? mod;
  const plugin = checkPluginExport(candidate, `module ${quote(shownAs)}`, option);
  const h = createHash('sha256');
  h.update(`module\0${plugin.id}\0${plugin.version}\0`);
  h.update(readFileSync(file));
  return { plugin, codeHash: h.digest('hex') };
}
