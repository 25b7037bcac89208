/** Spawning the built CLI (bin/parallax.js -> dist/) for end-to-end tests. */
import { spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { join, resolve } from 'node:path';

export const REPO = resolve(import.meta.dirname, '..', '..');
export const BIN = join(REPO, 'bin', 'parallax.js');

export interface CliResult {
  code: number | null;
  stdout: string;
  stderr: string;
}

export function builtCliExists(): boolean {
  return existsSync(join(REPO, 'dist', 'src', 'cli', 'main.js'));
}

export function parallax(args: string[], cwd: string, timeoutMs = 90_000): CliResult {
  const r = spawnSync(process.execPath, [BIN, ...args], { cwd, encoding: 'utf8', timeout: timeoutMs, env: { ...process.env, FORCE_COLOR: '0' } });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

/** One line of our own CSV files (no embedded newlines): cells with RFC 4180 quoting. */
export function splitCsvLine(line: string): string[] {
  const out: string[] = [];
  let cur = '';
  let q = false;
  for (let i = 0; i < line.length; i++) {
    const c = line[i];
    if (q) {
      if (c === '"' && line[i + 1] === '"') {
        cur += '"';
        i++;
      } else if (c === '"') q = false;
      else cur += c;
    } else if (c === '"') q = true;
    else if (c === ',') {
      out.push(cur);
      cur = '';
    } else cur += c;
  }
  out.push(cur);
  return out;
}

/** Minimal RFC 4180 reader for our own CSV files (no embedded newlines in our data). */
export function readCsv(text: string): { header: string[]; rows: Record<string, string>[] } {
  const lines = text.trimEnd().split('\n');
  const header = splitCsvLine(lines[0]);
  const rows = lines.slice(1).map((l) => {
    const cells = splitCsvLine(l);
    return Object.fromEntries(header.map((h, i) => [h, cells[i] ?? '']));
  });
  return { header, rows };
}

/** A user-facing error: exactly one line, no stack frames. */
export function expectOneLineError(r: CliResult): string {
  const lines = r.stderr.trimEnd().split('\n');
  if (lines.length !== 1) throw new Error(`expected one stderr line, got:\n${r.stderr}`);
  if (/^\s+at /m.test(r.stderr)) throw new Error(`stack frames in stderr:\n${r.stderr}`);
  return lines[0];
}
