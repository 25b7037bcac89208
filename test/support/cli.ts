/** The built CLI and our own CSV files, for the end-to-end and scale tests. */
import { spawnSync } from 'node:child_process';
import { join, resolve } from 'node:path';

export const REPO = resolve(import.meta.dirname, '..', '..');
export const BIN = join(REPO, 'bin', 'parallax.js');

export interface CliResult {
  code: number | null;
  stdout: string;
  stderr: string;
}

/** Run the built CLI (node bin/parallax.js) to completion; `env` is added to this process's environment. */
export function parallax(args: string[], cwd: string, opts: { env?: NodeJS.ProcessEnv; timeoutMs?: number } = {}): CliResult {
  const r = spawnSync(process.execPath, [BIN, ...args], { cwd, encoding: 'utf8', timeout: opts.timeoutMs ?? 120_000, env: { ...process.env, FORCE_COLOR: '0', ...opts.env } });
  return { code: r.status, stdout: r.stdout, stderr: r.stderr };
}

/** Rows of a CSV text with RFC 4180 quoting (quoted commas, quotes and newlines; common practice). */
export function parseCsv(text: string): string[][] {
  const rows: string[][] = [];
  let row: string[] = [];
  let cell = '';
  let q = false;
  for (let i = 0; i < text.length; i++) {
    const c = text[i]!;
    if (q) {
      if (c === '"' && text[i + 1] === '"') {
        cell += '"';
        i++;
      } else if (c === '"') q = false;
      else cell += c;
    } else if (c === '"') q = true;
    else if (c === ',') {
      row.push(cell);
      cell = '';
    } else if (c === '\n') {
      row.push(cell);
      rows.push(row);
      row = [];
      cell = '';
    } else cell += c;
  }
  if (cell !== '' || row.length) {
    row.push(cell);
    rows.push(row);
  }
  return rows;
}

/** One line of CSV: its cells. */
export function splitCsvLine(line: string): string[] {
  return parseCsv(line)[0] ?? [''];
}

/** A CSV text as a header and rows keyed by it. */
export function readCsv(text: string): { header: string[]; rows: Record<string, string>[] } {
  const [header = [], ...body] = parseCsv(text.trimEnd() + '\n');
  return { header, rows: body.map((cells) => Object.fromEntries(header.map((h, i) => [h, cells[i] ?? '']))) };
}
