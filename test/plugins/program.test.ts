/**
 * Outside-program matchers: per-pair and long-lived modes, their failure modes, and
 * the geometry options (pad, resize, sign, scale). The programs are small Node
 * scripts written by the test; every expected value is worked out by hand.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, rmSync, writeFileSync, existsSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { AbortedError, MatcherFailure, UsageError } from '../../src/core/errors.js';
import { encodePng } from '../../src/io/png.js';
import type { MatchInput, MatchOutput, ParamValues } from '../../src/core/matcher.js';
import { parseProgramMatcherDef, programCodeHash, programMatcher, type ProgramMatcherDefInput, type ProgramMatcherPlugin } from '../../src/plugins/program/index.js';
import { lcg32 } from '../support/rng.js';

const REPO = resolve(__dirname, '..', '..');
const W = 20;
const H = 12;
let tmp: string;
let leftPng: string;
let rightPng: string;
let leftGray: Float32Array;
let rightGray: Float32Array;

/** The per-pair fake: argv = mode left right out min max pairId pidFile. */
const PER_PAIR = `
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

function input(pairId: string, withSource = true): MatchInput {
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
const perPairDef = (extra: Record<string, unknown> = {}): ProgramMatcherDefInput => ({
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

async function run(p: ProgramMatcherPlugin, inp: MatchInput, params: ParamValues, signal = new AbortController().signal): Promise<MatchOutput> {
  const r = await p.match(inp, params, signal);
  return r instanceof Float32Array ? { disparity: r } : r;
}

async function failure(promise: Promise<unknown>): Promise<MatcherFailure> {
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
function gone(pid: number): boolean {
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

describe('program definitions', () => {
  it('are validated with errors naming the field', () => {
    // Common practice: one line, each bad field named.
    const msg = (raw: unknown) => {
      try {
        parseProgramMatcherDef(raw, 'matchers[1].program');
      } catch (e) {
        expect(e).toBeInstanceOf(UsageError);
        return (e as Error).message;
      }
      return 'no error';
    };
    expect(msg({ id: 'x', command: ['p', '{left}', '{right}', '{out}'], output: { format: 'tiff' } })).toMatch(/^matchers\[1\]\.program: output\.format: /);
    expect(msg({ id: 'x', command: ['p', '{left}', '{right}'], output: { format: 'pfm' } })).toBe('matchers[1].program: command: must contain {out}');
    expect(msg({ id: 'x', command: ['p', '{left}', '{right}', '{out}', '{bogus}'], output: { format: 'pfm' } })).toBe(
      'matchers[1].program: command[4]: unknown placeholder {bogus}',
    );
    expect(msg({ id: 'x', command: ['p', '{param:k}', '{left}', '{right}', '{out}'], output: { format: 'pfm' } })).toBe(
      'matchers[1].program: command[1]: {param:k} names no declared parameter',
    );
    expect(msg({ id: 'x', mode: 'long-lived', command: ['p', '{left}'], output: { format: 'pfm' } })).toBe(
      'matchers[1].program: command[1]: {left} is per pair; a long-lived program gets it in each request',
    );
    expect(msg({ id: 'x', command: ['p', '{left}', '{right}', '{out}'], output: { format: 'pfm' }, timeout: 5 })).toMatch(/unknown key "timeout"/);
    expect(msg({ id: 'x', command: ['p', '{left}', '{right}', '{out}'], output: { format: 'pfm' }, params: [{ name: 'w', type: 'int', default: 2, odd: true }] })).toMatch(
      /default of w is invalid/,
    );
  });

  it('refuse a working folder that does not exist', () => {
    // Common practice: a setting error surfaces when the run is planned, naming the field.
    expect(() => programMatcher({ ...perPairDef(), cwd: 'no-such-folder' }, tmp)).toThrow(
      new UsageError('fake.cwd', `working folder ${join(tmp, 'no-such-folder')} does not exist`),
    );
  });

  it('hash the program file: the same script hashes the same, an edited one differently', () => {
    // Definition (README, "Result cache"): program file bytes plus the command line.
    const def = perPairDef();
    const h1 = programCodeHash(def, tmp);
    expect(h1).toBe(programCodeHash(def, tmp));
    writeFileSync(join(tmp, 'fake2.mjs'), `${PER_PAIR}\n// v2\n`);
    const def2 = { ...def, command: def.command.map((a) => (a === 'fake.mjs' ? 'fake2.mjs' : a)) };
    writeFileSync(join(tmp, 'fake3.mjs'), PER_PAIR);
    const def3 = { ...def, command: def.command.map((a) => (a === 'fake.mjs' ? 'fake3.mjs' : a)) };
    expect(programCodeHash(def2, tmp)).not.toBe(h1);
    // Same bytes under another name: the command line differs, so the hash does too.
    expect(programCodeHash(def3, tmp)).not.toBe(h1);
  });
});

describe('per-pair programs', () => {
  it('read the output file, then survive every failure mode and keep working', async () => {
    const p = programMatcher(perPairDef(), tmp, { killGraceMs: 300 });
    try {
      // Hand-worked: the fake writes d(x, y) = min + 0.5 y + 0.25 x with min = 2.
      const ok = await run(p, input('p1'), { mode: 'ok' });
      for (const [x, y] of [[0, 0], [19, 0], [0, 11], [7, 5]]) expect(ok.disparity[y * W + x]).toBe(2 + 0.5 * y + 0.25 * x);

      const e1 = await failure(run(p, input('p2'), { mode: 'exit1' }));
      expect(e1.message).toBe('fake: program exited with code 1; stderr: fake: pair p2 mode exit1 | loading weights | error: weights file missing');
      expect(e1.detail).toBe('fake: pair p2 mode exit1\nloading weights\nerror: weights file missing');

      const e2 = await failure(run(p, input('p3'), { mode: 'noout' }));
      expect(e2.message).toMatch(/^fake: the program wrote no output file/);

      const e3 = await failure(run(p, input('p4'), { mode: 'wrongsize' }));
      expect(e3.message).toBe('fake: output is 21x12, expected 20x12');

      const e4 = await failure(run(p, input('p5'), { mode: 'garbage' }));
      expect(e4.message).toMatch(/^fake: unreadable output: /);

      const e5 = await failure(run(p, input('p6'), { mode: 'selfkill' }));
      expect(e5.message).toBe('fake: program killed by SIGKILL; stderr: fake: pair p6 mode selfkill | about to die');

      const t0 = Date.now();
      const e6 = await failure(run(p, input('p7'), { mode: 'hang' }));
      expect(e6.message).toBe('fake: timed out after 1500 ms (process group killed); stderr: fake: pair p7 mode hang | hanging on purpose');
      expect(Date.now() - t0).toBeLessThan(1500 + 300 + 2500);
      // The program ignored SIGTERM, so only the group SIGKILL can have ended it and its child.
      const pids = readFileSync(join(tmp, 'pids.txt'), 'utf8').trim().split(/\s+/).map(Number);
      expect(pids.length).toBe(2);
      for (const pid of pids) expect(gone(pid), `pid ${pid}`).toBe(true);

      const again = await run(p, input('p8'), { mode: 'max' });
      expect(Array.from(new Set(again.disparity))).toEqual([9]);
    } finally {
      await p.dispose?.();
    }
  });

  it('pass the original files for input=color and write 8-bit gray PNGs for input=gray', async () => {
    // echo mode returns the left image's first channel (+1000 if the PNG had no opaque alpha).
    const color = programMatcher(perPairDef(), tmp);
    const grayP = programMatcher(perPairDef({ input: 'gray' }), tmp);
    try {
      const a = await run(color, input('c1'), { mode: 'echo' });
      const b = await run(grayP, input('g1', false), { mode: 'echo' });
      for (let i = 0; i < W * H; i++) {
        expect(a.disparity[i]).toBe(leftGray[i]);
        expect(b.disparity[i]).toBe(leftGray[i]);
      }
    } finally {
      await color.dispose?.();
      await grayP.dispose?.();
    }
  });

  it('apply pad (crop back), resize (divide by the factor), sign, scale and sentinel', async () => {
    // pad 16: 20x12 -> 32x16; the fake's d(x, y) = 2 + 0.5 y + 0.25 x cropped back is unchanged.
    const pad = programMatcher(perPairDef({ pad: 16 }), tmp);
    const pr = await run(pad, input('pad'), { mode: 'ok' });
    expect(pr.disparity.length).toBe(W * H);
    expect(pr.disparity[11 * W + 19]).toBe(2 + 0.5 * 11 + 0.25 * 19);
    // resize 0.5: range [2, 9] -> [floor(1), ceil(4.5)] = [1, 5]; the fake answers max = 5
    // at half resolution, i.e. 5 / 0.5 = 10 px at full resolution.
    const rs = programMatcher(perPairDef({ resize: 0.5 }), tmp);
    const rr = await run(rs, input('rs'), { mode: 'max' });
    expect(Array.from(new Set(rr.disparity))).toEqual([10]);
    // sign -1: the program gets [-9, -2] and answers max = -2, i.e. d = 2.
    const sg = programMatcher(perPairDef({ disparitySign: -1 }), tmp);
    expect(Array.from(new Set((await run(sg, input('sg'), { mode: 'max' })).disparity))).toEqual([2]);
    // scale 0.25: answer 9 -> 2.25 px.
    const sc = programMatcher(perPairDef({ disparityScale: 0.25 }), tmp);
    expect(Array.from(new Set((await run(sc, input('sc'), { mode: 'max' })).disparity))).toEqual([2.25]);
    // sentinel 9 in a PFM output: every value is the sentinel, so everything is NaN.
    const sn = programMatcher(perPairDef({ output: { format: 'pfm', invalid: 9 } }), tmp);
    expect((await run(sn, input('sn'), { mode: 'max' })).disparity.every((v) => Number.isNaN(v))).toBe(true);
    // npy output: d(x, y) = x.
    const np = programMatcher(perPairDef({ output: { format: 'npy' } }), tmp);
    const nr = await run(np, input('np'), { mode: 'npy' });
    expect(nr.disparity[3 * W + 17]).toBe(17);
    for (const p of [pad, rs, sg, sc, sn, np]) await p.dispose?.();
  });

  it('kill the process group on abort and throw AbortedError', async () => {
    const p = programMatcher(perPairDef(), tmp, { killGraceMs: 200 });
    writeFileSync(join(tmp, 'pids.txt'), '');
    const ac = new AbortController();
    const pending = run(p, input('ab'), { mode: 'hang' }, ac.signal);
    // Wait until the fake has written its pids, then abort.
    for (let i = 0; i < 100 && readFileSync(join(tmp, 'pids.txt'), 'utf8') === ''; i++) await new Promise((r) => setTimeout(r, 20));
    ac.abort();
    await expect(pending).rejects.toBeInstanceOf(AbortedError);
    const pids = readFileSync(join(tmp, 'pids.txt'), 'utf8').trim().split(/\s+/).map(Number);
    for (const pid of pids) expect(gone(pid), `pid ${pid}`).toBe(true);
    await p.dispose?.();
  });
});

describe('long-lived programs', () => {
  const serverDef = (extra: Record<string, unknown> = {}): ProgramMatcherDefInput => ({
    id: 'server',
    mode: 'long-lived',
    command: [process.execPath, 'server.mjs'],
    output: { format: 'pfm' },
    timeoutMs: 1000,
    env: { PIDS_FILE: join(tmp, 'server-pids.txt') },
    params: [{ name: 'level', type: 'int', default: 1, min: 0, max: 9, description: 'added to minDisparity' }],
    ...extra,
  }) as ProgramMatcherDefInput;
  const starts = () => readFileSync(join(tmp, 'server-pids.txt'), 'utf8').trim().split('\n').map(Number);

  it('answer requests, restart after a crash, a timeout or a protocol error, and stop on dispose', async () => {
    writeFileSync(join(tmp, 'server-pids.txt'), '');
    const p = programMatcher(serverDef(), tmp, { killGraceMs: 300 });
    try {
      // Reply time_ms 1.5 becomes selfTimeMs; value = minDisparity (2) + level (3).
      const a = await run(p, input('ok-1'), { level: 3 });
      expect(a.selfTimeMs).toBe(1.5);
      expect(Array.from(new Set(a.disparity))).toEqual([5]);
      const first = p.serverPid();
      expect(first).toBe(starts()[0]);

      const c = await failure(run(p, input('crash-2'), { level: 3 }));
      expect(c.message).toBe(
        'server: long-lived program exited with code 3; it restarts for the next pair; stderr: fatal: out of memory (simulated)',
      );
      const b = await run(p, input('ok-3'), {});
      expect(Array.from(new Set(b.disparity))).toEqual([3]);
      expect(starts().length).toBe(2);

      const h = await failure(run(p, input('hang-4'), {}));
      expect(h.message).toMatch(/^server: timed out after 1000 ms \(process group killed; restarts for the next pair\)/);
      const hungPid = starts()[1];
      expect(gone(hungPid)).toBe(true);
      await run(p, input('ok-5'), {});
      expect(starts().length).toBe(3);

      const bad = await failure(run(p, input('bad-6'), {}));
      expect(bad.message).toBe('server: program reported an error: cannot open left image');
      await run(p, input('ok-7'), {}); // same process: an error reply is not a crash
      expect(starts().length).toBe(3);

      const g = await failure(run(p, input('garbage-8'), {}));
      expect(g.message).toBe('server: protocol error: not a JSON reply: "hello from the program"');
      const w = await failure(run(p, input('wrongid-9'), {}));
      expect(w.message).toMatch(/^server: protocol error: reply for "someone-else" while waiting for "wrongid-9"/);
      await run(p, input('ok-10'), {});
      expect(starts().length).toBe(5);
    } finally {
      const last = p.serverPid();
      await p.dispose?.();
      expect(p.serverPid()).toBeUndefined();
      if (last !== undefined) expect(gone(last)).toBe(true);
    }
  });

  it('restart when a {param:NAME} in the command line changes, and pass params in requests', async () => {
    writeFileSync(join(tmp, 'server-pids.txt'), '');
    const p = programMatcher(serverDef({ command: [process.execPath, 'server.mjs', '--level={param:level}'] }), tmp);
    try {
      await run(p, input('ok-a'), { level: 1 });
      await run(p, input('ok-b'), { level: 1 });
      expect(starts().length).toBe(1);
      const r = await run(p, input('ok-c'), { level: 4 });
      expect(Array.from(new Set(r.disparity))).toEqual([6]);
      expect(starts().length).toBe(2);
    } finally {
      await p.dispose?.();
    }
  });

  it('report a program that cannot start', async () => {
    const p = programMatcher(serverDef({ command: [join(tmp, 'no-such-binary')] }), tmp);
    const e = await failure(run(p, input('ok-x'), {}));
    expect(e.message).toMatch(/^server: cannot start ".*no-such-binary": spawn .* ENOENT/);
    await p.dispose?.();
    expect(existsSync(join(tmp, 'no-such-binary'))).toBe(false);
  });
});
