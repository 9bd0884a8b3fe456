// What every command gets from the entry point.
import type { Command } from 'commander';

export interface CliContext {
  version: string;
  /** Thrown by a command for a usage problem it finds itself (exit 2, one line, no stack). */
  usageError: (message: string) => never;
}

/** Each file in cli/commands/ exports one of these. */
export type RegisterCommand = (program: Command, ctx: CliContext) => void;

/** An error whose message is for the user as is: printed as `pleat: message`, exit code given. */
export class CliError extends Error {
  constructor(
    message: string,
    readonly exitCode: number = 2,
  ) {
    super(message);
  }
}
