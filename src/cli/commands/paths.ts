/**
 * `shellrank paths FILE --absorber EL`: the scattering paths around the absorber, single and
 * multiple, with legs, effective distance, degeneracy and importance (src/rank/multiple listPaths).
 */
import type { Command } from 'commander';
import { InputError } from '../../core/errors';
import { makeProvenance } from '../../core/provenance';
import { loadStructureFile, pickFrame } from '../../read/load-structure';
import { shellsOfStructure } from '../../paths/index';
import { listPaths, type ListedPath } from '../../rank/multiple';
import { defaultProviders, DEFAULT_PROVIDER } from '../../scatter/registry';
import { buildClusters } from '../../structure/cluster';
import type { CliIo } from '../io';
import { emit, textTable, toJson } from '../output';
import { parseInteger, parseNumber, parseRange } from '../options';
import { addStructureOptions, parseStructureOptions, withoutData, type StructureCliOptions } from './structure-options';

interface PathsCliOptions extends StructureCliOptions {
  rmax: string;
  maxLegs: string;
  minImportance: string;
  k: string;
  provider: string;
  cache: boolean;
  json?: boolean;
  out?: string;
}

export function registerPaths(program: Command, io: CliIo): void {
  addStructureOptions(
    program.command('paths')
      .description('list the scattering paths around the absorber (single and multiple scattering) with their importance')
      .argument('<file>', 'structure file (XYZ, extended XYZ, CIF, PDB)'),
  )
    .option('--rmax <angstrom>', 'longest effective distance (half the path length), Å; at most --radius', '5')
    .option('--max-legs <n>', 'most legs of a path: 2 (shells only), 3 or 4', '4')
    .option('--min-importance <fraction>', 'drop paths below this fraction of the strongest shell\'s importance', '0.04')
    .option('--k <min:max>', 'k range over which importance is averaged, 1/Å', '3:14')
    .option('--provider <name>', 'scattering provider (firstPrinciples, or parametric: approximate, shells only)', DEFAULT_PROVIDER)
    .option('--no-cache', 'recompute scattering functions instead of reading the on-disk cache')
    .option('--json', 'write JSON instead of a table')
    .option('--out <file>', 'write to this file instead of the terminal')
    .action((file: string, raw: PathsCliOptions) => {
      const o = withoutData(parseStructureOptions(raw));
      const maxHalfLength = parseNumber('--rmax', raw.rmax, { min: 0, exclusiveMin: true });
      if (maxHalfLength > o.radius) throw new InputError(`must not exceed --radius (${o.radius} Å): no atom of a path is farther than its effective distance`, { key: '--rmax' });
      const settings = {
        maxLegs: parseInteger('--max-legs', raw.maxLegs, 2),
        maxHalfLength,
        minImportance: parseNumber('--min-importance', raw.minImportance, { min: 0 }),
        kRange: parseRange('--k', raw.k),
      };
      const provider = defaultProviders({ cache: raw.cache }).get(raw.provider);
      const loaded = loadStructureFile(file, { format: o.format });
      const structure = pickFrame(loaded, o.frame);
      const set = shellsOfStructure(structure, { absorber: o.absorber, radius: o.radius, tolerance: o.tolerance, edge: o.edge, structureHash: loaded.sha256 });
      const clusters = buildClusters(structure, { absorber: o.absorber, radius: o.radius });
      const { paths, found } = listPaths(provider, clusters, set, settings);
      if (raw.json) {
        const doc = {
          absorber: set.absorber, edge: set.edge, sites: set.sites, radius: set.radius, provider: provider.name, found,
          paths: paths.map((p) => ({ id: p.id, legs: p.legs, atoms: p.atoms, rEffective: p.rEffective, degeneracy: p.degeneracy, legLengths: p.legLengths, importance: p.importance })),
          file,
          provenance: makeProvenance({ ...settings, provider: provider.name, radius: o.radius, tolerance: o.tolerance, edge: o.edge }, [{ role: 'structure', file, sha256: loaded.sha256 }]),
        };
        emit(io, toJson(doc, 8), raw.out, [file]);
        return;
      }
      const head = `${set.absorber} ${set.edge} edge, ${set.sites} absorber site${set.sites === 1 ? '' : 's'} averaged, paths up to ${settings.maxLegs} legs and R_half ${maxHalfLength} Å of ${file}\n`
        + `${paths.length} of ${found} paths at least ${settings.minImportance} of the strongest shell (importance: mean over k ${settings.kRange[0]}-${settings.kRange[1]} 1/Å of N |F| exp(-2R/lambda) / R^2, provider ${provider.name})\n\n`;
      emit(io, head + textTable(['path', 'legs', 'R_half (Å)', 'n', 'importance', 'atoms', 'leg lengths (Å)'], paths.map(row)), raw.out, [file]);
    });
}

function row(p: ListedPath): string[] {
  return [p.id, String(p.legs), p.rEffective.toFixed(4), formatCount(p.degeneracy), p.importance.toFixed(3), p.atoms.join(' > '), p.legLengths.map((x) => x.toFixed(3)).join(' ')];
}

function formatCount(n: number): string {
  return Math.abs(n - Math.round(n)) < 1e-9 ? String(Math.round(n)) : n.toFixed(3);
}
