/**
 * The seeded generator tests use for reproducible data: mulberry32 (public-domain
 * 32-bit generator, common practice for test data), from the project's one PRNG home.
 */
export { mulberry32 } from '../../src/core/prng.js';
