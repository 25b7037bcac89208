/**
 * The built-in matchers. Add one line per matcher folder; the registry
 * (src/plugins/registry.ts) reads this list.
 */
import type { MatcherPlugin } from '../src/core/matcher.js';
import { blockMatcher } from './block/index.js';
import { censusMatcher } from './census/index.js';
import { sgmMatcher } from './sgm/index.js';
import { bpMatcher } from './global/index.js';

export const BUILTIN_MATCHERS: readonly MatcherPlugin[] = [
  // one entry per matcher folder, e.g. blockMatcher from './block/index.js'
  blockMatcher,
  censusMatcher,
  sgmMatcher,
  bpMatcher,
];
