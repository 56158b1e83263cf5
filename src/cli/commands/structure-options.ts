/** Options shared by every command that reads a structure and builds shells. */
import type { Command } from 'commander';
import { parseEdge, type EdgeName } from '../../elements/index';
import { parseAbsorberSelector, type AbsorberSelector } from '../../structure/cluster';
import { parseInteger, parseNumber } from '../options';

export interface StructureCliOptions {
  absorber: string;
  edge: string;
  radius: string;
  tolerance: string;
  format?: string;
  frame: string;
}

export function addStructureOptions(command: Command): Command {
  return command
    .requiredOption('--absorber <which>', 'absorbing atom: an element (Cu), a 0-based index (#12), or a site label (label:Cu1)')
    .option('--edge <edge>', 'absorption edge: K, L1, L2 or L3', 'K')
    .option('--radius <angstrom>', 'cluster radius in Å', '6')
    .option('--tolerance <angstrom>', 'maximum width of one shell in Å', '0.01')
    .option('--format <name>', 'structure format (xyz, extxyz, cif, pdb); detected when omitted')
    .option('--frame <n>', '0-based frame of a multi-frame file', '0');
}

export interface ParsedStructureOptions {
  absorber: AbsorberSelector;
  edge: EdgeName;
  radius: number;
  tolerance: number;
  format?: string;
  frame: number;
}

export function parseStructureOptions(o: StructureCliOptions): ParsedStructureOptions {
  return {
    absorber: parseAbsorberSelector(o.absorber),
    edge: parseEdge(o.edge),
    radius: parseNumber('--radius', o.radius, { min: 0, exclusiveMin: true }),
    tolerance: parseNumber('--tolerance', o.tolerance, { min: 0 }),
    format: o.format,
    frame: parseInteger('--frame', o.frame, 0),
  };
}
