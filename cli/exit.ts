/**
 * The one place where failures become exit codes: 0 ok, 1 run failed, 2 bad input (DESIGN §7).
 * Messages are one line on stderr, no stack trace (set FLEETWRIGHT_DEBUG=1 to see one).
 */
import { CommanderError } from 'commander';
import { InputError, RunError } from '../sim/errors.ts';

export const ExitCode = { Ok: 0, RunFailed: 1, BadInput: 2 } as const;

export function reportFailure(error: unknown): number {
  if (error instanceof CommanderError) {
    // commander already printed its message; help and version are not failures.
    if (error.code === 'commander.helpDisplayed' || error.code === 'commander.version' || error.code === 'commander.help') return ExitCode.Ok;
    return ExitCode.BadInput;
  }
  if (error instanceof InputError) {
    process.stderr.write(`fleetwright: error: ${error.message}\n`);
    return ExitCode.BadInput;
  }
  if (error instanceof RunError) {
    process.stderr.write(`fleetwright: run failed: ${error.message}\n`);
    return ExitCode.RunFailed;
  }
  const message = error instanceof Error ? error.message : String(error);
  process.stderr.write(`fleetwright: internal error: ${message.split('\n')[0]} (please report it; FLEETWRIGHT_DEBUG=1 shows the stack)\n`);
  if (process.env.FLEETWRIGHT_DEBUG && error instanceof Error) process.stderr.write(`${error.stack}\n`);
  return ExitCode.RunFailed;
}
