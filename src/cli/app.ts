/**
 * The CLI application: yargs with the command modules of commands/index.ts, and the
 * one place where errors become messages and exit codes:
 *   ParallaxError   -> `parallax: <message>` on stderr, its exit code (2 input/usage, 130 aborted)
 *   yargs usage     -> one line, exit 2
 *   anything else   -> one line, exit 1; the stack trace only under --debug
 */
import yargs, { type Argv, type CommandModule } from 'yargs';
import { isParallaxError } from '../core/errors.js';
import { toolVersion } from '../io/package.js';
import { COMMAND_MODULES } from './commands/index.js';

/** Marks a usage error raised by yargs itself (unknown option, missing command...). */
class YargsUsage extends Error {}

function isCommandModule(v: unknown): v is CommandModule {
  return typeof v === 'object' && v !== null && 'command' in v && 'handler' in v && typeof (v as { handler: unknown }).handler === 'function';
}

/** Every command module listed in commands/index.ts. */
export async function loadCommands(): Promise<CommandModule[]> {
  const out: CommandModule[] = [];
  for (const load of COMMAND_MODULES) {
    const m = await load();
    const found = isCommandModule(m.default) ? [m.default] : Object.values(m).filter(isCommandModule);
    out.push(...found);
  }
  return out;
}

/** First line of an error's message, whitespace folded. */
export function oneLine(text: string): string {
  return text.split('\n').map((s) => s.trim()).filter(Boolean).join(' | ') || 'unknown error';
}

export interface CliIo {
  stderr(text: string): void;
}

const defaultIo: CliIo = { stderr: (t) => void process.stderr.write(t) };

export async function buildParser(argv: string[]): Promise<Argv> {
  const commands = await loadCommands();
  let y = yargs(argv)
    .scriptName('parallax')
    .usage('parallax <command> [options]\n\nMeasure how accurate stereo matchers are against ground-truth disparity.')
    .option('debug', { type: 'boolean', default: false, describe: 'Print stack traces of unexpected errors', global: true })
    .version(toolVersion())
    .help()
    .alias('h', 'help')
    .strict()
    .exitProcess(false) // main.ts exits once stdout is flushed
    .demandCommand(1, 'give a command')
    .wrap(Math.min(110, process.stdout.columns || 100))
    .fail((msg, err) => {
      if (err) throw err;
      throw new YargsUsage(msg ?? 'bad command line');
    });
  for (const c of commands) y = y.command(c);
  return y;
}

/** Run the CLI; resolves to the exit code. Never throws. */
export async function runCli(argv: string[], io: CliIo = defaultIo): Promise<number> {
  const debug = argv.includes('--debug');
  // Handlers report through process.exitCode; keep the caller's value (in-process tests).
  const callerExitCode = process.exitCode;
  try {
    process.exitCode = undefined;
    const parser = await buildParser(argv);
    await parser.parseAsync();
    const code = process.exitCode;
    return typeof code === 'number' ? code : code === undefined || code === null ? 0 : Number(code) || 1;
  } catch (e) {
    if (e instanceof YargsUsage) {
      io.stderr(`parallax: ${oneLine(e.message)} (see parallax --help)\n`);
      return 2;
    }
    if (isParallaxError(e)) {
      io.stderr(`parallax: ${oneLine(e.message)}\n`);
      if (debug && e.stack) io.stderr(e.stack + '\n');
      return e.exitCode;
    }
    const err = e as Error;
    io.stderr(`parallax: unexpected error: ${oneLine(err?.message ?? String(e))}${debug ? '' : ' (run with --debug for details)'}\n`);
    if (debug && err?.stack) io.stderr(err.stack + '\n');
    return 1;
  } finally {
    process.exitCode = callerExitCode;
  }
}
