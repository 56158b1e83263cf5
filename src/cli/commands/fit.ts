/** `shellrank fit DATA STRUCTURE --absorber EL`: refine one structure against one spectrum. */
import type { Command } from 'commander';
import { ComputationError, InputError } from '../../core/errors';
import { readTextFile } from '../../core/files';
import { loadStructureFile, pickFrame } from '../../read/load-structure';
import { shellsOfStructure } from '../../paths/index';
import { defaultProviders, DEFAULT_PROVIDER } from '../../scatter/registry';
import { absorberAndEdgeFromData } from '../../fit/exafs/absorber-from-data';
import { loadChiOrReduce, type LoadedChi } from '../../fit/exafs/data';
import { fitStructure, DEFAULT_FIT_SETTINGS, type StructureFitSettings } from '../../fit/exafs/fit-structure';
import { fitDocument } from '../../fit/exafs/document';
import { FIT_DOMAINS, type FitDomain } from '../../fit/exafs/problem';
import { resolve } from 'node:path';
import type { CliIo } from '../io';
import { emit, toJson } from '../output';
import { fitResultLines } from '../fit-text';
import { parseInteger, parseNumber, parseRange } from '../options';
import { addStructureOptions, parseStructureOptions, type StructureCliOptions } from './structure-options';

export interface FitCliOptions extends StructureCliOptions {
  k: string;
  r: string;
  kw: string;
  fitIn: string;
  s0sq: string;
  s0sqFrom?: string;
  starts: string;
  maxIterations: string;
  provider: string;
  cache: boolean;
  json?: boolean;
  out?: string;
  report?: string;
}

/** Add the options shared by fit and rank. */
export function addFitOptions(command: Command): Command {
  return command
    .option('--k <min:max>', 'k range of the fit, 1/Å', `${DEFAULT_FIT_SETTINGS.kRange[0]}:${DEFAULT_FIT_SETTINGS.kRange[1]}`)
    .option('--r <min:max>', 'R range of the fit, Å', `${DEFAULT_FIT_SETTINGS.rRange[0]}:${DEFAULT_FIT_SETTINGS.rRange[1]}`)
    .option('--kw <weights>', 'k-weight, or several separated by commas (e.g. 1,2,3)', '2')
    .option('--fit-in <domain>', `fit in: ${FIT_DOMAINS.join(', ')}`, DEFAULT_FIT_SETTINGS.fitIn)
    .option('--s0sq <value>', "S0^2: a fixed value, or 'free'", String(DEFAULT_FIT_SETTINGS.s0sq))
    .option('--s0sq-from <fit.json>', 'fix S0^2 at the value of an earlier fit of a reference compound')
    .option('--starts <n>', 'number of starts (more than 1 adds seeded random starts)', '1')
    .option('--max-iterations <n>', 'most Levenberg-Marquardt iterations per fit', '200')
    .option('--provider <name>', 'scattering provider', DEFAULT_PROVIDER)
    .option('--no-cache', 'recompute scattering functions instead of reading the on-disk cache');
}

/** What the reduction on the way warned about (a short pre-edge, an E0 far from the table); none for a saved reduction. */
export function reductionWarnings(data: LoadedChi): string[] {
  const w = (data.chi.info.reduction as { warnings?: unknown } | undefined)?.warnings;
  return data.reducedHere && Array.isArray(w) ? w.filter((x): x is string => typeof x === 'string') : [];
}

/** S0^2 from an earlier fit document; refused when that fit did not converge (its S0^2 calibrates nothing). */
export function s0sqFromFit(path: string): number {
  const text = readTextFile(path);
  let doc: { params?: { s0sq?: { value?: unknown } }; status?: { converged?: unknown; message?: unknown } };
  try {
    doc = JSON.parse(text);
  } catch {
    throw new InputError('is not a JSON fit result', { file: path, key: '--s0sq-from' });
  }
  const value = doc?.params?.s0sq?.value;
  if (typeof value !== 'number' || !Number.isFinite(value)) throw new InputError('has no params.s0sq.value (is it a shellrank fit result?)', { file: path, key: '--s0sq-from' });
  if (doc.status?.converged === false) {
    const why = typeof doc.status.message === 'string' ? ` (${doc.status.message})` : '';
    throw new InputError(`the reference fit did not converge${why}; refit the reference before taking S0^2 from it`, { file: path, key: '--s0sq-from' });
  }
  return value;
}

export function parseFitOptions(raw: FitCliOptions): StructureFitSettings {
  if (!(FIT_DOMAINS as readonly string[]).includes(raw.fitIn)) throw new InputError(`unknown fit space '${raw.fitIn}' (expected ${FIT_DOMAINS.join(', ')})`, { key: '--fit-in' });
  const kWeightings = raw.kw.split(',').map((w) => parseNumber('--kw', w, { min: 0, max: 4 }));
  let s0sq: number | 'free';
  if (raw.s0sqFrom !== undefined) s0sq = s0sqFromFit(raw.s0sqFrom);
  else s0sq = raw.s0sq === 'free' ? 'free' : parseNumber('--s0sq', raw.s0sq, { min: 0, exclusiveMin: true });
  return {
    ...DEFAULT_FIT_SETTINGS,
    kRange: parseRange('--k', raw.k),
    rRange: parseRange('--r', raw.r),
    kWeightings,
    fitIn: raw.fitIn as FitDomain,
    s0sq,
    starts: parseInteger('--starts', raw.starts, 1),
    maxIterations: parseInteger('--max-iterations', raw.maxIterations, 1),
  };
}

export function registerFit(program: Command, io: CliIo): void {
  addFitOptions(addStructureOptions(
    program.command('fit')
      .description('refine one structure against one measured spectrum (raw beamline file or saved reduction)')
      .argument('<data>', 'measured spectrum: XDI, columns, or a shellrank-chi JSON from `reduce --out`')
      .argument('<structure>', 'structure file (XYZ, extended XYZ, CIF, PDB)'),
    { fromData: true },
  ))
    .option('--json', 'write the fit as JSON')
    .option('--out <file>', 'write to this file instead of the terminal')
    .option('--report <dir>', 'also write the HTML report, tables and plots into this folder')
    .action(async (dataFile: string, structureFile: string, raw: FitCliOptions) => {
      const o = parseStructureOptions(raw);
      const settings = parseFitOptions(raw);
      const provider = defaultProviders({ cache: raw.cache }).get(raw.provider);
      const data = loadChiOrReduce(dataFile);
      for (const w of reductionWarnings(data)) io.stderr(`shellrank: warning: ${w}\n`);
      const { absorber, edge } = absorberAndEdgeFromData(data.chi, o, dataFile);
      const loaded = loadStructureFile(structureFile, { format: o.format });
      const structure = pickFrame(loaded, o.frame);
      const set = shellsOfStructure(structure, { absorber, radius: o.radius, tolerance: o.tolerance, edge, structureHash: loaded.sha256 });
      const result = fitStructure(data.chi, set, provider, settings, [
        { role: 'data', file: dataFile, sha256: data.sha256 },
        { role: 'structure', file: structureFile, sha256: loaded.sha256 },
      ], dataFile);
      const doc = fitDocument(result, { data, structure: { file: structureFile, sha256: loaded.sha256, absorber: set.absorber, sites: set.sites, frame: o.frame } });
      if (raw.json) {
        emit(io, toJson(doc, 10), raw.out, [dataFile, structureFile]);
      } else {
        const lines = [
          `fit of ${structureFile} to ${dataFile} (${set.absorber} ${set.edge} edge, ${settings.fitIn} space, k ${settings.kRange.join('-')} 1/Å, R ${settings.rRange.join('-')} Å, k-weight ${settings.kWeightings.join(',')})`,
          data.reducedHere ? `data reduced here with default settings: E0 = ${data.chi.e0.toFixed(2)} eV, edge step ${data.chi.edgeStep.toPrecision(4)}` : 'data: saved reduction',
          ...fitResultLines(result, { showParameter: (n) => n === 's0sq' || n === 'e0', recipe: result.recipe }),
        ];
        emit(io, lines.join('\n') + '\n', raw.out, [dataFile, structureFile]);
      }
      if (raw.report !== undefined) {
        // the plotting libraries load only when a report is asked for
        const { writeReport } = await import('../../report/index');
        const written = await writeReport(JSON.parse(toJson(doc, 10)), resolve(io.cwd, raw.report), { protectedInputs: [dataFile, structureFile].map((f) => resolve(io.cwd, f)) });
        io.stderr(`wrote ${written.html}\n`);
      }
      if (!result.status.converged) {
        throw new ComputationError(`the fit of ${structureFile} to ${dataFile} did not converge: ${result.status.message}${raw.out ? ` (result written to ${raw.out})` : ''}`);
      }
    });
}
