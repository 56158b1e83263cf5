/**
 * Quoting command-line arguments for a POSIX shell, so that printed commands can be pasted back:
 * an argument made only of characters no shell treats specially is left as it is, anything else is
 * put in single quotes (inside which every character is literal), a single quote itself written as
 * '\'' (POSIX.1-2017, Shell Command Language, 2.2.3 Single-Quotes).
 */

/** Characters that are never special to a POSIX shell, wherever they stand in a word. */
const PLAIN = /^[A-Za-z0-9_@%+=:,./-]+$/;

/** One argument, quoted when it needs it ('' for the empty string). */
export function shellQuote(argument: string): string {
  if (PLAIN.test(argument)) return argument;
  return `'${argument.replace(/'/g, `'\\''`)}'`;
}

/** A command line from its arguments, each quoted when it needs it. */
export function shellCommand(args: readonly string[]): string {
  return args.map(shellQuote).join(' ');
}
