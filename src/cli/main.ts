/**
 * The shellrank command line: parses arguments, calls the library, prints.
 * Every command lives in src/cli/commands/<verb>.ts and exports `register(program, io)`.
 * Errors: InputError -> one line on stderr, exit 2; ComputationError -> one line, exit 3;
 * anything else -> one line naming it an internal error, exit 70. `--debug` adds the stack.
 */
import { Command, CommanderError } from 'commander';
import { ComputationError, EXIT_CODES, InputError } from '../core/errors';
import { SHELLRANK_VERSION } from '../core/provenance';
import { COMMANDS } from './commands/index';
import type { CliIo } from './io';
import { escapeForTerminal } from './terminal-text';

export function buildProgram(io: CliIo): Command {
  const program = new Command();
  program
    .name('shellrank')
    .description('Rank candidate atomic structures against one measured EXAFS spectrum')
    .version(SHELLRANK_VERSION)
    .option('--debug', 'show stack traces on errors')
    .showHelpAfterError('(run with --help for usage)')
    .configureOutput({
      writeOut: (s) => io.stdout(s),
      writeErr: (s) => io.stderr(s),
    })
    .exitOverride();
  for (const register of COMMANDS) register(program, io);
  return program;
}

/** Run the CLI with argv (without node and script); resolves to the exit code. */
export async function runCli(argv: readonly string[], io: CliIo): Promise<number> {
  const program = buildProgram(io);
  const debug = argv.includes('--debug');
  try {
    await program.parseAsync([...argv], { from: 'user' });
    return EXIT_CODES.ok;
  } catch (error) {
    if (error instanceof CommanderError) {
      // commander already printed its message (help, version or a usage error)
      return error.exitCode === 0 ? EXIT_CODES.ok : EXIT_CODES.input;
    }
    if (error instanceof InputError) {
      io.stderr(`shellrank: error: ${escapeForTerminal(error.message)}\n`);
      if (debug) io.stderr(`${error.stack}\n`);
      return EXIT_CODES.input;
    }
    if (error instanceof ComputationError) {
      io.stderr(`shellrank: computation failed: ${escapeForTerminal(error.message)}\n`);
      if (debug) io.stderr(`${error.stack}\n`);
      return EXIT_CODES.computation;
    }
    const message = error instanceof Error ? error.message : String(error);
    io.stderr(`shellrank: internal error: ${escapeForTerminal(message.split('\n')[0])} (run with --debug for details)\n`);
    if (debug && error instanceof Error) io.stderr(`${error.stack}\n`);
    return EXIT_CODES.internal;
  }
}
