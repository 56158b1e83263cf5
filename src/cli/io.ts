/** The CLI's connection to the outside world, injectable for tests. */
export interface CliIo {
  stdout(text: string): void;
  stderr(text: string): void;
  /** True when stdout is an interactive terminal (progress bars, colours). */
  isTty: boolean;
  /** Working directory against which relative paths are resolved. */
  cwd: string;
}

export function processIo(): CliIo {
  // A closed pipe (`shellrank rank ... | head`) is the reader's choice, not an error: stop quietly.
  process.stdout.on('error', (e: NodeJS.ErrnoException) => {
    if (e.code === 'EPIPE') process.exit(0);
    throw e;
  });
  return {
    stdout: (t) => void process.stdout.write(t),
    stderr: (t) => void process.stderr.write(t),
    isTty: Boolean(process.stdout.isTTY),
    cwd: process.cwd(),
  };
}
