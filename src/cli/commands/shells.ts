/** `shellrank shells FILE --absorber EL`: the absorber's neighbour shells. */
import type { Command } from 'commander';
import { loadStructureFile, pickFrame } from '../../read/load-structure';
import { shellsOfStructure, type PathSet } from '../../paths/index';
import type { CliIo } from '../io';
import { emit, textTable, toJson } from '../output';
import { addStructureOptions, parseStructureOptions, withoutData, type StructureCliOptions } from './structure-options';

/** The JSON document of `shells --json` (documented in the README). */
export function shellsDocument(set: PathSet, file: string) {
  return {
    absorber: set.absorber,
    edge: set.edge,
    sites: set.sites,
    radius: set.radius,
    tolerance: set.tolerance,
    warnings: set.warnings ?? [],
    shells: set.paths.map((p) => ({ id: p.id, species: p.scatterer, r: p.r, n: p.degeneracy, spread: p.spread })),
    file,
    provenance: set.provenance,
  };
}

export function registerShells(program: Command, io: CliIo): void {
  addStructureOptions(
    program.command('shells')
      .description('list the neighbour shells around the absorber (species, distance, degeneracy)')
      .argument('<file>', 'structure file (XYZ, extended XYZ, CIF, PDB)'),
  )
    .option('--json', 'write JSON instead of a table')
    .option('--out <file>', 'write to this file instead of the terminal')
    .action((file: string, raw: StructureCliOptions & { json?: boolean; out?: string }) => {
      const o = withoutData(parseStructureOptions(raw));
      const loaded = loadStructureFile(file, { format: o.format });
      const structure = pickFrame(loaded, o.frame);
      const set = shellsOfStructure(structure, { absorber: o.absorber, radius: o.radius, tolerance: o.tolerance, edge: o.edge, structureHash: loaded.sha256 });
      for (const warning of set.warnings ?? []) io.stderr(`warning: ${warning}\n`);
      if (raw.json) {
        emit(io, toJson(shellsDocument(set, file), 8), raw.out, [file]);
        return;
      }
      const rows = set.paths.map((p) => [p.id, p.scatterer, p.r.toFixed(4), formatCount(p.degeneracy), p.spread.toFixed(4)]);
      const head = `${set.absorber} ${set.edge} edge, ${set.sites} absorber site${set.sites === 1 ? '' : 's'} averaged, shells within ${set.radius} Å of ${file}\n\n`;
      emit(io, head + textTable(['shell', 'species', 'r (Å)', 'n', 'spread (Å)'], rows), raw.out, [file]);
    });
}

function formatCount(n: number): string {
  return Math.abs(n - Math.round(n)) < 1e-9 ? String(Math.round(n)) : n.toFixed(3);
}
