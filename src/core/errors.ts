/**
 * Typed errors that users can cause. Each prints as one line (see cli/main.ts);
 * a stack trace is shown only under --debug.
 *
 * - InputError: a bad file or manifest (names the file).
 * - UsageError: a bad command-line option or experiment setting (names the option).
 * - MatcherFailure: a matcher crashed, timed out or returned garbage for one pair;
 *   the runner records it and goes on.
 */
export class ParallaxError extends Error {
  /** Process exit code when this error ends the program. */
  readonly exitCode: number = 2;
  constructor(message: string) {
    super(message);
    this.name = new.target.name;
  }
}

/** A file or manifest that cannot be used. `file` is named at the start of the message. */
export class InputError extends ParallaxError {
  readonly file: string | undefined;
  constructor(file: string | undefined, problem: string) {
    super(file ? `${file}: ${problem}` : problem);
    this.file = file;
  }
}

/** A bad command-line option or experiment setting. `option` is named at the start. */
export class UsageError extends ParallaxError {
  readonly option: string | undefined;
  constructor(option: string | undefined, problem: string) {
    super(option ? `${option}: ${problem}` : problem);
    this.option = option;
  }
}

/** One matcher failed on one pair. Recorded as status `failed`; the run goes on. */
export class MatcherFailure extends ParallaxError {
  readonly detail: string | undefined;
  constructor(message: string, detail?: string) {
    super(message);
    this.detail = detail;
  }
}

/**
 * Thrown when a job is aborted (Ctrl-C or a timeout). Exit code 130 (128 + SIGINT's 2)
 * by default; a run stopped by SIGTERM passes 143 (128 + 15).
 */
export class AbortedError extends ParallaxError {
  override readonly exitCode: number;
  constructor(message = 'aborted', exitCode = 130) {
    super(message);
    this.exitCode = exitCode;
  }
}

export function isParallaxError(e: unknown): e is ParallaxError {
  return e instanceof ParallaxError;
}
