/** Errors that map to docs/commands.md's exit statuses. */

/** Bad usage, bad station file or bad input file: exit 2 with one line naming the culprit. */
export class UsageError extends Error {
  readonly exitCode = 2;
  constructor(message: string) {
    super(message);
    this.name = 'UsageError';
  }
}

/** A runtime failure (device missing, store unwritable …): exit 1. */
export class RuntimeError extends Error {
  readonly exitCode = 1;
  constructor(message: string) {
    super(message);
    this.name = 'RuntimeError';
  }
}
