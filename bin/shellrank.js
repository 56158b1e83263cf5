#!/usr/bin/env node
// Entry point: load the TypeScript sources through tsx, then run the CLI.
import { register } from 'tsx/esm/api';

register();
const { runCli } = await import('../src/cli/main.ts');
const { processIo } = await import('../src/cli/io.ts');
const code = await runCli(process.argv.slice(2), processIo());
process.exitCode = code;
