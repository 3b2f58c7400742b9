/**
 * Error kinds that map to the exit codes of the outside contract:
 * UsageError -> exit 2 (bad usage or bad input), RuntimeFailure -> exit 1.
 * The message is shown to the user as one line; it says what is wrong and what to do.
 */
export class UsageError extends Error {
  readonly exitCode = 2;
  constructor(message: string) {
    super(message);
    this.name = 'UsageError';
  }
}

export class RuntimeFailure extends Error {
  readonly exitCode = 1;
  constructor(message: string) {
    super(message);
    this.name = 'RuntimeFailure';
  }
}
