/**
 * Dataset hash for provenance: sha256 over the manifest bytes and every file the
 * manifest references, streamed (files are never held whole in memory).
 * Layout of the hashed stream: manifest bytes, then for each distinct referenced
 * file in sorted relative-path order: "\n<relative path>\n" followed by its bytes.
 * With `markUnreadable` (runs, which go on past broken pairs), a file that cannot be read
 * contributes "<unreadable CODE>" in place of its bytes instead of failing, so the hash
 * still changes once the file is fixed (and --resume then refuses the old run).
 */
import { createHash } from 'node:crypto';
import { createReadStream } from 'node:fs';
import { relative } from 'node:path';
import { InputError } from '../core/errors.js';
import type { Manifest } from './manifest.js';
import { readManifestBytes } from './manifest.js';

/** Every file the manifest references, absolute, distinct, sorted by relative path. */
export function referencedFiles(m: Manifest): string[] {
  const set = new Set<string>();
  for (const p of m.pairs) {
    set.add(p.left);
    set.add(p.right);
    set.add(p.truth);
    if (p.occlusion) set.add(p.occlusion);
    if (p.ignore) set.add(p.ignore);
    for (const f of Object.values(p.masks ?? {})) set.add(f);
  }
  return [...set].sort((a, b) => {
    const ra = relative(m.dir, a);
    const rb = relative(m.dir, b);
    return ra < rb ? -1 : ra > rb ? 1 : 0;
  });
}

function streamInto(hash: ReturnType<typeof createHash>, file: string, markUnreadable: boolean): Promise<void> {
  return new Promise((resolveP, reject) => {
    const s = createReadStream(file);
    s.on('data', (chunk) => hash.update(chunk));
    s.on('error', (e: NodeJS.ErrnoException) => {
      if (!markUnreadable) return reject(new InputError(file, `cannot read (${e.code ?? e.message})`));
      hash.update(`<unreadable ${e.code ?? 'error'}>`);
      resolveP();
    });
    s.on('end', () => resolveP());
  });
}

/** sha256 hex of the dataset (see module comment). */
export async function datasetHash(m: Manifest, opts: { markUnreadable?: boolean } = {}): Promise<string> {
  const hash = createHash('sha256');
  hash.update(readManifestBytes(m.file));
  for (const f of referencedFiles(m)) {
    hash.update(`\n${relative(m.dir, f).split('\\').join('/')}\n`);
    await streamInto(hash, f, opts.markUnreadable === true);
  }
  return hash.digest('hex');
}
