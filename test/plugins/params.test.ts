/**
 * Matcher specs: parsing, sweeps, labels and validation errors.
 * The grammar and the expected expansions are the ones documented in
 * src/plugins/params.ts; every expected value is worked out by hand below.
 */
import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { UsageError } from '../../src/core/errors.js';
import type { MatcherPlugin, ParamSpec } from '../../src/core/matcher.js';
import {
  checkParamValue,
  configLabel,
  expandSweep,
  MAX_SWEEP_CONFIGS,
  parseMatcherSpec,
} from '../../src/plugins/params.js';
import { builtinMatchers, planSpec, resolveMatchers } from '../../src/plugins/registry.js';

const SCHEMA: ParamSpec[] = [
  { name: 'p1', type: 'int', default: 8, min: 0, max: 1000, description: 'small penalty' },
  { name: 'p2', type: 'int', default: 96, min: 0, max: 4000, description: 'large penalty' },
  { name: 'window', type: 'int', default: 5, min: 1, max: 31, odd: true, description: 'window side' },
  { name: 'ratio', type: 'number', default: 0.5, min: 0, max: 1, description: 'a ratio' },
  { name: 'lr', type: 'boolean', default: true, description: 'left-right check' },
  { name: 'cost', type: 'enum', default: 'sad', values: ['sad', 'ssd', 'zncc'], description: 'cost' },
];

const FAKE: MatcherPlugin = {
  id: 'fake',
  summary: 'test fixture',
  version: '1',
  params: SCHEMA,
  match: () => new Float32Array(0),
};
const OTHER: MatcherPlugin = { ...FAKE, id: 'other', params: [] };
const KNOWN = [FAKE, OTHER];

/** Catch the UsageError thrown by fn and return its message (fails the test otherwise). */
function usageMessage(fn: () => unknown): string {
  try {
    fn();
  } catch (e) {
    expect(e).toBeInstanceOf(UsageError);
    return (e as Error).message;
  }
  throw new Error('expected a UsageError');
}

describe('parseMatcherSpec', () => {
  it('splits id and assignments, trims whitespace, keeps written order', () => {
    // Worked by hand from the grammar in params.ts.
    expect(parseMatcherSpec('sgm')).toEqual({ id: 'sgm', assignments: [] });
    expect(parseMatcherSpec(' sgm : p2 = 96 , p1=[4, 8] ')).toEqual({
      id: 'sgm',
      assignments: [
        { key: 'p2', values: ['96'] },
        { key: 'p1', values: ['4', '8'] },
      ],
    });
    expect(parseMatcherSpec('sgm:')).toEqual({ id: 'sgm', assignments: [] });
  });

  it('recognises module paths, including ones containing a colon', () => {
    // Module-path rule (params.ts): split at the first ':' followed by key= or nothing.
    expect(parseMatcherSpec('./m.mjs:window=7').id).toBe('./m.mjs');
    expect(parseMatcherSpec('/tmp/a:b/m.mjs:window=7')).toEqual({
      id: '/tmp/a:b/m.mjs',
      assignments: [{ key: 'window', values: ['7'] }],
    });
    expect(parseMatcherSpec('/tmp/a:b/m.mjs').id).toBe('/tmp/a:b/m.mjs');
  });

  it('rejects malformed specs with one-line UsageErrors naming --matcher', () => {
    // Common practice: each malformed form gets its own explanation.
    const cases: [string, RegExp][] = [
      [':p1=3', /missing matcher id/],
      ['fake:p1', /expected key=value/],
      ['fake:p1=', /empty value/],
      ['fake:p1=[1,2', /'\[' without '\]'/],
      ['fake:p1=1]', /'\]' without '\['/],
      ['fake:p1=[[1]]', /nested brackets/],
      ['fake:p1=[]', /empty list/],
      ['fake:p1=[1,,2]', /empty value/],
      ['fake:p1=1,p1=2', /given twice/],
      ['fake:1x=2', /bad parameter name/],
      ['fake:p1=[1]x', /text after/],
    ];
    for (const [spec, re] of cases) {
      const msg = usageMessage(() => parseMatcherSpec(spec));
      expect(msg, spec).toMatch(re);
      expect(msg.startsWith('--matcher: '), spec).toBe(true);
      expect(msg.includes('\n'), spec).toBe(false);
    }
  });
});

describe('validation of values', () => {
  it('parses numbers, booleans and enum values per the schema', () => {
    // Hand-worked: text -> typed value.
    const [p1, , win, ratio, lr, cost] = SCHEMA;
    expect(checkParamValue('fake', p1, '12')).toBe(12);
    expect(checkParamValue('fake', p1, '1e2')).toBe(100);
    expect(checkParamValue('fake', p1, '12.0')).toBe(12);
    expect(checkParamValue('fake', win, '7')).toBe(7);
    expect(checkParamValue('fake', ratio, '.25')).toBe(0.25);
    expect(checkParamValue('fake', lr, 'false')).toBe(false);
    expect(checkParamValue('fake', lr, '1')).toBe(true);
    expect(checkParamValue('fake', cost, 'zncc')).toBe('zncc');
    expect(Object.is(checkParamValue('fake', ratio, '-0'), 0)).toBe(true);
  });

  it('names option, matcher, parameter and the allowed range or values', () => {
    // Expected messages written by hand from the schema above.
    const plan = (spec: string) => usageMessage(() => planSpec(spec, KNOWN));
    expect(plan('fake:p1=1001')).toBe('--matcher: fake: p1=1001 is out of range; allowed: int 0..1000');
    expect(plan('fake:p1=2.5')).toBe('--matcher: fake: p1=2.5 is not an integer; allowed: int 0..1000');
    expect(plan('fake:p1=abc')).toBe('--matcher: fake: p1=abc is not a number; allowed: int 0..1000');
    expect(plan('fake:window=8')).toBe('--matcher: fake: window=8 must be odd; allowed: int 1..31, odd');
    expect(plan('fake:cost=census')).toBe('--matcher: fake: cost=census is not allowed; allowed: one of: sad, ssd, zncc');
    expect(plan('fake:lr=maybe')).toBe('--matcher: fake: lr=maybe is not a boolean; allowed: true or false');
    expect(plan('fake:ratio=inf')).toMatch(/^--matcher: fake: ratio=inf is not a number/);
    expect(plan('fake:p3=1')).toBe('--matcher: fake: unknown parameter "p3"; known: p1, p2, window, ratio, lr, cost');
    expect(plan('No/Such')).toBe('--matcher: unknown matcher "No/Such"; known: fake, other');
    // A lowercase name could be an installed package: planned as a module, refused on loading (below).
    expect(planSpec('nosuch', KNOWN).kind).toBe('module');
    expect(plan('NoSuch:p=1')).toBe('--matcher: unknown matcher "NoSuch"; known: fake, other');
  });

  it('lists the built-in ids when resolveMatchers meets an unknown id', async () => {
    // The known list must come from matchers/index.ts (BUILTIN_MATCHERS).
    const ids = builtinMatchers().map((m) => m.id);
    const err = await resolveMatchers(['Not_A_Matcher']).catch((e: unknown) => e);
    expect(err).toBeInstanceOf(UsageError);
    expect((err as Error).message).toBe(`--matcher: unknown matcher "Not_A_Matcher"; known: ${ids.join(', ')}`);
    const err2 = await resolveMatchers(['no-such-matcher-pkg']).catch((e: unknown) => e);
    expect(err2).toBeInstanceOf(UsageError);
    expect((err2 as Error).message).toBe(
      `--matcher: unknown matcher "no-such-matcher-pkg" (not a built-in id nor an installed package); known: ${ids.join(', ')}`,
    );
    const err3 = await resolveMatchers(['./missing-matcher.mjs'], { cwd: '/tmp' }).catch((e: unknown) => e);
    expect((err3 as Error).message).toBe('--matcher: module file not found: /tmp/missing-matcher.mjs');
  });
});

describe('sweeps and labels', () => {
  it('expands the cartesian product in schema order, first parameter slowest', () => {
    // Hand-worked: p1 in [4,8] x window in [3,5,7] = 6 configurations; written order
    // of the keys does not matter, the schema order does.
    const plan = planSpec('fake:window=[3,5,7],p1=[4,8]', KNOWN);
    if (plan.kind !== 'known') throw new Error('expected a known plugin');
    const pairs = plan.paramsList.map((p) => [p.p1, p.window]);
    expect(pairs).toEqual([
      [4, 3],
      [4, 5],
      [4, 7],
      [8, 3],
      [8, 5],
      [8, 7],
    ]);
    // Every configuration carries every parameter (defaults filled in).
    for (const p of plan.paramsList) expect(Object.keys(p)).toEqual(SCHEMA.map((s) => s.name));
    expect(plan.paramsList[0]).toEqual({ p1: 4, p2: 96, window: 3, ratio: 0.5, lr: true, cost: 'sad' });
  });

  it('counts the product over three lists and drops duplicate values', () => {
    // 2 x 3 x 2 = 12 (hand count); "8" and "8.0" are the same value.
    const plan = planSpec('fake:p1=[8,8.0,9],p2=[1,2,3],cost=[ssd,zncc]', KNOWN);
    if (plan.kind !== 'known') throw new Error('expected a known plugin');
    expect(plan.paramsList.length).toBe(12);
    expect(plan.paramsList.map((p) => p.cost).slice(0, 4)).toEqual(['ssd', 'zncc', 'ssd', 'zncc']);
  });

  it('labels list only non-default keys in schema order; bare id for defaults', () => {
    // Label rule (README vocabulary, "configuration"): `sgm:p1=8,p2=96` style, defaults omitted.
    const label = (params: Record<string, number | boolean | string>) =>
      configLabel('fake', SCHEMA, expandSweep('fake', SCHEMA, params)[0]);
    expect(label({})).toBe('fake');
    expect(label({ p1: 8 })).toBe('fake'); // 8 is the default
    expect(label({ cost: 'ssd', p2: 64, p1: 4 })).toBe('fake:p1=4,p2=64,cost=ssd');
    expect(label({ lr: false, ratio: 0.25 })).toBe('fake:ratio=0.25,lr=false');
  });

  it('accepts JSON arrays as sweeps (experiment files) and checks their values', () => {
    // Same rules for typed values as for text.
    expect(expandSweep('fake', SCHEMA, { p1: [1, 2], lr: [true, false] }).length).toBe(4);
    expect(usageMessage(() => expandSweep('fake', SCHEMA, { window: [3, 4] }, 'matchers[0]'))).toBe(
      'matchers[0]: fake: window=4 must be odd; allowed: int 1..31, odd',
    );
    expect(usageMessage(() => expandSweep('fake', SCHEMA, { p1: [] }))).toMatch(/empty list/);
    // An enum whose values look like numbers accepts JSON numbers (e.g. a path count).
    const paths: ParamSpec = { name: 'paths', type: 'enum', default: '8', values: ['8', '4'], description: '' };
    expect(expandSweep('x', [paths], { paths: [4, 8] }).map((p) => p.paths)).toEqual(['4', '8']);
  });

  it('refuses sweeps beyond the configuration limit', () => {
    // 101 x 101 = 10201 > 10000 (hand count).
    const many = Array.from({ length: 101 }, (_, i) => i);
    const msg = usageMessage(() => expandSweep('fake', SCHEMA, { p1: many, p2: many }));
    expect(msg).toContain(`limit is ${MAX_SWEEP_CONFIGS}`);
  });

  it('round-trips: a label parses back to the same parameters', () => {
    // Property of the label format (common practice: labels are valid specs).
    fc.assert(
      fc.property(
        fc.integer({ min: 0, max: 1000 }),
        fc.integer({ min: 0, max: 15 }).map((k) => 2 * k + 1),
        fc.constantFrom('sad', 'ssd', 'zncc'),
        fc.boolean(),
        (p1, window, cost, lr) => {
          const params = expandSweep('fake', SCHEMA, { p1, window, cost, lr })[0];
          const label = configLabel('fake', SCHEMA, params);
          const plan = planSpec(label, KNOWN);
          return plan.kind === 'known' && plan.paramsList.length === 1 && JSON.stringify(plan.paramsList[0]) === JSON.stringify(params);
        },
      ),
      { numRuns: 300 },
    );
  });
});

describe('resolveMatchers on the built-ins', () => {
  it('expands sweeps in spec order, fills defaults, drops exact repeats', async () => {
    // Expected labels derived by hand from the first built-in's own schema.
    const m = builtinMatchers()[0];
    const intParam = m.params.find((p) => p.type === 'int' && p.odd && p.max !== undefined && p.max >= p.default + 4);
    if (!intParam || intParam.type !== 'int') throw new Error('fixture: need an odd int parameter on the first built-in');
    const a = intParam.default + 2;
    const b = intParam.default + 4;
    const configs = await resolveMatchers([`${m.id}:${intParam.name}=[${a},${b}]`, m.id, m.id]);
    expect(configs.map((c) => c.label)).toEqual([`${m.id}:${intParam.name}=${a}`, `${m.id}:${intParam.name}=${b}`, m.id]);
    expect(configs[0].params[intParam.name]).toBe(a);
    expect(Object.keys(configs[2].params)).toEqual(m.params.map((p) => p.name));
    expect(new Set(configs.map((c) => c.codeHash)).size).toBe(1);
    expect(configs[0].source).toEqual({ kind: 'builtin', id: m.id });
  });
});

describe('parser contract (fast-check)', () => {
  it('any --matcher string either parses or throws a one-line UsageError, never anything else', () => {
    // Property of the parser contract; 2,000 of the team's 10,000 generated cases.
    const token = fc.constantFrom('fake', 'other', 'p1', 'p2', 'window', 'cost', 'lr', 'ratio', 'sad', 'zncc', '3', '-1', '0.5', '1e9', 'true', 'x');
    const punct = fc.constantFrom(':', ',', '=', '[', ']', ' ', './', '.mjs', '\n', '\u0000', '"', '{');
    const structured = fc.array(fc.oneof(token, punct), { maxLength: 14 }).map((parts) => parts.join(''));
    const gridLike = fc
      .tuple(
        fc.constantFrom('fake', 'other', 'unknown'),
        fc.array(
          fc.tuple(token, fc.oneof(token, fc.array(token, { maxLength: 4 }).map((v) => `[${v.join(',')}]`))),
          { maxLength: 4 },
        ),
      )
      .map(([id, kv]) => (kv.length ? `${id}:${kv.map(([k, v]) => `${k}=${v}`).join(',')}` : id));
    const spec = fc.oneof(fc.string({ maxLength: 40 }), fc.string({ unit: 'binary', maxLength: 30 }), structured, gridLike);
    fc.assert(
      fc.property(spec, (s) => {
        try {
          const plan = planSpec(s, KNOWN);
          if (plan.kind === 'known') {
            if (plan.paramsList.length === 0) return false;
            for (const p of plan.paramsList) if (Object.keys(p).length !== plan.plugin.params.length) return false;
          }
        } catch (e) {
          if (!(e instanceof UsageError)) throw e;
          if (!e.message.startsWith('--matcher: ') || /[\n\r]/.test(e.message)) return false;
        }
        return true;
      }),
      { numRuns: 2000 },
    );
  });
});
