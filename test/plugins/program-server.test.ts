/**
 * Outside-program matchers, long-lived mode: requests, restarts after a crash, a
 * timeout or a protocol error, and the end of the program with the run. The program is
 * a small Node script written by the test (program-fixture.ts).
 */
import { describe, expect, it } from 'vitest';
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { programMatcher, type ProgramMatcherDefInput } from '../../src/plugins/program/index.js';
import { failure, gone, input, run, tmp, useProgramFixture } from './program-fixture.js';

useProgramFixture();

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
      expect(a.confidence).toBeUndefined(); // no confidence file written: none reported
      // The request names a path for a confidence map (README, long-lived protocol); one written there comes back.
      const withConf = await run(p, input('conf-1'), { level: 3 });
      expect(Array.from(new Set(withConf.confidence!))).toEqual([0.75]);
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
