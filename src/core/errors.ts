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

/** Thrown when a job is aborted (Ctrl-C or a timeout). */
export class AbortedError extends ParallaxError {
  override readonly exitCode = 130;
  constructor(message = 'aborted') {
    super(message);
  }
}

export function isParallaxError(e: unknown): e is ParallaxError {
  return e instanceof ParallaxError;
}
