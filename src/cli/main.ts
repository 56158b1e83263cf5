/**
 * The shellrank command line: parses arguments, calls the library, prints.
 * Every command lives in src/cli/commands/<verb>.ts and exports `register(program, io)`.
 * Errors: InputError -> one line on stderr, exit 2; ComputationError -> one line, exit 3;
 * anything else -> one line naming it an internal error, exit 70. `--debug` adds the stack.
 */
import { Command, CommanderError } from 'commander';
import { ComputationError, EXIT_CODES, InputError } from '../core/errors';
import { SHELLRANK_VERSION } from '../core/provenance';
import { COMMANDS, type CommandEntry } from './commands/index';
import type { CliIo } from './io';
import { escapeForTerminal } from './terminal-text';

/**
 * The program with the commands that `argv` needs: only the named command when there is one
 * (its module and libraries are all that load), none for a bare `--version`, every command for the
 * full help, no arguments or an unknown command (commander then lists or suggests them).
 */
export async function buildProgram(io: CliIo, argv: readonly string[] = []): Promise<Command> {
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
  for (const entry of commandsFor(argv)) (await entry.load())(program, io);
  return program;
}

function commandsFor(argv: readonly string[]): readonly CommandEntry[] {
  // the program's own options (--debug, --version, --help) take no value, so the first word that
  // is not an option is the command
  const verb = argv.find((a) => !a.startsWith('-'));
  const named = COMMANDS.find((c) => c.name === verb);
  if (named) return [named];
  const versionOnly = verb === undefined && argv.some((a) => a === '--version' || a === '-V') && !argv.some((a) => a === '--help' || a === '-h');
  return versionOnly ? [] : COMMANDS;
}

/** Run the CLI with argv (without node and script); resolves to the exit code. */
export async function runCli(argv: readonly string[], io: CliIo): Promise<number> {
  const debug = argv.includes('--debug');
  try {
    const program = await buildProgram(io, argv);
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
