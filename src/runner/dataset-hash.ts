/**
 * The dataset hash recorded in run.json, for runs that go on past broken pairs.
 * dataset/hash.ts datasetHash reads every referenced file and fails on the first it
 * cannot read; a run must not end there (a missing file is a broken pair, recorded as
 * failed when the pair's turn comes). So when datasetHash fails, the hash is taken with
 * the same layout, and each unreadable file contributes "<unreadable CODE>" instead of
 * its bytes: the hash still changes when the file is fixed (and --resume refuses then).
 */
import { createHash } from 'node:crypto';
import { readFile } from 'node:fs/promises';
import { relative } from 'node:path';
import { datasetHash } from '../dataset/hash.js';
import { readManifestBytes, type Manifest } from '../dataset/manifest.js';
import { referencedFiles } from '../dataset/hash.js';

/** datasetHash, or the same layout with markers for unreadable files (see the file comment). */
export async function runDatasetHash(m: Manifest): Promise<string> {
  try {
    return await datasetHash(m);
  } catch {
    const hash = createHash('sha256');
    hash.update(readManifestBytes(m.file));
    for (const f of referencedFiles(m)) {
      hash.update(`\n${relative(m.dir, f).split('\\').join('/')}\n`);
      try {
        hash.update(await readFile(f));
      } catch (e) {
        hash.update(`<unreadable ${(e as NodeJS.ErrnoException).code ?? 'error'}>`);
      }
    }
    return hash.digest('hex');
  }
}
