/** Configuration names (src/plugins/params.ts, registry.ts) and prediction-folder coverage (src/runner/predictions.ts). */
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { splitConfigName } from '../../src/plugins/params.js';
import { resolveMatcherEntries, resolveMatchers } from '../../src/plugins/registry.js';
import { predictionCoverage } from '../../src/runner/predictions.js';

const root = mkdtempSync(join(tmpdir(), 'parallax-names-'));
afterAll(() => rmSync(root, { recursive: true, force: true }));

describe('configuration names', () => {
  it('name=spec names a command-line spec; a spec whose first "=" follows its ":" has no name', () => {
    expect(splitConfigName('production=sgm:p2=400')).toEqual({ name: 'production', spec: 'sgm:p2=400' });
    expect(splitConfigName('sgm:p2=400')).toEqual({ spec: 'sgm:p2=400' });
    expect(splitConfigName('block')).toEqual({ spec: 'block' });
    expect(() => splitConfigName('bad name=sgm')).toThrow(/--matcher: configuration name "bad name"/);
  });

  it('a named configuration takes its name as label; unnamed ones keep the default label', async () => {
    const cs = await resolveMatchers(['production=sgm:p2=400', 'sgm:p2=400', 'block']);
    expect(cs.map((c) => c.label)).toEqual(['production', 'sgm:p2=400', 'block']);
    expect(cs[0].params.p2).toBe(400);
  });

  it('an experiment entry names a configuration; a named sweep labels each point with the swept values', async () => {
    const cs = await resolveMatcherEntries([{ id: 'sgm', name: 'tuned', params: { p2: [64, 400], p1: 8 } }, { id: 'census', name: 'fast' }], { baseDir: root });
    expect(cs.map((c) => c.label)).toEqual(['tuned:p2=64', 'tuned:p2=400', 'fast']);
  });

  it('relations between parameters are checked before any job: p1 above p2 is refused (sgm declares p1 <= p2)', async () => {
    await expect(resolveMatchers(['sgm:p1=200,p2=100'])).rejects.toThrow('sgm: p1=200 must not exceed p2=100');
    await expect(resolveMatcherEntries([{ id: 'sgm', params: { p1: [4, 300], p2: 200 } }], { baseDir: root })).rejects.toThrow(/matchers\[0\]: sgm: p1=300 must not exceed p2=200/);
  });

  it('timeoutMs applies to module entries only; a module takes it', async () => {
    await expect(resolveMatcherEntries([{ id: 'block', timeoutMs: 5 }], { baseDir: root })).rejects.toThrow(/matchers\[0\]\.timeoutMs: applies to module plugins/);
    const mod = join(root, 'm.mjs');
    writeFileSync(mod, `export default { id: 'm', summary: 's', params: [], match: (i) => new Float32Array(i.width * i.height) };\n`);
    const [c] = await resolveMatcherEntries([{ id: './m.mjs', timeoutMs: 2500 }], { baseDir: root });
    expect(c.timeoutMs).toBe(2500);
    const [d] = await resolveMatchers([mod]);
    expect(d.timeoutMs).toBe(300_000); // the documented default, the same as a program's
  });
});

describe('prediction folders against the run pairs', () => {
  it('no matching file is an error naming the folder and an expected file; stray files come back for a warning', () => {
    const dir = join(root, 'preds');
    mkdirSync(dir);
    writeFileSync(join(dir, 'bay-x.pfm'), '');
    const pairs = [{ name: 'dock', pairIds: ['bay-a', 'bay-b'] }];
    expect(() => predictionCoverage({ label: 'net', dir }, pairs)).toThrow(`--predictions: ${dir} holds no prediction for any pair of the dataset(s) dock; expected e.g. ${join(dir, 'bay-a.pfm')}`);
    writeFileSync(join(dir, 'bay-a.npy'), '');
    expect(predictionCoverage({ label: 'net', dir }, pairs).unmatched).toEqual([join(dir, 'bay-x.pfm')]);
  });
});
