#!/usr/bin/env node
// Entry point: load the TypeScript sources through tsx, then run the CLI.
// A bare `--version` needs none of the sources, so it is answered before the TypeScript loader
// starts (registering tsx alone costs about five times a bare Node start).
const argv = process.argv.slice(2);
if (argv.length === 1 && (argv[0] === '--version' || argv[0] === '-V')) {
  const { readFileSync } = await import('node:fs');
  const pkg = JSON.parse(readFileSync(new URL('../package.json', import.meta.url), 'utf8'));
  process.stdout.write(`${pkg.version}\n`);
} else {
  const { register } = await import('tsx/esm/api');
  register();
  const { runCli } = await import('../src/cli/main.ts');
  const { processIo } = await import('../src/cli/io.ts');
  process.exitCode = await runCli(argv, processIo());
}
