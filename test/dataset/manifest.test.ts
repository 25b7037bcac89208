import { mkdirSync, mkdtempSync, rmSync, symlinkSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { InputError } from '../../src/core/errors.js';
import { loadManifest, sortedPairs, validateManifest } from '../../src/dataset/manifest.js';
import { datasetHash } from '../../src/dataset/hash.js';
import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';

const root = mkdtempSync(join(tmpdir(), 'parallax-manifest-'));
afterAll(() => rmSync(root, { recursive: true, force: true }));

/** The README's example manifest ("Datasets"), as one line. */
const README_FORM =
  '{"name":"dock-demo","camera":{"focalPx":700,"baselineM":0.12,"cxShiftPx":0},"disparityRange":[0,96],"truthEncoding":{"scale":64,"invalid":0},"pairs":[{"id":"crates-01","left":"crates-01/left.png","right":"crates-01/right.png","truth":"crates-01/truth.pfm","occlusion":"crates-01/occluded.png"}]}';

let n = 0;
function dsDir(text: string): string {
  const d = join(root, `ds${n++}`);
  mkdirSync(d, { recursive: true });
  writeFileSync(join(d, 'dataset.json'), text);
  return d;
}

function errorOf(f: () => unknown): InputError {
  try {
    f();
  } catch (e) {
    expect(e).toBeInstanceOf(InputError);
    return e as InputError;
  }
  throw new Error('expected an InputError');
}

/** The error of loading a manifest made from `obj`. */
const loadError = (obj: unknown): Error => errorOf(() => loadManifest(dsDir(JSON.stringify(obj))));

describe('loadManifest', () => {
  it('loads the example manifest of the README, from the folder and from the file', () => {
    const d = dsDir(README_FORM);
    for (const arg of [d, join(d, 'dataset.json')]) {
      const m = loadManifest(arg);
      // Expected values: read off the JSON text above.
      expect(m.name).toBe('dock-demo');
      expect(m.camera).toEqual({ focalPx: 700, baselineM: 0.12, cxShiftPx: 0 });
      expect(m.disparityRange).toEqual([0, 96]);
      expect(m.truthEncoding).toEqual({ scale: 64, invalid: 0 });
      expect(m.pairs).toHaveLength(1);
      // Paths are relative to the manifest's folder (README, "Datasets").
      expect(m.pairs[0].left).toBe(join(d, 'crates-01/left.png'));
      expect(m.pairs[0].occlusion).toBe(join(d, 'crates-01/occluded.png'));
    }
  });

  it('takes optional group, tags and a per-pair camera; sorts pairs by id', () => {
    const d = dsDir(
      JSON.stringify({
        name: 'dock-b',
        disparityRange: [-2, 40],
        pairs: [
          { id: 'ramp-2', left: 'l2.png', right: 'r2.png', truth: 't2.pfm', group: 'drive-a', tags: ['night'] },
          { id: 'ramp-1', left: 'l1.png', right: 'r1.png', truth: 't1.pfm', camera: { focalPx: 500, baselineM: 0.1, cxShiftPx: 3 } },
        ],
      }),
    );
    const m = loadManifest(d);
    expect(m.camera).toBeUndefined();
    expect(m.pairs[0].group).toBe('drive-a');
    expect(m.pairs[0].tags).toEqual(['night']);
    expect(m.pairs[1].camera).toEqual({ focalPx: 500, baselineM: 0.1, cxShiftPx: 3 });
    // Code-unit order: "ramp-1" < "ramp-2" (common practice: locale-independent sort).
    expect(sortedPairs(m).map((p) => p.id)).toEqual(['ramp-1', 'ramp-2']);
  });

  it('bad JSON names the file', () => {
    const d = dsDir('{"name": "x", ');
    const e = errorOf(() => loadManifest(d));
    expect(e.message).toContain(join(d, 'dataset.json'));
    expect(e.message).toMatch(/not valid JSON/);
    expect(e.message).not.toContain('\n');
  });

  it('a missing field names the file and the field path', () => {
    const obj = JSON.parse(README_FORM);
    delete obj.pairs[0].truth;
    const d = dsDir(JSON.stringify(obj));
    const e = errorOf(() => loadManifest(d));
    expect(e.message).toContain(join(d, 'dataset.json'));
    expect(e.message).toContain('pairs[0].truth');
    expect(e.file).toBe(join(d, 'dataset.json'));
  });

  it('a wrong type names the field path', () => {
    const obj = JSON.parse(README_FORM);
    obj.camera.focalPx = '700';
    const d = dsDir(JSON.stringify(obj));
    const e = errorOf(() => loadManifest(d));
    expect(e.message).toContain('camera.focalPx');
    const obj2 = JSON.parse(README_FORM);
    obj2.disparityRange = [96, 0];
    expect(errorOf(() => loadManifest(dsDir(JSON.stringify(obj2)))).message).toContain('disparityRange');
  });

  // Each case spoils the README's example in one way; the error must name every needle.
  const refusals: [string, (obj: any) => void, string[]][] = [
    ['an unknown field (a typo) is refused, naming it', (o) => (o.pairs[0].occlusoin = 'x.png'), ['pairs[0]', 'occlusoin']],
    [
      'PNG truth without truthEncoding is an error naming the truth file',
      (o) => {
        delete o.truthEncoding;
        o.pairs[0].truth = 'crates-01/truth.png';
      },
      ['truthEncoding', 'crates-01/truth.png'],
    ],
  ];
  it.each(refusals)('%s', (_title, spoil, needles) => {
    const obj = JSON.parse(README_FORM);
    spoil(obj);
    const message = loadError(obj).message;
    for (const needle of needles) expect(message).toContain(needle);
  });

  it('duplicate and unsafe pair ids are refused', () => {
    const obj = JSON.parse(README_FORM);
    obj.pairs.push({ ...obj.pairs[0] });
    const e = loadError(obj);
    expect(e.message).toMatch(/duplicate pair id "crates-01"/);
    for (const bad of ['../up', 'a/b', '.hidden', '', 'sp ace']) {
      const o = JSON.parse(README_FORM);
      o.pairs[0].id = bad;
      expect(errorOf(() => loadManifest(dsDir(JSON.stringify(o)))).message).toContain('pairs[0].id');
    }
  });

  it('paths leaving the folder are refused: ../, absolute, and a symlink pointing outside', () => {
    const outside = join(root, 'outside.png');
    writeFileSync(outside, 'x');
    for (const [field, value] of [
      ['left', '../x.png'],
      ['right', 'crates-01/../../x.png'],
      ['truth', '/etc/passwd'],
    ] as const) {
      const o = JSON.parse(README_FORM);
      o.pairs[0][field] = value;
      const d = dsDir(JSON.stringify(o));
      const e = errorOf(() => loadManifest(d));
      expect(e.message).toContain(join(d, 'dataset.json'));
      expect(e.message).toContain(value);
      expect(e.message).toContain(`pairs[0].${field}`);
    }
    const o = JSON.parse(README_FORM);
    const d = dsDir(JSON.stringify(o));
    mkdirSync(join(d, 'crates-01'));
    symlinkSync(outside, join(d, 'crates-01/left.png'));
    const e = errorOf(() => loadManifest(d));
    expect(e.message).toMatch(/symbolic link/);
    expect(e.message).toContain('crates-01/left.png');
    // A symlink that stays inside is fine.
    rmSync(join(d, 'crates-01/left.png'));
    writeFileSync(join(d, 'real.png'), 'x');
    symlinkSync(join(d, 'real.png'), join(d, 'crates-01/left.png'));
    expect(loadManifest(d).name).toBe('dock-demo');
  });

  it('validateManifest collects every problem, not only the first', () => {
    const o = JSON.parse(README_FORM);
    o.pairs.push({ ...o.pairs[0], left: '../a.png' });
    const v = validateManifest(JSON.stringify(o), '/x/dataset.json');
    expect(v.manifest).toBeUndefined();
    expect(v.problems).toHaveLength(2);
    expect(v.partial?.pairs).toHaveLength(2);
  });
});

describe('datasetHash', () => {
  it('is sha256 over the manifest and each referenced file as documented', async () => {
    const d = dsDir(JSON.stringify({ name: 'h', disparityRange: [0, 4], pairs: [{ id: 'a', left: 'l.png', right: 'r.png', truth: 't.pfm' }] }));
    writeFileSync(join(d, 'l.png'), 'LEFT');
    writeFileSync(join(d, 'r.png'), 'RIGHT');
    writeFileSync(join(d, 't.pfm'), 'TRUTH');
    const m = loadManifest(d);
    // Independent recomputation with node:crypto over the layout in hash.ts's comment:
    // manifest bytes, then "\n<rel>\n<bytes>" per file in sorted relative-path order.
    const h = createHash('sha256');
    h.update(readFileSync(join(d, 'dataset.json')));
    for (const [rel, body] of [['l.png', 'LEFT'], ['r.png', 'RIGHT'], ['t.pfm', 'TRUTH']]) h.update(`\n${rel}\n${body}`);
    const before = h.digest('hex');
    expect(await datasetHash(m)).toBe(before);
    // Changing one referenced file's bytes changes the hash (common practice for content hashes).
    writeFileSync(join(d, 't.pfm'), 'TRUTH2');
    expect(await datasetHash(m)).not.toBe(before);
  });

  it('fails on an unreadable file, or marks it in the same layout with markUnreadable', async () => {
    const d = dsDir(JSON.stringify({ name: 'h2', disparityRange: [0, 4], pairs: [{ id: 'a', left: 'l.png', right: 'r.png', truth: 't.pfm' }] }));
    writeFileSync(join(d, 'l.png'), 'LEFT');
    writeFileSync(join(d, 't.pfm'), 'TRUTH'); // r.png missing
    const m = loadManifest(d);
    await expect(datasetHash(m)).rejects.toThrow(/r\.png: cannot read \(ENOENT\)/);
    // Independent recomputation as above, with the documented marker for the missing file.
    const h = createHash('sha256');
    h.update(readFileSync(join(d, 'dataset.json')));
    for (const [rel, body] of [['l.png', 'LEFT'], ['r.png', '<unreadable ENOENT>'], ['t.pfm', 'TRUTH']]) h.update(`\n${rel}\n${body}`);
    const marked = h.digest('hex');
    expect(await datasetHash(m, { markUnreadable: true })).toBe(marked);
    // Once the file is there, the hash differs (so --resume refuses a run taken before).
    writeFileSync(join(d, 'r.png'), 'RIGHT');
    expect(await datasetHash(m, { markUnreadable: true })).not.toBe(marked);
  });
});
