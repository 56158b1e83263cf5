/** `shellrank simulate FILE --absorber EL`: chi(k) and |chi(R)| of one structure. */
import type { Command } from 'commander';
import { InputError } from '../../core/errors';
import { loadStructureFile, pickFrame } from '../../read/load-structure';
import { shellsOfStructure, type PathSet } from '../../paths/index';
import { simulateSpectrum, type DisorderSpec, type SimulatedSpectrum } from '../../model/simulate';
import { numberDensity } from '../../model/disorder';
import { cellVolume, type Structure } from '../../structure/structure';
import { defaultProviders, DEFAULT_PROVIDER } from '../../scatter/registry';
import { WINDOW_SHAPES, type WindowShape } from '../../numeric/window';
import type { CliIo } from '../io';
import { emit, toJson } from '../output';
import { parseNumber, parseRange } from '../options';
import { addStructureOptions, parseStructureOptions, withoutData, type StructureCliOptions } from './structure-options';

interface SimulateCliOptions extends StructureCliOptions {
  msrd?: string;
  debyeTemp?: string;
  einsteinTemp?: string;
  temp: string;
  s0sq: string;
  e0: string;
  kw: string;
  k: string;
  window: string;
  taper: string;
  rmax?: string;
  provider: string;
  cache: boolean;
  json?: boolean;
  out?: string;
}

/**
 * Atomic number density for the correlated Debye model: occupancy-weighted atoms per cell volume
 * when the structure is periodic, otherwise the atoms inside the cluster sphere (absorber included)
 * over the sphere's volume (an estimate; reported).
 */
export function densityFor(structure: Structure, set: PathSet): { density: number; source: string } {
  if (structure.lattice) {
    const atoms = structure.occupancy.reduce((s, x) => s + x, 0);
    return { density: numberDensity(atoms, cellVolume(structure.lattice)), source: 'cell' };
  }
  const atoms = 1 + set.paths.reduce((s, p) => s + p.degeneracy, 0);
  return { density: atoms / ((4 / 3) * Math.PI * set.radius ** 3), source: 'cluster sphere' };
}

export function parseDisorder(raw: SimulateCliOptions, structure: Structure, set: PathSet): DisorderSpec {
  const given = [raw.msrd, raw.debyeTemp, raw.einsteinTemp].filter((x) => x !== undefined).length;
  if (given > 1) throw new InputError('give only one of --msrd, --debye-temp and --einstein-temp', { key: '--msrd' });
  const temperature = parseNumber('--temp', raw.temp, { min: 0 });
  if (raw.debyeTemp !== undefined) {
    return { kind: 'debye', debyeTemperature: parseNumber('--debye-temp', raw.debyeTemp, { min: 0, exclusiveMin: true }), temperature, density: densityFor(structure, set).density };
  }
  if (raw.einsteinTemp !== undefined) {
    return { kind: 'einstein', einsteinTemperature: parseNumber('--einstein-temp', raw.einsteinTemp, { min: 0, exclusiveMin: true }), temperature };
  }
  return { kind: 'fixed', msrd: parseNumber('--msrd', raw.msrd ?? '0.004', { min: 0 }) };
}

/** The JSON document of `simulate --json` (documented in the README). */
export function simulateDocument(sim: SimulatedSpectrum, set: PathSet, file: string) {
  return {
    absorber: set.absorber,
    edge: set.edge,
    sites: set.sites,
    provider: sim.settings.provider,
    approximate: sim.tables.some((t) => t.info.approximate),
    paths: sim.paths.map((p) => ({ id: p.id, species: p.scatterer, r: p.r, n: p.degeneracy, msrd: p.msrd })),
    k: sim.k,
    chi: sim.chi,
    r: sim.r.filter((x) => x <= 10),
    chiRMagnitude: sim.chiRMagnitude.slice(0, sim.r.filter((x) => x <= 10).length),
    file,
    settings: sim.settings,
    provenance: sim.provenance,
  };
}

export function simulateCsv(sim: SimulatedSpectrum): string {
  const nr = sim.r.filter((x) => x <= 10).length;
  const rows = Math.max(sim.k.length, nr);
  const lines = [`# shellrank simulate: provider ${sim.settings.provider}; chiRMagnitude = |chi(R)| of k^${sim.settings.kWeighting} chi(k), ${sim.settings.window.shape} window ${sim.settings.window.min}-${sim.settings.window.max} 1/Å`, 'k,chi,r,chiRMagnitude'];
  for (let i = 0; i < rows; i++) {
    const a = i < sim.k.length ? `${fmt(sim.k[i])},${fmt(sim.chi[i])}` : ',';
    const b = i < nr ? `${fmt(sim.r[i])},${fmt(sim.chiRMagnitude[i])}` : ',';
    lines.push(`${a},${b}`);
  }
  return lines.join('\n') + '\n';
}

function fmt(x: number): string {
  return Number(x.toPrecision(8)).toString();
}

export function registerSimulate(program: Command, io: CliIo): void {
  addStructureOptions(
    program.command('simulate')
      .description('simulate chi(k) and |chi(R)| of a structure from its single-scattering shells')
      .argument('<file>', 'structure file (XYZ, extended XYZ, CIF, PDB)'),
  )
    .option('--msrd <a2>', 'sigma^2 of every shell in Å^2 (default 0.004 when no model is given)')
    .option('--debye-temp <kelvin>', 'use the correlated Debye model with this Debye temperature')
    .option('--einstein-temp <kelvin>', 'use the Einstein model with this Einstein temperature')
    .option('--temp <kelvin>', 'sample temperature for --debye-temp / --einstein-temp', '300')
    .option('--s0sq <value>', 'amplitude reduction factor S0^2', '1')
    .option('--e0 <ev>', 'E0 shift in eV', '0')
    .option('--rmax <angstrom>', 'include only shells up to this distance')
    .option('--kw <weight>', 'k-weight of the Fourier transform', '2')
    .option('--k <min:max>', 'k range of the Fourier transform window, 1/Å', '3:14')
    .option('--window <shape>', `window shape (${WINDOW_SHAPES.join(', ')})`, 'hann')
    .option('--taper <width>', 'window taper width, 1/Å', '1')
    .option('--provider <name>', 'scattering provider (firstPrinciples, or parametric: approximate, for tests)', DEFAULT_PROVIDER)
    .option('--no-cache', 'recompute scattering functions instead of reading the on-disk cache')
    .option('--json', 'write JSON instead of CSV')
    .option('--out <file>', 'write to this file instead of the terminal')
    .action((file: string, raw: SimulateCliOptions) => {
      const o = withoutData(parseStructureOptions(raw));
      const providers = defaultProviders({ cache: raw.cache });
      const provider = providers.get(raw.provider);
      if (!(WINDOW_SHAPES as readonly string[]).includes(raw.window)) {
        throw new InputError(`unknown window '${raw.window}' (expected one of ${WINDOW_SHAPES.join(', ')})`, { key: '--window' });
      }
      const [wmin, wmax] = parseRange('--k', raw.k);
      const loaded = loadStructureFile(file, { format: o.format });
      const structure = pickFrame(loaded, o.frame);
      const set = shellsOfStructure(structure, { absorber: o.absorber, radius: o.radius, tolerance: o.tolerance, edge: o.edge, structureHash: loaded.sha256 });
      const sim = simulateSpectrum(set, provider, {
        disorder: parseDisorder(raw, structure, set),
        s0sq: parseNumber('--s0sq', raw.s0sq, { min: 0 }),
        e0: parseNumber('--e0', raw.e0),
        kWeighting: parseNumber('--kw', raw.kw, { min: 0, max: 4 }),
        window: { shape: raw.window as WindowShape, min: wmin, max: wmax, taper: parseNumber('--taper', raw.taper, { min: 0 }) },
        rMax: raw.rmax === undefined ? undefined : parseNumber('--rmax', raw.rmax, { min: 0, exclusiveMin: true }),
      });
      emit(io, raw.json ? toJson(simulateDocument(sim, set, file), 8) : simulateCsv(sim), raw.out, [file]);
      if (raw.out) io.stderr(`wrote ${raw.out} (${sim.paths.length} shells, provider ${provider.name}${provider.name === 'parametric' ? ', approximate' : ''})\n`);
    });
}
