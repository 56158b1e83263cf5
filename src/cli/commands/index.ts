/** Every CLI command, in the order `--help` lists them. */
import type { Command } from 'commander';
import type { CliIo } from '../io';
import { registerShells } from './shells';
import { registerPaths } from './paths';
import { registerSimulate } from './simulate';
import { registerDemo } from './demo';
import { registerReduce } from './reduce';
import { registerScatter } from './scatter';
import { registerReport } from './report';
import { registerFit } from './fit';
import { registerRun } from './run';
import { registerRank } from './rank';
import { registerScreen } from './screen';
import { registerMerge } from './merge';

export type RegisterCommand = (program: Command, io: CliIo) => void;

export const COMMANDS: RegisterCommand[] = [registerReduce, registerShells, registerPaths, registerSimulate, registerScatter, registerFit, registerRun, registerRank, registerScreen, registerMerge, registerReport, registerDemo];
