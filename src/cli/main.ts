/**
 * Entry point (bin/parallax.js imports the compiled file). Runs the CLI and exits
 * with its code once stdout has been flushed.
 */
import { runCli } from './app.js';

const code = await runCli(process.argv.slice(2));
process.stdout.write('', () => process.exit(code));
