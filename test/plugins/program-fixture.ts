/**
 * Fixture of the outside-program tests: two small fake programs (per-pair and
 * long-lived Node scripts written by the test, whose outputs are worked out by hand),
 * two gray images, and the helpers the tests share.
 */
import { afterAll, beforeAll, expect } from 'vitest';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { MatcherFailure } from '../../src/core/errors.js';
import { encodePng } from '../../src/io/png.js';
import type { MatchInput, MatchOutput, ParamValues } from '../../src/core/matcher.js';
import type { ProgramMatcherDefInput, ProgramMatcherPlugin } from '../../src/plugins/program/index.js';
import { lcg32 } from '../support/rng.js';

export const REPO = resolve(__dirname, '..', '..');
export const W = 20;
export const H = 12;
export let tmp: string;
export let leftPng: string;
export let rightPng: string;
export let leftGray: Float32Array;
export let rightGray: Float32Array;

/** The per-pair fake: argv = mode left right out min max pairId pidFile. */
export const PER_PAIR = `
import { readFileSync, writeFileSync, appendFileSync } from 'node:fs';
import { spawn } from 'node:child_process';
import { createRequire } from 'node:module';
const { PNG } = createRequire(${JSON.stringify(join(REPO, 'package.json'))})('pngjs');
const [mode, left, right, out, minS, maxS, pairId, pidFile] = process.argv.slice(2);
const min = Number(minS), max = Number(maxS);
const png = PNG.sync.read(readFileSync(left), { skipRescale: true });
const w = png.width, h = png.height;
function pfm(path, width, height, f) {
  const head = Buffer.from('Pf\\n' + width + ' ' + height + '\\n-1.0\\n', 'latin1');
  const data = Buffer.alloc(width * height * 4);
  for (let y = 0; y < height; y++) for (let x = 0; x < width; x++)
    data.writeFloatLE(f(x, y), ((height - 1 - y) * width + x) * 4); // rows bottom to top
  writeFileSync(path, Buffer.concat([head, data]));
}
process.stderr.write('fake: pair ' + pairId + ' mode ' + mode + '\\n');
if (mode === 'ok') pfm(out, w, h, (x, y) => min + 0.5 * y + 0.25 * x);
else if (mode === 'max') pfm(out, w, h, () => max);
else if (mode === 'echo') pfm(out, w, h, (x, y) => png.data[(y * w + x) * 4] + 1000 * (png.data[(y * w + x) * 4 + 3] === 255 ? 0 : 1));
else if (mode === 'npy') {
  const header = "{'descr': '<f4', 'fortran_order': False, 'shape': (" + h + ", " + w + "), }";
  const pad = 64 - ((10 + header.length + 1) % 64);
  const hdr = header + ' '.repeat(pad % 64) + '\\n';
  const pre = Buffer.from([0x93, 0x4e, 0x55, 0x4d, 0x50, 0x59, 1, 0, hdr.length & 255, hdr.length >> 8]);
  const data = Buffer.alloc(w * h * 4);
  for (let i = 0; i < w * h; i++) data.writeFloatLE(i % w, i * 4);
  writeFileSync(out, Buffer.concat([pre, Buffer.from(hdr, 'latin1'), data]));
}
else if (mode === 'exit1') { process.stderr.write('loading weights\\nerror: weights file missing\\n'); process.exit(1); }
else if (mode === 'noout') { process.stderr.write('nothing to do\\n'); }
else if (mode === 'wrongsize') pfm(out, w + 1, h, () => 1);
else if (mode === 'garbage') writeFileSync(out, 'this is not a disparity file');
else if (mode === 'selfkill') { process.stderr.write('about to die\\n'); process.kill(process.pid, 'SIGKILL'); }
else if (mode === 'hang') {
  const kid = spawn('sleep', ['60'], { stdio: 'ignore' });
  appendFileSync(pidFile, process.pid + ' ' + kid.pid + '\\n');
  process.stderr.write('hanging on purpose\\n');
  process.on('SIGTERM', () => {}); // ignore the polite signal: SIGKILL must follow
  setInterval(() => {}, 1000);
}
`;

/** The long-lived fake: one JSON request per line; behaviour chosen by the request id. */
const SERVER = `
import { writeFileSync, appendFileSync } from 'node:fs';
import { createInterface } from 'node:readline';
appendFileSync(process.env.PIDS_FILE, process.pid + '\\n');
process.stderr.write('server starting\\n');
function pfm(path, width, height, v) {
  const head = Buffer.from('Pf\\n' + width + ' ' + height + '\\n-1.0\\n', 'latin1');
  const data = Buffer.alloc(width * height * 4);
  for (let i = 0; i < width * height; i++) data.writeFloatLE(v, i * 4);
  writeFileSync(path, Buffer.concat([head, data]));
}
const rl = createInterface({ input: process.stdin });
rl.on('line', (line) => {
  const req = JSON.parse(line);
  const id = String(req.id);
  const reply = (o) => process.stdout.write(JSON.stringify(o) + '\\n');
  if (id.startsWith('ok')) {
    pfm(req.out, ${W}, ${H}, req.minDisparity + req.params.level);
    reply({ id: req.id, ok: true, time_ms: 1.5 });
  } else if (id.startsWith('conf')) {
    pfm(req.out, ${W}, ${H}, req.minDisparity);
    pfm(req.conf, ${W}, ${H}, 0.75);
    reply({ id: req.id, ok: true });
  } else if (id.startsWith('crash')) {
    process.stderr.write('fatal: out of memory (simulated)\\n');
    process.exit(3);
  } else if (id.startsWith('hang')) {
    // never answers
  } else if (id.startsWith('bad')) {
    reply({ id: req.id, ok: false, error: 'cannot open left image' });
  } else if (id.startsWith('garbage')) {
    process.stdout.write('hello from the program\\n');
  } else if (id.startsWith('wrongid')) {
    reply({ id: 'someone-else', ok: true });
  }
});
`;

function gray(seed: number): Float32Array {
  const out = new Float32Array(W * H);
  const next = lcg32(seed); // LCG, Numerical Recipes constants
  for (let i = 0; i < out.length; i++) out[i] = next() >>> 24;
  return out;
}

function toPng(g: Float32Array): Buffer {
  const data = new Uint8Array(g.length);
  for (let i = 0; i < g.length; i++) data[i] = g[i];
  return encodePng({ width: W, height: H, channels: 1, bitDepth: 8, data });
}

/** Installs the fixture's hooks in the calling test file: a temp folder with the fake programs and two small images. */
export function useProgramFixture(): void {
  beforeAll(() => {
  tmp = mkdtempSync(join(tmpdir(), 'parallax-plugins-program-'));
  writeFileSync(join(tmp, 'fake.mjs'), PER_PAIR);
  writeFileSync(join(tmp, 'server.mjs'), SERVER);
  leftGray = gray(1);
  rightGray = gray(2);
  leftPng = join(tmp, 'left.png');
  rightPng = join(tmp, 'right.png');
  writeFileSync(leftPng, toPng(leftGray));
  writeFileSync(rightPng, toPng(rightGray));
  });
  afterAll(() => {
    rmSync(tmp, { recursive: true, force: true });
  });
}

export function input(pairId: string, withSource = true): MatchInput {
  return {
    width: W,
    height: H,
    left: leftGray,
    right: rightGray,
    minDisparity: 2,
    maxDisparity: 9,
    ...(withSource ? { source: { pairId, left: leftPng, right: rightPng } } : {}),
  };
}

// Definitions as an experiment file holds them (plain JSON); programMatcher validates them at run time.
export const perPairDef = (extra: Record<string, unknown> = {}): ProgramMatcherDefInput => ({
  id: 'fake',
  command: [process.execPath, 'fake.mjs', '{param:mode}', '{left}', '{right}', '{out}', '{minDisparity}', '{maxDisparity}', '{pairId}', 'pids.txt'],
  output: { format: 'pfm' },
  timeoutMs: 1500,
  params: [
    {
      name: 'mode',
      type: 'enum',
      default: 'ok',
      values: ['ok', 'max', 'echo', 'npy', 'exit1', 'noout', 'wrongsize', 'garbage', 'selfkill', 'hang'],
      description: 'what the fake does',
    },
  ],
  ...extra,
}) as ProgramMatcherDefInput;

export async function run(p: ProgramMatcherPlugin, inp: MatchInput, params: ParamValues, signal = new AbortController().signal): Promise<MatchOutput> {
  const r = await p.match(inp, params, signal);
  return r instanceof Float32Array ? { disparity: r } : r;
}

export async function failure(promise: Promise<unknown>): Promise<MatcherFailure> {
  const e = await promise.then(
    () => undefined,
    (err: unknown) => err,
  );
  expect(e).toBeInstanceOf(MatcherFailure);
  const msg = (e as Error).message;
  expect(msg.includes('\n')).toBe(false);
  return e as MatcherFailure;
}

/** A process is gone when kill(pid, 0) fails, or it is a zombie awaiting reaping (dead, state Z). */
export function gone(pid: number): boolean {
  try {
    process.kill(pid, 0);
  } catch {
    return true;
  }
  try {
    const stat = readFileSync(`/proc/${pid}/stat`, 'utf8');
    return stat.slice(stat.lastIndexOf(')') + 2).startsWith('Z');
  } catch {
    return true;
  }
}
