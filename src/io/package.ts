/**
 * The tool's own package: its root folder (where parallax's package.json is), found
 * upward from this file, so it works from the sources (vitest) and from dist/; and its
 * version.
 */
import { existsSync, readFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

/** The package root (folder of parallax's package.json), found upward from this file. */
export function toolRoot(): string | undefined {
  let dir = dirname(fileURLToPath(import.meta.url));
  for (let i = 0; i < 6; i++) {
    const pj = join(dir, 'package.json');
    if (existsSync(pj)) {
      try {
        if ((JSON.parse(readFileSync(pj, 'utf8')) as { name?: string }).name === 'parallax') return dir;
      } catch {
        /* keep looking */
      }
    }
    dir = dirname(dir);
  }
  return undefined;
}

export function toolVersion(): string {
  const root = toolRoot();
  if (!root) return 'unknown';
  try {
    return (JSON.parse(readFileSync(join(root, 'package.json'), 'utf8')) as { version?: string }).version ?? 'unknown';
  } catch {
    return 'unknown';
  }
}
