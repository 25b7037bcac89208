/**
 * `parallax matchers [--json]`: every built-in matcher with its summary, version and
 * parameters (type, default, range or values, description).
 */
import type { CommandModule } from 'yargs';
import type { MatcherPlugin, ParamSpec } from '../../core/matcher.js';
import { describeAllowed, formatParamValue } from '../../plugins/params.js';
import { builtinMatchers } from '../../plugins/registry.js';

export interface MatchersArgs {
  json: boolean;
}

/** JSON description of one parameter. */
export function paramInfo(p: ParamSpec): Record<string, unknown> {
  const base: Record<string, unknown> = { name: p.name, type: p.type, default: p.default };
  if (p.type === 'int' || p.type === 'number') {
    if (p.min !== undefined) base.min = p.min;
    if (p.max !== undefined) base.max = p.max;
    if (p.odd) base.odd = true;
  }
  if (p.type === 'enum') base.values = [...p.values];
  base.description = p.description;
  return base;
}

/** JSON description of the matchers. */
export function matchersJson(list: readonly MatcherPlugin[]): Record<string, unknown>[] {
  return list.map((m) => ({ id: m.id, version: m.version, summary: m.summary, params: m.params.map(paramInfo) }));
}

/** Plain-text listing, one block per matcher. */
export function matchersText(list: readonly MatcherPlugin[]): string {
  if (!list.length) return 'No built-in matchers are registered.\n';
  const lines: string[] = [];
  for (const m of list) {
    lines.push(`${m.id} (version ${m.version})`);
    lines.push(`  ${m.summary}`);
    if (!m.params.length) lines.push('  no parameters');
    const nameW = Math.max(0, ...m.params.map((p) => p.name.length));
    for (const p of m.params) {
      lines.push(`  ${p.name.padEnd(nameW)}  default ${formatParamValue(p.default)}; ${describeAllowed(p)}`);
      if (p.description) lines.push(`  ${''.padEnd(nameW)}  ${p.description}`);
    }
    lines.push('');
  }
  lines.push('Use: --matcher id:key=value,key=[a,b]   (a list is a sweep: one configuration per combination)');
  lines.push('Also: a module file (--matcher ./my-matcher.mjs) or an outside program in an experiment file; see matchers/examples/.');
  return `${lines.join('\n')}\n`;
}

export const matchersCommand: CommandModule<object, MatchersArgs> = {
  command: 'matchers',
  describe: 'List the built-in matchers with their parameters, defaults and ranges',
  builder: (y) => y.option('json', { type: 'boolean', default: false, describe: 'Print the list as JSON' }) as never,
  handler: (a) => {
    const list = builtinMatchers();
    process.stdout.write(a.json ? `${JSON.stringify(matchersJson(list), null, 2)}\n` : matchersText(list));
  },
};

export default matchersCommand;
