/**
 * `parallax matchers [--json]`: every built-in matcher and every parameter appears with
 * its default, range or values and description. Expected content comes from each
 * plugin's own schema (matchers/index.ts), and from a hand-written fixture.
 */
import { describe, expect, it, vi } from 'vitest';
import type { MatcherPlugin } from '../../src/core/matcher.js';
import { matchersCommand, matchersJson, matchersText } from '../../src/cli/commands/matchers.js';
import { builtinMatchers } from '../../src/plugins/registry.js';

const FIXTURE: MatcherPlugin = {
  id: 'dockfix',
  summary: 'fixture matcher',
  version: '2',
  params: [
    { name: 'window', type: 'int', default: 5, min: 1, max: 31, odd: true, description: 'Window side' },
    { name: 'cost', type: 'enum', default: 'sad', values: ['sad', 'zncc'], description: 'Cost kind' },
    { name: 'lr', type: 'boolean', default: false, description: 'Left-right check' },
    { name: 'gain', type: 'number', default: 0.5, description: 'Unbounded gain' },
  ],
  match: () => new Float32Array(0),
};

describe('parallax matchers', () => {
  it('prints a fixture exactly as laid out (hand-written expectation)', () => {
    expect(matchersText([FIXTURE]).split('\n').slice(0, 11)).toEqual([
      'dockfix (version 2)',
      '  fixture matcher',
      '  window  default 5; int 1..31, odd',
      '          Window side',
      '  cost    default sad; one of: sad, zncc',
      '          Cost kind',
      '  lr      default false; true or false',
      '          Left-right check',
      '  gain    default 0.5; number',
      '          Unbounded gain',
      '',
    ]);
    expect(matchersJson([FIXTURE])).toEqual([
      {
        id: 'dockfix',
        version: '2',
        summary: 'fixture matcher',
        params: FIXTURE.params, // every parameter as declared, each field kept
      },
    ]);
  });

  it('lists every built-in and every parameter, as text and as JSON (handler output)', async () => {
    const list = builtinMatchers();
    expect(list.length).toBeGreaterThan(0);
    const capture = async (json: boolean) => {
      const chunks: string[] = [];
      const spy = vi.spyOn(process.stdout, 'write').mockImplementation((c: string | Uint8Array) => {
        chunks.push(String(c));
        return true;
      });
      try {
        await (matchersCommand.handler as (a: { json: boolean }) => unknown)({ json });
      } finally {
        spy.mockRestore();
      }
      return chunks.join('');
    };
    const text = await capture(false);
    const json = JSON.parse(await capture(true)) as { id: string; params: { name: string; default: unknown; description: string }[] }[];
    expect(json.map((m) => m.id)).toEqual(list.map((m) => m.id));
    for (const m of list) {
      expect(text).toContain(`${m.id} (version ${m.version})`);
      const j = json.find((x) => x.id === m.id)!;
      expect(j.params.map((p) => p.name)).toEqual(m.params.map((p) => p.name));
      for (const p of m.params) {
        expect(text).toContain(`${p.name}`);
        expect(text).toContain(`default ${String(p.default)};`);
        expect(j.params.find((q) => q.name === p.name)!.default).toEqual(p.default);
        if (p.description) expect(text).toContain(p.description);
      }
    }
  });
});
