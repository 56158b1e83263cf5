/** Options shared by every command that reads a structure and builds shells. */
import type { Command } from 'commander';
import { InputError } from '../../core/errors';
import { parseEdge, type EdgeName } from '../../elements/index';
import { parseAbsorberSelector, type AbsorberSelector } from '../../structure/cluster';
import { parseInteger, parseNumber } from '../options';

export interface StructureCliOptions {
  /** Optional only for commands that read measured data (the data name the absorber). */
  absorber?: string;
  edge?: string;
  radius: string;
  tolerance: string;
  format?: string;
  frame: string;
}

/**
 * `fromData`: the command reads a measured spectrum, so --absorber and --edge default to the
 * element and edge that the data file names (see src/fit/exafs/absorber-from-data.ts).
 */
export function addStructureOptions(command: Command, { fromData = false }: { fromData?: boolean } = {}): Command {
  const absorberHelp = 'absorbing atom: an element (Cu), a 0-based index (#12), or a site label (label:Cu1)';
  const withAbsorber = fromData
    ? command
      .option('--absorber <which>', `${absorberHelp}; default: the element the data file names`)
      .option('--edge <edge>', "absorption edge: K, L1, L2 or L3; default: the data file's edge (else K)")
    : command
      .requiredOption('--absorber <which>', absorberHelp)
      .option('--edge <edge>', 'absorption edge: K, L1, L2 or L3', 'K');
  return withAbsorber
    .option('--radius <angstrom>', 'cluster radius in Å', '6')
    .option('--tolerance <angstrom>', 'maximum width of one shell in Å', '0.01')
    .option('--format <name>', 'structure format (xyz, extxyz, cif, pdb); detected when omitted')
    .option('--frame <n>', '0-based frame of a multi-frame file', '0');
}

export interface ParsedStructureOptions {
  /** Missing only when the command reads data and the option was omitted. */
  absorber?: AbsorberSelector;
  edge?: EdgeName;
  radius: number;
  tolerance: number;
  format?: string;
  frame: number;
}

export function parseStructureOptions(o: StructureCliOptions): ParsedStructureOptions {
  return {
    absorber: o.absorber !== undefined ? parseAbsorberSelector(o.absorber) : undefined,
    edge: o.edge !== undefined ? parseEdgeOption(o.edge) : undefined,
    radius: parseNumber('--radius', o.radius, { min: 0, exclusiveMin: true }),
    tolerance: parseNumber('--tolerance', o.tolerance, { min: 0 }),
    format: o.format,
    frame: parseInteger('--frame', o.frame, 0),
  };
}

/** An edge typed on the command line; errors name the option. */
export function parseEdgeOption(text: string): EdgeName {
  try {
    return parseEdge(text);
  } catch (e) {
    throw e instanceof InputError ? e.withLocation({ key: '--edge' }) : e;
  }
}

/** Structure options of a command without data: the absorber is required, the edge defaults to K. */
export function withoutData(o: ParsedStructureOptions): ParsedStructureOptions & { absorber: AbsorberSelector; edge: EdgeName } {
  if (o.absorber === undefined) throw new InputError('required', { key: '--absorber' });
  return { ...o, absorber: o.absorber, edge: o.edge ?? 'K' };
}
