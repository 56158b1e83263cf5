/**
 * The error taxonomy of shellrank.
 *
 * - {@link InputError}: something the user gave is wrong (a file, a line, an option, a key);
 *   raised before any computation starts. Its message already names the place.
 * - {@link ComputationError}: a computation could not be completed with valid input
 *   (e.g. an SCF cycle that does not converge).
 *
 * The library never prints; the CLI maps these to one-line messages and exit codes.
 */

/** Where in the user's input a problem sits. All fields optional. */
export interface InputLocation {
  /** Path of the file as the user gave it. */
  file?: string;
  /** 1-based line number in that file. */
  line?: number;
  /** Option name or key in a study file (e.g. `--radius` or `fit.kRange`). */
  key?: string;
}

function formatLocation(where: InputLocation): string {
  const parts: string[] = [];
  if (where.file !== undefined) parts.push(where.line !== undefined ? `${where.file}:${where.line}` : where.file);
  else if (where.line !== undefined) parts.push(`line ${where.line}`);
  if (where.key !== undefined) parts.push(where.key);
  return parts.join(': ');
}

/** Bad input: the message names the file, line or key and what is wrong. */
export class InputError extends Error {
  readonly file?: string;
  readonly line?: number;
  readonly key?: string;
  /** The message without the location prefix. */
  readonly reason: string;
  constructor(reason: string, where: InputLocation = {}) {
    const prefix = formatLocation(where);
    super(prefix ? `${prefix}: ${reason}` : reason);
    this.name = 'InputError';
    this.reason = reason;
    this.file = where.file;
    this.line = where.line;
    this.key = where.key;
  }
  /** The same error with the file (and optionally line) filled in when they were unknown. */
  withLocation(where: InputLocation): InputError {
    return new InputError(this.reason, {
      file: this.file ?? where.file,
      line: this.line ?? where.line,
      key: this.key ?? where.key,
    });
  }
}

/** A computation failed on valid input. */
export class ComputationError extends Error {
  constructor(message: string) {
    super(message);
    this.name = 'ComputationError';
  }
}

/** Exit codes used by the CLI. */
export const EXIT_CODES = { ok: 0, input: 2, computation: 3, internal: 70 } as const;
