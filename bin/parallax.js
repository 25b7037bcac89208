#!/usr/bin/env node
// Launcher: runs the compiled CLI (built by `npm ci` through the `prepare` script).
import { existsSync } from 'node:fs';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { dirname, join } from 'node:path';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');
const entry = join(root, 'dist', 'src', 'cli', 'main.js');
if (!existsSync(entry)) {
  process.stderr.write('parallax: the compiled CLI is missing (dist/); run `npm ci` or `npm run build` first\n');
  process.exit(2);
}
await import(pathToFileURL(entry).href);
