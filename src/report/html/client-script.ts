/**
 * The report's client script as the page embeds it: src/report/client/*.ts (report.ts and its helpers),
 * type-checked and compiled by the build (`npm run build`) into build/report-client.js
 * under the package root. Read once per process; its hash goes into the page's
 * Content-Security-Policy.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { toolRoot } from '../../io/package.js';

let script: string | undefined;

export const CLIENT_SCRIPT_FILE = join('build', 'report-client.js');

export function reportScript(): string {
  if (script === undefined) {
    const root = toolRoot();
    const file = root ? join(root, CLIENT_SCRIPT_FILE) : CLIENT_SCRIPT_FILE;
    try {
      script = readFileSync(file, 'utf8');
    } catch {
      throw new Error(`the report's client script ${file} is missing: run \`npm run build\``);
    }
  }
  return script;
}
