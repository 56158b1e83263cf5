/** Every CLI command, in the order `--help` lists them. */
import type { Command } from 'commander';
import type { CliIo } from '../io';

export type RegisterCommand = (program: Command, io: CliIo) => void;

/**
 * A command's name and how to load the module that registers it. The modules are imported only
 * when their command runs (or all of them for the full help), so that starting one command loads
 * only the libraries it needs (loading all of them, mathjs, vega and zod among them, took 4.6 s
 * of CPU on every start; `npm run bench:startup` measures it).
 */
export interface CommandEntry { name: string; load: () => Promise<RegisterCommand> }

export const COMMANDS: CommandEntry[] = [
  { name: 'reduce', load: async () => (await import('./reduce')).registerReduce },
  { name: 'shells', load: async () => (await import('./shells')).registerShells },
  { name: 'paths', load: async () => (await import('./paths')).registerPaths },
  { name: 'simulate', load: async () => (await import('./simulate')).registerSimulate },
  { name: 'scatter', load: async () => (await import('./scatter')).registerScatter },
  { name: 'fit', load: async () => (await import('./fit')).registerFit },
  { name: 'run', load: async () => (await import('./run')).registerRun },
  { name: 'rank', load: async () => (await import('./rank')).registerRank },
  { name: 'screen', load: async () => (await import('./screen')).registerScreen },
  { name: 'merge', load: async () => (await import('./merge')).registerMerge },
  { name: 'report', load: async () => (await import('./report')).registerReport },
  { name: 'demo', load: async () => (await import('./demo')).registerDemo },
];
