/** Every CLI command, in the order `--help` lists them. */
import type { Command } from 'commander';
import type { CliIo } from '../io';

export type RegisterCommand = (program: Command, io: CliIo) => void;

export const COMMANDS: RegisterCommand[] = [];
