/**
 * Hostile input for the two files a user hands the runner: the dataset manifest
 * (dataset.json) and the experiment file. Property (README, "Exit codes": errors a user can cause
 * are typed, name the file and read as one line): for any input — random JSON values,
 * mutated valid files, random strings — the parser either returns a usable result or
 * throws an InputError / UsageError whose message names the file in one line; never
 * another exception, never a hang (CPU time per case bounded), never a polluted
 * Object.prototype. Accepted results are checked for the invariants the runner relies
 * on (paths stay inside the dataset folder, thresholds ascending and distinct).
 * Case count of this file: 3 x 1,200 manifest + 3 x 1,000 experiment = 6,600 (with the
 * 14,500 of test/io/fuzz.test.ts and the --matcher parser's in test/plugins, over 21,000).
 */
import fc from 'fast-check';
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, sep } from 'node:path';
import { afterAll, describe, it } from 'vitest';
import { oneLine } from '../../src/cli/app.js';
import { InputError, UsageError } from '../../src/core/errors.js';
import { loadManifest, PAIR_ID_PATTERN } from '../../src/dataset/manifest.js';
import { loadExperimentFile } from '../../src/runner/experiment.js';

const root = mkdtempSync(join(tmpdir(), 'parallax-hostile-'));
afterAll(() => rmSync(root, { recursive: true, force: true }));
const dsDir = join(root, 'ds');
mkdirSync(dsDir);
const manifestFile = join(dsDir, 'dataset.json');
const expFile = join(root, 'experiment.json');

/** CPU time above which one parse of these small inputs counts as a hang (they take well under 10 ms). */
const HANG_CPU_MS = 1000;

const HOSTILE_STRINGS = [
  '', ' ', '.', '..', '../x.png', '../../etc/passwd', '/etc/passwd', 'C:\\x.png', 'a/../../b.png', 'a/./b/../../../c', '\u0000', 'x\u0000y',
  '\n', '=cmd|x', '__proto__', 'constructor', 'prototype', '😀', '\uD800', 'x'.repeat(3000), 'syn-0000/left.png', '%2e%2e/x', '~/x', '\\\\server\\share',
];
const hostileString = fc.constantFrom(...HOSTILE_STRINGS);
const anyValue: fc.Arbitrary<unknown> = fc.oneof(
  { weight: 3, arbitrary: fc.jsonValue() },
  { weight: 3, arbitrary: hostileString },
  { weight: 2, arbitrary: fc.oneof(fc.double(), fc.integer(), fc.constant(-0), fc.constant(1e308), fc.constant(-1)) },
  { weight: 1, arbitrary: fc.constant(null) },
  { weight: 1, arbitrary: fc.constant({ polluted: true }) },
);

/** Every path (as key lists) inside a JSON value. */
function paths(v: unknown, prefix: (string | number)[] = [], out: (string | number)[][] = []): (string | number)[][] {
  out.push(prefix);
  if (Array.isArray(v)) v.forEach((x, i) => paths(x, [...prefix, i], out));
  else if (v && typeof v === 'object') for (const [k, x] of Object.entries(v)) paths(x, [...prefix, k], out);
  return out;
}

type Mutation = { at: number; op: 'set' | 'delete' | 'addKey' | 'duplicate'; value: unknown; key: string };
const mutation: fc.Arbitrary<Mutation> = fc.record({
  at: fc.nat(),
  op: fc.constantFrom('set', 'set', 'delete', 'addKey', 'duplicate'),
  value: anyValue,
  key: fc.oneof(hostileString, fc.string({ maxLength: 8 }), fc.constantFrom('id', 'left', 'pairs', 'name', 'thresholds')),
});

/** Apply mutations to a deep copy (JSON-level: what a hand-edited file can hold). */
function mutate(base: unknown, muts: Mutation[]): unknown {
  let doc: unknown = JSON.parse(JSON.stringify(base));
  for (const m of muts) {
    const all = paths(doc);
    const p = all[m.at % all.length];
    const value = structuredClone(m.value); // values never shared between documents
    if (p.length === 0) {
      if (m.op === 'set') doc = value;
      continue;
    }
    let parent = doc as Record<string | number, unknown>;
    for (const k of p.slice(0, -1)) parent = parent[k] as Record<string | number, unknown>;
    const last = p[p.length - 1];
    if (m.op === 'set') parent[last] = value;
    else if (m.op === 'delete') {
      if (Array.isArray(parent)) parent.splice(Number(last), 1);
      else delete parent[last];
    } else if (m.op === 'addKey') {
      const target = parent[last];
      if (target && typeof target === 'object' && !Array.isArray(target)) Object.defineProperty(target, m.key, { value, enumerable: true, configurable: true, writable: true });
    } else if (Array.isArray(parent)) parent.push(JSON.parse(JSON.stringify(parent[Number(last)] ?? null)));
  }
  return doc;
}

/** Run one parse and check the contract; returns the result when it parsed. */
function contract<T>(file: string, parse: () => T): T | undefined {
  const cpu0 = process.cpuUsage();
  let out: T | undefined;
  try {
    out = parse();
  } catch (e) {
    if (!(e instanceof InputError || e instanceof UsageError)) throw e; // any other exception breaks the contract
    // As the CLI prints it (app.ts oneLine folds the lines of a message that quotes a
    // key holding a newline, which zod's "Unrecognized key" text does).
    const printed = oneLine(e.message);
    if (!printed.startsWith(file) || printed.includes('\n')) throw new Error(`not a one-line message naming the file: ${JSON.stringify(printed.slice(0, 300))}`, { cause: e });
  }
  const cpu = process.cpuUsage(cpu0);
  const ms = (cpu.user + cpu.system) / 1000;
  if (ms >= HANG_CPU_MS) throw new Error(`parse took ${ms.toFixed(0)} ms of CPU time`);
  if ((Object.prototype as Record<string, unknown>).polluted !== undefined) throw new Error('Object.prototype was polluted');
  return out;
}

// ------------------------------------------------------------------ manifest

const VALID_MANIFEST = {
  name: 'dock-small',
  description: 'loading dock, two pairs',
  camera: { focalPx: 80, baselineM: 0.12, cxShiftPx: 0 },
  disparityRange: [0, 32],
  truthEncoding: { scale: 64, invalid: 0 },
  pairs: [
    { id: 'syn-0000', left: 'syn-0000/left.png', right: 'syn-0000/right.png', truth: 'syn-0000/truth.pfm', occlusion: 'syn-0000/occluded.png', tags: ['crates'], group: 'crates' },
    { id: 'syn-0001', left: 'syn-0001/left.png', right: 'syn-0001/right.png', truth: 'syn-0001/truth.png', camera: { focalPx: 90, baselineM: 0.1 } },
  ],
};

function checkManifestText(text: string | Uint8Array): void {
  writeFileSync(manifestFile, text);
  const m = contract(manifestFile, () => loadManifest(dsDir));
  if (!m) return;
  // Invariants the runner relies on when the manifest is accepted.
  if (!PAIR_ID_PATTERN.test(m.name)) throw new Error(`accepted name ${JSON.stringify(m.name)}`);
  if (!(m.disparityRange[0] <= m.disparityRange[1])) throw new Error('accepted a reversed range');
  if (m.pairs.length < 1) throw new Error('accepted no pairs');
  for (const p of m.pairs) {
    if (!PAIR_ID_PATTERN.test(p.id)) throw new Error(`accepted pair id ${JSON.stringify(p.id)}`);
    for (const f of [p.left, p.right, p.truth, ...(p.occlusion ? [p.occlusion] : [])]) {
      // The folder itself ("." or "a/..") does not leave it; reading it fails later as an InputError.
      if (f !== dsDir && !f.startsWith(dsDir + sep)) throw new Error(`accepted a path outside the folder: ${f}`);
    }
  }
}

/** Two properties of a JSON parser: random JSON values, and the valid base with 1-4 mutations. */
function jsonProperties(check: (text: string) => void, valid: unknown, mutatedTitle: string, numRuns: number, sanity: () => boolean): void {
  it('the valid base parses (sanity check of the mutation base)', () => {
    if (!sanity()) throw new Error('the valid base is not accepted');
  });
  it('random JSON values: parsed or a typed one-line error', () => {
    fc.assert(fc.property(fc.jsonValue(), (v) => check(JSON.stringify(v) ?? 'null')), { numRuns });
  });
  it(mutatedTitle, () => {
    fc.assert(fc.property(fc.array(mutation, { minLength: 1, maxLength: 4 }), (muts) => check(JSON.stringify(mutate(valid, muts)) ?? 'null')), { numRuns });
  });
}

describe('dataset manifest parser (loadManifest)', () => {
  jsonProperties(checkManifestText, VALID_MANIFEST, 'mutated valid manifests: parsed (paths inside the folder) or a typed one-line error', 1200, () => {
    writeFileSync(manifestFile, JSON.stringify(VALID_MANIFEST));
    return loadManifest(dsDir).pairs.length === 2;
  });

  it('random strings and bytes: a typed one-line error (or, rarely, a manifest)', () => {
    const text = fc.oneof(
      fc.string({ maxLength: 200 }),
      fc.string({ unit: 'binary', maxLength: 200 }),
      fc.uint8Array({ maxLength: 200 }),
      fc.string({ maxLength: 100 }).map((s) => JSON.stringify(VALID_MANIFEST).slice(0, 40) + s),
    );
    fc.assert(fc.property(text, (t) => checkManifestText(t)), { numRuns: 1200 });
  });
});

// ------------------------------------------------------------------ experiment file

const VALID_EXPERIMENT = {
  name: 'dock-tuning',
  description: 'window sweep',
  datasets: ['ds'],
  matchers: ['block', 'sgm:p2=[64,96]', { id: 'census', params: { window: [5, 7] } }],
  predictions: [{ dir: 'preds', label: 'net-v2', scale: 256, invalid: 0 }],
  thresholds: [0.5, 1, 2],
  regions: { flatThreshold: 6, jumpRadius: 2 },
  out: 'reports/tuning',
};

function checkExperimentText(text: string | Uint8Array): void {
  writeFileSync(expFile, text);
  const s = contract(expFile, () => loadExperimentFile(expFile));
  if (!s) return;
  for (let i = 1; i < s.thresholds.length; i++) {
    if (!(s.thresholds[i] > s.thresholds[i - 1])) throw new Error(`thresholds not ascending and distinct: ${s.thresholds.join(',')}`);
  }
  if (s.thresholds.some((t) => !(Number.isFinite(t) && t > 0))) throw new Error('accepted a threshold <= 0');
  if (s.datasets.length < 1 || s.datasets.some((d) => !d.startsWith(sep))) throw new Error('datasets not absolute');
}

describe('experiment-file parser (loadExperimentFile)', () => {
  jsonProperties(checkExperimentText, VALID_EXPERIMENT, 'mutated valid experiment files: parsed (thresholds sorted, distinct, > 0) or a typed one-line error', 1000, () => {
    writeFileSync(expFile, JSON.stringify(VALID_EXPERIMENT));
    return loadExperimentFile(expFile).thresholds.length === 3;
  });

  it('random strings and bytes: a typed one-line error', () => {
    const text = fc.oneof(fc.string({ maxLength: 200 }), fc.string({ unit: 'binary', maxLength: 200 }), fc.uint8Array({ maxLength: 200 }));
    fc.assert(fc.property(text, (t) => checkExperimentText(t)), { numRuns: 1000 });
  });
});
