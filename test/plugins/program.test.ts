/**
 * Outside-program matchers, per-pair mode: definitions, failure modes, and the geometry
 * options (pad, resize, sign, scale). The programs are small Node scripts written by the
 * test (program-fixture.ts); every expected value is worked out by hand.
 */
import { describe, expect, it } from 'vitest';
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { AbortedError, UsageError } from '../../src/core/errors.js';
import { parseProgramMatcherDef, programCodeHash, programMatcher } from '../../src/plugins/program/index.js';
import { H, PER_PAIR, W, failure, gone, input, leftGray, perPairDef, run, tmp, useProgramFixture } from './program-fixture.js';

useProgramFixture();

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
