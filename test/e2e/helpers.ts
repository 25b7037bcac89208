/** Spawning the built CLI (bin/parallax.js -> dist/) for end-to-end tests. */
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { REPO, type CliResult } from '../support/cli.js';

export { BIN, REPO, parallax, readCsv, splitCsvLine, type CliResult } from '../support/cli.js';

export function builtCliExists(): boolean {
  return existsSync(join(REPO, 'dist', 'src', 'cli', 'main.js'));
}

/** A user-facing error: exactly one line, no stack frames. */
export function expectOneLineError(r: CliResult): string {
  const lines = r.stderr.trimEnd().split('\n');
  if (lines.length !== 1) throw new Error(`expected one stderr line, got:\n${r.stderr}`);
  if (/^\s+at /m.test(r.stderr)) throw new Error(`stack frames in stderr:\n${r.stderr}`);
  return lines[0];
}
