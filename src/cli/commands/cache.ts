/**
 * `parallax cache info` and `parallax cache prune [--max-mb N]`: the result cache of
 * matcher outputs (see runner/cache.ts). The folder is --cache-dir, else
 * $PARALLAX_CACHE, else .parallax-cache/ in the working folder.
 */
import { resolve } from 'node:path';
import type { Argv, CommandModule } from 'yargs';
import { UsageError } from '../../core/errors.js';
import { cacheSummary, defaultCacheDir, DEFAULT_CACHE_MAX_MB, pruneCache } from '../../runner/cache.js';

export interface CacheArgs {
  action: string;
  'cache-dir'?: string;
  'max-mb'?: number;
  json: boolean;
}

const mb = (bytes: number): string => (bytes / 2 ** 20).toFixed(1);

export const cacheCommand: CommandModule<object, CacheArgs> = {
  command: 'cache <action>',
  describe: 'Result cache: `info` (entries, size) or `prune` (remove least recently used entries down to --max-mb)',
  builder: (y) =>
    y
      .positional('action', { type: 'string', choices: ['info', 'prune'], describe: 'info | prune' })
      .option('cache-dir', { type: 'string', describe: 'Cache folder (default $PARALLAX_CACHE or .parallax-cache/)' })
      .option('max-mb', { type: 'number', describe: `prune: size to keep in MiB (default ${DEFAULT_CACHE_MAX_MB}; 0 empties the cache)` })
      .option('json', { type: 'boolean', default: false, describe: 'Print JSON' }) as unknown as Argv<CacheArgs>,
  handler: (a) => {
    const dir = a['cache-dir'] !== undefined ? resolve(a['cache-dir']) : defaultCacheDir();
    if (a.action === 'info') {
      if (a['max-mb'] !== undefined) throw new UsageError('--max-mb', 'applies to `cache prune` only');
      const s = cacheSummary(dir);
      if (a.json) process.stdout.write(JSON.stringify({ dir, ...s }) + '\n');
      else process.stdout.write(`${dir}: ${s.entries} entr${s.entries === 1 ? 'y' : 'ies'}, ${mb(s.bytes)} MiB${s.entries ? `, used ${s.oldest} .. ${s.newest}` : ''}\n`);
      return;
    }
    const maxMb = a['max-mb'] ?? DEFAULT_CACHE_MAX_MB;
    if (!Number.isFinite(maxMb) || maxMb < 0) throw new UsageError('--max-mb', `must be a number >= 0, got ${String(maxMb)}`);
    const r = pruneCache(dir, maxMb * 2 ** 20);
    if (a.json) process.stdout.write(JSON.stringify({ dir, ...r }) + '\n');
    else process.stdout.write(`${dir}: removed ${r.removed} entr${r.removed === 1 ? 'y' : 'ies'} (${mb(r.freedBytes)} MiB); ${r.entries} left (${mb(r.bytes)} MiB)\n`);
  },
};
