/**
 * The command modules of the CLI, in `parallax --help` order. To add a command, put
 * a yargs command module (`{ command, describe, builder, handler }`, as the default
 * export or a named export) in its own file here and add ONE line below.
 * Handlers report their result through `process.exitCode` and throw ParallaxError
 * subclasses for user errors (see ../app.ts).
 */
export const COMMAND_MODULES: readonly (() => Promise<Record<string, unknown>>)[] = [
  () => import('./run.js'),
  () => import('./dataset.js'),
  () => import('./demo.js'),
  () => import('./matchers.js'),
  () => import('./compare.js'),
  () => import('./report.js'),
  () => import('./merge.js'),
  () => import('./cache.js'),
];
