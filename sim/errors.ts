/**
 * One error class per kind of failure, each with a fixed code; the CLI maps codes to exit
 * codes in one place (cli/exit.ts): bad input exits 2, a failed run exits 1.
 */

/** The user's input (scenario, option, trace, sweep file) is wrong. Message is one line naming the field, the bad value and what is expected. */
export class InputError extends Error {
  readonly code: string = 'BAD_INPUT';
  constructor(message: string) {
    super(message);
    this.name = 'InputError';
  }
}

/** A run broke an invariant the engine guarantees (conservation, illegal state); a defect, not bad input. */
export class RunError extends Error {
  readonly code: string = 'RUN_FAILED';
  constructor(message: string) {
    super(message);
    this.name = 'RunError';
  }
}
