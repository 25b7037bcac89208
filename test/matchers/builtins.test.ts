/**
 * Every built-in matcher's declaration: listed once, a plain id, and a parameter schema
 * whose defaults are allowed by their own ranges (the registry validates user values
 * with the same schema, so a default outside it could never be given back; common practice).
 */
import { describe, expect, it } from 'vitest';
import { BUILTIN_MATCHERS } from '../../matchers/index.js';

describe('built-in matchers', () => {
  it('have distinct ids, distinct parameter names and defaults inside their own ranges', () => {
    const ids = BUILTIN_MATCHERS.map((m) => m.id);
    expect(new Set(ids).size).toBe(ids.length);
    expect(ids).toEqual(expect.arrayContaining(['block', 'census', 'sgm', 'bp']));
    for (const m of BUILTIN_MATCHERS) {
      expect(m.id, m.id).toMatch(/^[a-z][a-z0-9-]*$/);
      const names = m.params.map((p) => p.name);
      expect(new Set(names).size, m.id).toBe(names.length);
      for (const p of m.params) {
        if (p.type === 'int' || p.type === 'number') {
          if (p.min !== undefined) expect(p.default, `${m.id}.${p.name}`).toBeGreaterThanOrEqual(p.min);
          if (p.max !== undefined) expect(p.default, `${m.id}.${p.name}`).toBeLessThanOrEqual(p.max);
          if (p.odd) expect(p.default % 2, `${m.id}.${p.name}`).toBe(1);
          if (p.type === 'int') expect(Number.isInteger(p.default), `${m.id}.${p.name}`).toBe(true);
        }
        if (p.type === 'enum') expect(p.values, `${m.id}.${p.name}`).toContain(p.default);
      }
    }
  });
});
