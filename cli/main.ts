// Entry point of the `pleat` command: registers the commands, maps every failure to an exit
// code and a one-line message (never a stack trace).
import { Command, CommanderError } from 'commander';
import pkg from '../package.json';
import * as commands from './commands/index';
import { CliError, type CliContext } from './context';
import { escapeTerminal } from './format/escape';

function internalError(err: unknown): void {
  const message = err instanceof Error ? err.message : String(err);
  process.stderr.write(`pleat: internal error: ${escapeTerminal(message.split('\n')[0])}\n`);
  if (process.env.PLEAT_DEBUG && err instanceof Error && err.stack) process.stderr.write(`${err.stack}\n`);
  process.exitCode = 2;
}

process.on('uncaughtException', (err) => {
  internalError(err);
  process.exit(2);
});
process.on('unhandledRejection', (err) => {
  internalError(err);
  process.exit(2);
});
// A reader that goes away early (`pleat check | head`) is not an error of ours.
process.stdout.on('error', (err: NodeJS.ErrnoException) => {
  if (err.code === 'EPIPE') process.exit(process.exitCode ?? 0);
  internalError(err);
});

export async function main(argv: string[]): Promise<void> {
  const ctx: CliContext = {
    version: pkg.version,
    usageError: (message: string) => {
      throw new CliError(message, 2);
    },
  };
  const program = new Command('pleat');
  program
    .description('Checks folding plans of DSP data-flow graphs before they reach the hardware.')
    .version(pkg.version, '-V, --version', 'print the version of pleat')
    .helpOption('-h, --help', 'show help')
    .helpCommand('help [command]', 'show help for a command')
    .showSuggestionAfterError(true)
    .exitOverride()
    .configureOutput({
      // Commander prefixes its messages with "error: "; ours say which program speaks.
      outputError: (text, write) => write(`pleat: ${text.replace(/^error: /, '')}`),
    });
  for (const register of Object.values(commands)) register(program, ctx);
  program.addHelpText('after', '\nExit codes: 0 all designs pass, 1 a rule is broken, 2 invalid design, config or command line, 3 upload failed after retries.\nplan and sweep: 0 a plan was found, 1 no plan exists at this N and these units (or none in the time limit), 2 invalid input.\ncheck --baseline: 1 only for broken rules that are new or worse than the baseline. diff: 0 whatever moved, 2 invalid input.\nA pass is an engineering aid, not a sign-off of the hardware.\nDocumentation: docs/cli.md');

  try {
    await program.parseAsync(argv);
  } catch (err) {
    if (err instanceof CommanderError) {
      // Help and version end with code 0; every other command-line problem is exit 2.
      process.exitCode = err.exitCode === 0 ? 0 : 2;
      return;
    }
    if (err instanceof CliError) {
      process.stderr.write(`pleat: ${escapeTerminal(err.message)}\n`);
      process.exitCode = err.exitCode;
      return;
    }
    internalError(err);
  }
}

main(process.argv).catch(internalError);
