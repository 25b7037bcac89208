// The project's lint rules (ESLint flat config, typescript-eslint without type
// information, so it stays fast). `npm test` runs it; the tree is kept clean.
import js from '@eslint/js';
import tseslint from 'typescript-eslint';

export default tseslint.config(
  { ignores: ['dist/**', 'build/**', 'node_modules/**', 'matchers/**/assembly/**', 'test-artifacts/**', 'reports/**', 'datasets/**'] },
  {
    files: ['**/*.ts', '**/*.mjs', '**/*.js'],
    extends: [js.configs.recommended, ...tseslint.configs.recommended],
    languageOptions: { ecmaVersion: 2022, sourceType: 'module', globals: { process: 'readonly', console: 'readonly', Buffer: 'readonly', URL: 'readonly', setTimeout: 'readonly', clearTimeout: 'readonly', setInterval: 'readonly', clearInterval: 'readonly', performance: 'readonly', structuredClone: 'readonly', AbortController: 'readonly', AbortSignal: 'readonly', TextDecoder: 'readonly', TextEncoder: 'readonly', WebAssembly: 'readonly', queueMicrotask: 'readonly', setImmediate: 'readonly', SharedArrayBuffer: 'readonly', Atomics: 'readonly' } },
    rules: {
      '@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_', caughtErrors: 'none' }],
      '@typescript-eslint/consistent-type-imports': ['error', { fixStyle: 'inline-type-imports' }],
      'max-lines-per-function': ['warn', { max: 80, skipBlankLines: true, skipComments: true }],
      'max-params': ['warn', 6],
    },
  },
  {
    // Hot pixel kernels keep long loops and positional arguments where a benchmark says so.
    files: ['matchers/kernels/**', 'matchers/*/aggregate.ts', 'matchers/*/cost.ts', 'matchers/*/fast.ts', 'matchers/global/bp.ts', 'src/metrics/segment-stats.ts', 'src/synth/intersect.ts', 'src/synth/render.ts', 'src/synth/texture.ts', 'src/io/png/filters.ts'],
    rules: { 'max-lines-per-function': 'off', 'max-params': 'off' },
  },
  {
    // The client's helpers are globals of one compiled script: report.ts, compiled into
    // the same file, uses them, which a per-file lint cannot see.
    files: ['src/report/client/dom.ts', 'src/report/client/charts.ts', 'src/report/client/pair-views.ts'],
    rules: { '@typescript-eslint/no-unused-vars': 'off' },
  },
  {
    // Tests and benches: one `it` may hold a long worked example; references mirror a
    // kernel's positional arguments and property callbacks take one argument per
    // generator; results of outside reference scripts (numpy, OpenCV) are untyped JSON.
    files: ['test/**', 'bench/**'],
    rules: { 'max-lines-per-function': 'off', 'max-params': 'off', '@typescript-eslint/no-explicit-any': 'off' },
  },
);
