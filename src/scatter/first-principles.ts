/**
 * First-principles single-scattering functions for one absorber-scatterer pair, end to end:
 *
 *   1. self-consistent LDA atoms (./atom): a core-hole atom for the absorber (the edge's core level
 *      emptied, one extra valence electron) and ground-state atoms for every other species;
 *   2. muffin-tin cluster potentials from overlapped densities (./muffin-tin, Mattheiss; Norman radii
 *      with a settable overlap; interstitial level = surface average);
 *   3. the photoelectron's energy-dependent complex potential (./exchange: by default the
 *      Hedin-Lundqvist plasmon-pole self-energy of the valence density, real and imaginary parts,
 *      plus the Dirac-Hara exchange of the core density, the core being the closed shells of the
 *      preceding noble gas; Hedin-Lundqvist of the whole density or Dirac-Hara exchange as
 *      settings; ./site-potential), evaluated everywhere at the photoelectron's energy above the
 *      Fermi level;
 *   4. complex phase shifts on a coarse k grid (./phase-shifts), continued in k and splined;
 *   5. the exact curved-wave effective amplitude at the actual distance and the central-atom phase
 *      (./amplitude), combined over the edge's final-state channels;
 *   6. the mean free path from Im V_0 and the core-hole width (./mean-free-path).
 *
 * The result is what the EXAFS model needs: amplitude |Z| (Å), total phase arg Z (continuous) and
 * lambda (Å) on the requested k grid, where chi = Im[Z e^{2ikR}] / (kR^2), Z = sum_l w_l (-1)^l
 * e^{2 i delta_l^c} F_l, i.e. phase = 2 delta_c - l pi + arg F for a single channel. The
 * amplitude includes |e^{2 i delta_c}| (central-atom losses) when the absorber's delta is complex.
 *
 * Losses are counted once each (our derivation): the sphere potentials are taken relative to the
 * complex interstitial level, U = V - V_0, so a complex delta carries only the extra absorption
 * inside a sphere beyond the interstitial one; |e^{2 i delta_c}| = |S_l| is, to WKB order,
 * exp(-2 ∫_0^{r_mt} Im p dr) for the path out of the absorber sphere and back, which is what the
 * ratio of the absorber's dipole matrix element squared to the atomic absorption reduces to; the
 * interstitial part Im V_0 and the core-hole width enter only exp(-2R/lambda), over the whole path.
 * Both the self-energy and the losses are evaluated at the photoelectron's energy above the Fermi
 * level; the radial equation and the free waves use the interstitial wave number k_int,
 * k_int^2 = k^2 + k_F^2 + 2 (Sigma(k_F) - Sigma(k)) with k_F and Sigma of the interstitial electron
 * gas ('fermi' energy zero), and chi's 1/k_int is rewritten as 1/k by scaling the amplitude by k/k_int.
 * With the setting `relativistic`, the radial equation inside the spheres is the scalar-relativistic
 * one and k_int is replaced, wherever it is a wave number (matching, curved-wave propagators,
 * 2 k_int R, 1/k_int, lambda), by K = k_int sqrt(1 + k_int^2 / (4 c^2)) (./phase-shifts); the mean
 * free path keeps the non-relativistic relation lambda = 1 / Im p (a relative error of E/(2c^2),
 * below 1e-3 up to 20 1/Å).
 *
 * Below `kFloor` (default 0.5 1/Å) the functions are held at their kFloor values: the curved-wave
 * amplitude diverges as k -> 0 and EXAFS theory does not apply there.
 *
 * L2,3 channel weights use radial dipole matrix elements M_l = ∫ R_2p(r) r R_l(r) r^2 dr inside the
 * absorber sphere with R_l the continuum solutions and R_2p a hydrogenic 2p orbital with Slater's
 * screened charge Z - 4.15 (Slater, Phys. Rev. 36, 57 (1930)), an approximation noted in the settings.
 */
import { BOHR_RADIUS_A, HARTREE_EV } from '../core/constants';
import { hashOf } from '../core/hash';
import { ComputationError, InputError } from '../core/errors';
import { elementBySymbol, type EdgeName } from '../elements/index';
import { groundStateConfiguration, solveAtom } from './atom/index';
import { combineChannels, edgeChannels, effectiveAmplitude, planeWaveBackscattering, translationCoefficients } from './amplitude';
import { fermiMomentum, selfEnergy, type ExchangeModel, type LossModel, type SelfEnergyOptions } from './exchange';
import { meanFreePath } from './mean-free-path';
import { atomIntegrals, buildMuffinTins, type AtomIntegrals, type MuffinTinCluster, type SiteNeighbour, type SiteSpec } from './muffin-tin';
import { freeWaveNumber, phaseShifts, phaseShiftWorkspace, regularSolution, type RadialEquationOptions, type SpherePotential } from './phase-shifts';
import type { NeighbourSpec, ScatteringRequest } from './provider';
import { interstitialLevel, siteRadial, sphereAtEnergy, type SiteRadial } from './site-potential';
import { cubicSpline, splineAt } from './spline';

/** Bump when the physics or numerics change, so cached results are not reused. */
export const FIRST_PRINCIPLES_REVISION = 4;
// revision history: 1 Dirac-Hara real part; 2 Hedin-Lundqvist real part by default, the sphere
// self-energy evaluated at the energy above the Fermi level (was: at the interstitial wave number),
// tabulated plasmon-pole losses, atoms converged to 1e-6 hartree; 3 muffin-tin radii pair each
// site with the Norman radius of its ground-state neighbours, not of the core-hole absorber
// (./muffin-tin; fitted first-shell distances move by < 1e-4 Å), optional scalar-relativistic
// radial equation (setting `relativistic`, off by default); 4 core/valence self-energy by default
// (exchange 'valence-hedin-lundqvist': plasmon-pole self-energy of the valence density, Dirac-Hara
// exchange of the core density; measured first-shell dR Cu -0.0186 -> -0.0095, Fe -0.0151 ->
// +0.0013, ZnSe -0.0066 -> -0.0027 Å, S0^2 0.85/0.74/0.91 -> 0.93/0.84/0.96)

/** Settings of the first-principles calculation, all with defaults. */
export interface FirstPrinciplesSettings {
  /** Fractional muffin-tin overlap of touching spheres. */
  overlap: number;
  /**
   * Real part of the photoelectron self-energy: 'valence-hedin-lundqvist' (default; plasmon-pole
   * exchange and correlation of the valence density, Dirac-Hara exchange of the core density, and
   * the losses of the valence gas only), 'hedin-lundqvist' (plasmon-pole self-energy of the whole
   * density), 'dirac-hara' (exchange only) or 'ground-state-lda' (energy independent).
   */
  exchange: ExchangeModel;
  /**
   * Loss model (imaginary part): 'plasmon-pole' (default; the Hedin-Lundqvist imaginary part, of
   * the valence density under 'valence-hedin-lundqvist') or 'none'.
   */
  losses: LossModel;
  /** Use the core-hole atom for the absorber (final-state rule). */
  coreHole: boolean;
  /** Without an environment: number of neighbours of the other species at the pair distance. */
  defaultCoordination: number;
  /** Log step of the sphere grids. */
  gridStep: number;
  /** Step of the coarse k grid on which phase shifts are computed, 1/Å. */
  coarseStep: number;
  /** Below this k (1/Å) values are held constant. */
  kFloor: number;
  /** lmax(k) = ceil(k r_mt) + lmaxExtra, capped by lmaxCap. */
  lmaxExtra: number;
  lmaxCap: number;
  /**
   * Solve the photoelectron's radial equation in every sphere scalar-relativistically
   * (Koelling-Harmon, the equation of the atoms from Z = 19 on) and propagate it with the
   * relativistic wave number (./phase-shifts). Default false for now: on the measured spectra of
   * bench/measured-first-shell.ts it moves the fitted first-shell distances by a further -0.003 to
   * -0.006 Å (revision 4: Cu -0.0095 -> -0.0146, Fe +0.0013 -> -0.0021, ZnSe -0.0027 -> -0.0084
   * Å), away from the crystal values (run it with --settings '{"relativistic":true}').
   */
  relativistic: boolean;
  /**
   * Zero of the k scale: 'fermi' (default) puts k = 0 at the Fermi level, estimated from the
   * electron gas of the interstitial density, E_F - V_0 = k_F^2/2 + Sigma(k_F) - Sigma(p);
   * 'interstitial' puts it at the interstitial level (k = interstitial wave number).
   */
  energyZero: 'fermi' | 'interstitial';
}

export const DEFAULT_FIRST_PRINCIPLES_SETTINGS: FirstPrinciplesSettings = {
  overlap: 0.1,
  exchange: 'valence-hedin-lundqvist',
  losses: 'plasmon-pole',
  coreHole: true,
  defaultCoordination: 12,
  gridStep: 0.01,
  coarseStep: 0.1,
  kFloor: 0.5,
  lmaxExtra: 5,
  lmaxCap: 70,
  relativistic: false,
  energyZero: 'fermi',
};

/** Source of atomic densities (so callers can cache atoms across requests). */
export type AtomSource = (z: number, coreHole: EdgeName | null) => AtomIntegrals;

/**
 * Self-consistency tolerance (hartree) of the atoms behind cluster potentials: 1e-6, looser than
 * the atom module's default 1e-8 (made for total energies), since a potential error of 1e-6
 * hartree is far below what moves a phase shift; it saves about a third of the SCF work.
 */
export const ATOM_SCF_TOLERANCE = 1e-6;

const NOBLE_GASES = [2, 10, 18, 36, 54, 86];

/**
 * The core shells of element z: the (n, l) subshells of the preceding noble gas's ground state
 * (none for H and He, [He] for Li-Ne, ..., [Rn] beyond Rn), as keys `${n},${l}`. This is the
 * usual chemical core (common practice, no source); it leaves semi-core shells such as the filled
 * 3d of Zn, Ga and Se in the valence, with the screening electron gas. Measured alternative
 * (bench/measured-first-shell.ts, ZnSe): counting the 3d of Se (or of Zn and Se) as core gives
 * dR +0.007 (+0.010) Å but S0^2 1.19 and a worse fit, so the filled 3d stays valence.
 */
export function coreShellsOf(z: number): Set<string> {
  let core = 0;
  for (const g of NOBLE_GASES) if (g < z) core = g;
  return new Set(core > 0 ? groundStateConfiguration(core).map((o) => `${o.n},${o.l}`) : []);
}

/**
 * Solve atoms directly (no caching). The result carries the density of the core shells
 * ({@link coreShellsOf}; with a core hole in one of them, its reduced occupation) for the
 * core/valence self-energy.
 */
export function solveAtomIntegrals(z: number, coreHole: EdgeName | null): AtomIntegrals {
  const atom = solveAtom({ z, coreHole, tolerance: ATOM_SCF_TOLERANCE });
  if (!atom.converged) throw new ComputationError(`the LDA atom Z = ${z}${coreHole ? ` with a ${coreHole} core hole` : ''} did not converge`);
  const shells = coreShellsOf(z);
  let coreDensity: Float64Array | undefined;
  if (shells.size > 0) {
    coreDensity = new Float64Array(atom.r.length);
    atom.orbitals.forEach((o, k) => {
      if (!shells.has(`${o.n},${o.l}`)) return;
      const part = atom.orbitalDensities[k];
      for (let i = 0; i < part.length; i++) coreDensity![i] += part[i];
    });
  }
  return atomIntegrals({ z: atom.z, r: atom.r, density: atom.density, coreDensity });
}

/** Diagnostics of one calculation (for the CLI and tests). */
export interface FirstPrinciplesDetails {
  absorberRadius: number;
  scattererRadius: number;
  absorberNormanRadius: number;
  scattererNormanRadius: number;
  /** Ground-state interstitial level, eV. */
  groundStateInterstitialEv: number;
  /** Plane-wave |f(pi)| of the scatterer on the request grid, Å. */
  planeWaveAmplitude: Float64Array;
  /** Central-atom 2 Re delta_l of the dominant channel, rad. */
  centralPhase: Float64Array;
  /** Largest l used. */
  lmaxUsed: number;
  environment: 'given' | 'default';
  /** E_F - V_0 at the Fermi level (electron-gas estimate from the interstitial density), eV. */
  fermiAboveInterstitialEv: number;
}

export interface FirstPrinciplesResult {
  k: Float64Array;
  amplitude: Float64Array;
  phase: Float64Array;
  meanFreePath: Float64Array;
  details: FirstPrinciplesDetails;
}

function checkRequest(request: ScatteringRequest): void {
  if (!(request.distance > 0) || !Number.isFinite(request.distance)) throw new InputError(`distance must be a positive number of Å, got ${request.distance}`, { key: 'distance' });
  for (let i = 0; i < request.k.length; i++) {
    const k = request.k[i];
    if (!(k >= 0) || !Number.isFinite(k)) throw new InputError(`k grid values must be finite and >= 0 (index ${i}: ${k})`, { key: 'k' });
    if (i > 0 && !(k > request.k[i - 1])) throw new InputError(`k grid must increase (index ${i})`, { key: 'k' });
  }
}

/** The environment actually used: the request's, or the default one. */
export function resolveEnvironment(request: ScatteringRequest, settings: FirstPrinciplesSettings): { absorber: NeighbourSpec[]; scatterers: Record<string, NeighbourSpec[]>; given: boolean } {
  if (request.environment && request.environment.absorber.length > 0) {
    const scatterers: Record<string, NeighbourSpec[]> = { ...request.environment.scatterers };
    if (!scatterers[request.scatterer] || scatterers[request.scatterer].length === 0) {
      scatterers[request.scatterer] = [{ species: request.absorber, distance: request.distance, count: settings.defaultCoordination }];
    }
    return { absorber: request.environment.absorber, scatterers, given: true };
  }
  const n = settings.defaultCoordination;
  return {
    absorber: [{ species: request.scatterer, distance: request.distance, count: n }],
    scatterers: { [request.scatterer]: [{ species: request.absorber, distance: request.distance, count: n }] },
    given: false,
  };
}

/** Continue phase shifts in k (mod pi), from the highest k downward where delta -> 0. */
function continueModPi(values: Float64Array): void {
  for (let i = values.length - 2; i >= 0; i--) {
    const d = values[i] - values[i + 1];
    values[i] -= Math.PI * Math.round(d / Math.PI);
  }
}

/** Hydrogenic 2p radial function (unnormalised) with Slater screening, for L2,3 matrix elements. */
function core2p(z: number, r: number): number {
  const zEffective = Math.max(z - 4.15, 1);
  return r * Math.exp((-zEffective * r) / 2);
}

/**
 * Everything about one cluster that does not depend on which scatterer is asked for or at what
 * distance: the muffin tins, the interstitial level and wave number at each energy of the coarse
 * grid, and the absorber's central-atom phase shifts and channel weights. Phase shifts of the
 * scatterer sites are added as they are asked for (they depend on the site, not on the distance).
 */
export interface ClusterStage {
  /** Coarse k grid, 1/Å. */
  coarse: Float64Array;
  cluster: MuffinTinCluster;
  radial: SiteRadial[];
  /** Site index of each species other than the absorber's own site (index 0). */
  siteOf: Map<string, number>;
  channels: number[];
  /** Per coarse energy: interstitial wave number (1/bohr) and complex interstitial level (hartree). */
  kInt: Float64Array;
  v0Re: Float64Array;
  v0Im: Float64Array;
  /** Central-atom delta_l per channel (Re continued in k) and channel weights, per coarse energy. */
  centralRe: Float64Array[];
  centralIm: Float64Array[];
  weight: Float64Array[];
  kFermi: number;
  /** Scatterer phase shifts by site index, filled on demand. */
  shifts: Map<number, SiteShifts>;
}

/** Phase shifts of one scatterer site on the coarse grid, Re continued in k. */
export interface SiteShifts {
  lmax: number;
  re: Float64Array[];
  im: Float64Array[];
}

/**
 * A memo of cluster stages shared by requests with the same absorber, edge, environment, settings
 * and coarse grid (e.g. several shells of one structure). Callers own it; the provider keeps one.
 */
export type ClusterMemo = Map<string, ClusterStage>;

/** Most cluster stages a memo keeps (least recently used dropped first; a stage is ~1 MB). */
export const CLUSTER_MEMO_SIZE = 16;

export function lmaxFor(settings: FirstPrinciplesSettings, radius: number, k: number): number {
  return Math.min(settings.lmaxCap, Math.ceil(k * radius) + settings.lmaxExtra);
}

function buildClusterStage(
  request: ScatteringRequest,
  env: { absorber: NeighbourSpec[]; scatterers: Record<string, NeighbourSpec[]> },
  settings: FirstPrinciplesSettings,
  atoms: AtomSource,
  coarse: Float64Array,
): ClusterStage {
  const absorberElement = elementBySymbol(request.absorber);
  const bohr = (a: number) => a / BOHR_RADIUS_A;
  const symbolOf = (s: string) => elementBySymbol(s).symbol;
  const ground = (symbol: string) => atoms(elementBySymbol(symbol).z, null);
  const neighbours = (list: NeighbourSpec[]): SiteNeighbour[] =>
    list.map((nb) => ({ species: symbolOf(nb.species), atom: ground(nb.species), distance: bohr(nb.distance), count: nb.count }));

  const absorberAtom = settings.coreHole ? atoms(absorberElement.z, request.edge) : ground(absorberElement.symbol);
  const absorberSite: SiteSpec = { species: absorberElement.symbol, atom: absorberAtom, neighbours: neighbours(env.absorber), weight: 1 };
  const specs: SiteSpec[] = [absorberSite];
  const abundance = (species: string) => env.absorber.filter((nb) => symbolOf(nb.species) === species).reduce((a, nb) => a + nb.count, 0);
  const siteOf = new Map<string, number>();
  for (const [species, list] of Object.entries(env.scatterers)) {
    const symbol = symbolOf(species);
    if (siteOf.has(symbol)) continue;
    siteOf.set(symbol, specs.length);
    specs.push({ species: symbol, atom: ground(symbol), neighbours: neighbours(list), weight: Math.max(abundance(symbol), 1) });
  }
  const cluster: MuffinTinCluster = buildMuffinTins(specs, { overlap: settings.overlap });
  const radial: SiteRadial[] = cluster.sites.map((s) => siteRadial(s, settings.gridStep));
  const absorber = radial[0];
  const selfEnergyOptions: SelfEnergyOptions = { exchange: settings.exchange, losses: settings.losses };
  const nCoarse = coarse.length;
  const kAu = (kA: number) => kA * BOHR_RADIUS_A;
  const channels = edgeChannels(request.edge);
  const centralRe = channels.map(() => new Float64Array(nCoarse));
  const centralIm = channels.map(() => new Float64Array(nCoarse));
  const weight = channels.map(() => new Float64Array(nCoarse));
  const v0Re = new Float64Array(nCoarse);
  const v0Im = new Float64Array(nCoarse);
  const kInt = new Float64Array(nCoarse);
  // interstitial wave number for experimental k (relative to E_F): k_int^2 = 2 (E - V_0(E))
  const kFermi = fermiMomentum(cluster.interstitialDensity);
  const realOnly: SelfEnergyOptions = { ...selfEnergyOptions, losses: 'none' };
  const sigma: [number, number] = [0, 0];
  const sigmaAverage = (k: number) => radial.reduce((a, s) => a + s.weight * selfEnergy(s.surfaceDensity, k, realOnly, sigma, s.surfaceCoreDensity)[0], 0);
  const sigmaFermi = sigmaAverage(0);
  const interstitialWaveNumber = (kExp: number) =>
    settings.energyZero === 'interstitial' ? kExp : Math.sqrt(kExp * kExp + kFermi * kFermi + 2 * (sigmaFermi - sigmaAverage(kExp)));
  const workAbs = phaseShiftWorkspace(absorber.r.length);
  const radialEquation: RadialEquationOptions = { relativistic: settings.relativistic };
  const potAbs: SpherePotential = { radius: absorber.radius, h: absorber.h, r: absorber.r, re: new Float64Array(absorber.r.length), im: new Float64Array(absorber.r.length) };
  const lmaxCentral = Math.max(...channels);
  for (let i = 0; i < nCoarse; i++) {
    const kExp = kAu(coarse[i]);
    const v0 = interstitialLevel(radial, kExp, selfEnergyOptions);
    v0Re[i] = v0[0];
    v0Im[i] = v0[1];
    const k = interstitialWaveNumber(kExp);
    kInt[i] = k;
    // the self-energy takes the energy above the Fermi level (kExp); the radial equation k_int
    sphereAtEnergy(absorber, kExp, selfEnergyOptions, v0, potAbs);
    const central = phaseShifts(potAbs, k, lmaxCentral, workAbs, radialEquation);
    const matrix: number[] = [];
    channels.forEach((l, c) => {
      centralRe[c][i] = central.re[l];
      centralIm[c][i] = central.im[l];
      if (channels.length > 1) {
        const sol = regularSolution(potAbs, k, l, { re: central.re[l], im: central.im[l] }, radialEquation);
        let mr = 0;
        let mi = 0;
        for (let j = 0; j < absorber.r.length; j++) {
          const r = absorber.r[j];
          const w = core2p(absorberElement.z, r) * r * r * r * r; // R_c r R_l r^2 dr, dr = r dx
          mr += w * sol.re[j];
          mi += w * sol.im[j];
        }
        matrix.push(mr * mr + mi * mi);
      }
    });
    if (channels.length > 1) {
      // channels [2, 0]: w_2 = 2 M2^2 / (2 M2^2 + M0^2)
      const total = 2 * matrix[0] + matrix[1];
      weight[0][i] = (2 * matrix[0]) / total;
      weight[1][i] = matrix[1] / total;
    } else {
      weight[0][i] = 1;
    }
  }
  centralRe.forEach(continueModPi);
  return { coarse, cluster, radial, siteOf, channels, kInt, v0Re, v0Im, centralRe, centralIm, weight, kFermi, shifts: new Map() };
}

/** Phase shifts of site `index` on the stage's coarse grid (computed once per stage and site). */
export function siteShifts(stage: ClusterStage, index: number, settings: FirstPrinciplesSettings): SiteShifts {
  const known = stage.shifts.get(index);
  if (known) return known;
  const site = stage.radial[index];
  const selfEnergyOptions: SelfEnergyOptions = { exchange: settings.exchange, losses: settings.losses };
  const { coarse, kInt } = stage;
  const nCoarse = coarse.length;
  const lmax = lmaxFor(settings, site.radius, 1.05 * Math.hypot(coarse[nCoarse - 1] * BOHR_RADIUS_A, stage.kFermi));
  const re = Array.from({ length: lmax + 1 }, () => new Float64Array(nCoarse));
  const im = Array.from({ length: lmax + 1 }, () => new Float64Array(nCoarse));
  const work = phaseShiftWorkspace(site.r.length);
  const pot: SpherePotential = { radius: site.radius, h: site.h, r: site.r, re: new Float64Array(site.r.length), im: new Float64Array(site.r.length) };
  const v0: [number, number] = [0, 0];
  for (let i = 0; i < nCoarse; i++) {
    v0[0] = stage.v0Re[i];
    v0[1] = stage.v0Im[i];
    sphereAtEnergy(site, coarse[i] * BOHR_RADIUS_A, selfEnergyOptions, v0, pot);
    const k = kInt[i];
    const lmaxHere = lmaxFor(settings, site.radius, k);
    const shifts = phaseShifts(pot, k, lmaxHere, work, { relativistic: settings.relativistic });
    for (let l = 0; l <= lmaxHere; l++) {
      re[l][i] = shifts.re[l];
      im[l][i] = shifts.im[l];
    }
  }
  for (let l = 0; l <= lmax; l++) continueModPi(re[l]);
  const result = { lmax, re, im };
  stage.shifts.set(index, result);
  return result;
}

/**
 * The cluster stage a request uses, from `memo` when it holds it (the same memo entry
 * {@link computeFirstPrinciples} uses, so single- and multiple-scattering requests of one
 * structure build their cluster once). The request's scatterer and distance only decide the
 * default environment when the request gives none.
 */
export function clusterStageFor(
  request: ScatteringRequest,
  settings: FirstPrinciplesSettings = DEFAULT_FIRST_PRINCIPLES_SETTINGS,
  atoms: AtomSource = solveAtomIntegrals,
  memo?: ClusterMemo,
): ClusterStage {
  checkRequest(request);
  const absorberElement = elementBySymbol(request.absorber);
  const env = resolveEnvironment(request, settings);
  const kMaxRequest = request.k.length ? request.k[request.k.length - 1] : settings.kFloor;
  const kTop = Math.max(kMaxRequest, settings.kFloor) + 2 * settings.coarseStep;
  const nCoarse = Math.max(4, Math.ceil((kTop - settings.kFloor) / settings.coarseStep) + 1);
  const coarse = new Float64Array(nCoarse);
  for (let i = 0; i < nCoarse; i++) coarse[i] = settings.kFloor + i * settings.coarseStep;
  const stageKey = memo
    ? hashOf({ absorber: absorberElement.symbol, edge: request.edge, absorberEnv: env.absorber, scatterers: env.scatterers, settings, nCoarse })
    : '';
  const known = memo?.get(stageKey);
  if (known && memo) {
    memo.delete(stageKey);
    memo.set(stageKey, known);
    return known;
  }
  const stage = buildClusterStage(request, env, settings, atoms, coarse);
  if (memo) {
    memo.set(stageKey, stage);
    while (memo.size > CLUSTER_MEMO_SIZE) memo.delete(memo.keys().next().value as string);
  }
  return stage;
}

/**
 * Compute first-principles scattering functions for one request (no disk cache; atoms from
 * `atoms`). With a `memo`, cluster stages and site phase shifts are reused across requests that
 * share them (the results are identical to computing each request alone).
 */
export function computeFirstPrinciples(
  request: ScatteringRequest,
  settings: FirstPrinciplesSettings = DEFAULT_FIRST_PRINCIPLES_SETTINGS,
  atoms: AtomSource = solveAtomIntegrals,
  memo?: ClusterMemo,
): FirstPrinciplesResult {
  checkRequest(request);
  const absorberElement = elementBySymbol(request.absorber);
  const scattererElement = elementBySymbol(request.scatterer);
  const edgeData = absorberElement.edges[request.edge];
  if (!edgeData) throw new InputError(`${absorberElement.symbol} has no ${request.edge} edge in the element table`, { key: 'edge' });
  const gammaHartree = (edgeData.width ?? 0) / HARTREE_EV;
  const bohr = (a: number) => a / BOHR_RADIUS_A;
  const stage = clusterStageFor(request, settings, atoms, memo);
  const { coarse } = stage;
  const scattererIndex = stage.siteOf.get(scattererElement.symbol) ?? -1;
  if (scattererIndex < 0) throw new ComputationError(`no site built for scatterer ${scattererElement.symbol}`);
  const { cluster, channels, kInt } = stage;
  const absorber = stage.radial[0];
  const scatterer = stage.radial[scattererIndex];
  const shifts = siteShifts(stage, scattererIndex, settings);
  const lmaxAll = shifts.lmax;
  const lmaxAt = (k: number) => lmaxFor(settings, scatterer.radius, k);
  const kAu = (kA: number) => kA * BOHR_RADIUS_A;
  const kFermi = stage.kFermi;
  const imV0 = stage.v0Im;

  const splinesRe = shifts.re.map((v) => cubicSpline(coarse, v));
  const splinesIm = shifts.im.map((v) => cubicSpline(coarse, v));
  const centSplRe = stage.centralRe.map((v) => cubicSpline(coarse, v));
  const centSplIm = stage.centralIm.map((v) => cubicSpline(coarse, v));
  const weightSpl = stage.weight.map((v) => cubicSpline(coarse, v));
  const imV0Spl = cubicSpline(coarse, imV0);
  const kIntSpl = cubicSpline(coarse, kInt);
  const coefficients = channels.map((l) => translationCoefficients(l, lmaxAll));
  const distance = bohr(request.distance);

  const n = request.k.length;
  const amplitude = new Float64Array(n);
  const phase = new Float64Array(n);
  const lambda = new Float64Array(n);
  const planeWave = new Float64Array(n);
  const centralPhase = new Float64Array(n);
  const propagation = new Float64Array(n);
  const dRe = new Float64Array(lmaxAll + 1);
  const dIm = new Float64Array(lmaxAll + 1);
  for (let i = 0; i < n; i++) {
    const kA = Math.max(request.k[i], settings.kFloor);
    const kExp = kAu(kA);
    const kKinetic = splineAt(kIntSpl, kA);
    // free waves between the spheres: the interstitial wave number, relativistic if asked
    const k = freeWaveNumber(kKinetic, { relativistic: settings.relativistic });
    const lmax = lmaxAt(k);
    for (let l = 0; l <= lmax; l++) {
      dRe[l] = splineAt(splinesRe[l], kA);
      dIm[l] = splineAt(splinesIm[l], kA);
    }
    const parts = channels.map((l, c) => ({
      l,
      weight: splineAt(weightSpl[c], kA),
      centralRe: splineAt(centSplRe[c], kA),
      centralIm: splineAt(centSplIm[c], kA),
      amplitude: effectiveAmplitude(coefficients[c], dRe, dIm, lmax, k, distance),
    }));
    const [zr, zi] = combineChannels(parts);
    // chi = Im[Z e^{2 i k_int R}] / (k_int R^2) rewritten in the experimental k of the EXAFS model
    amplitude[i] = Math.hypot(zr, zi) * (kExp / k) * BOHR_RADIUS_A;
    phase[i] = Math.atan2(zi, zr);
    propagation[i] = 2 * (k - kExp) * distance;
    const [pr, pi] = planeWaveBackscattering(dRe, dIm, lmax, k);
    planeWave[i] = Math.hypot(pr, pi) * BOHR_RADIUS_A;
    centralPhase[i] = 2 * parts[0].centralRe;
    lambda[i] = meanFreePath(k, Math.min(0, splineAt(imV0Spl, kA)), gammaHartree) * BOHR_RADIUS_A;
  }
  // continuous phase, branch fixed at the top of the grid
  for (let i = n - 2; i >= 0; i--) {
    const d = phase[i] - phase[i + 1];
    phase[i] -= 2 * Math.PI * Math.round(d / (2 * Math.PI));
  }
  for (let i = 0; i < n; i++) phase[i] += propagation[i];
  for (const column of [amplitude, phase, lambda]) {
    for (let i = 0; i < n; i++) if (!Number.isFinite(column[i]) && !(column === lambda && column[i] === Infinity)) throw new ComputationError(`non-finite scattering function at k = ${request.k[i]} for ${request.absorber}-${request.scatterer}`);
  }
  return {
    k: Float64Array.from(request.k),
    amplitude,
    phase,
    meanFreePath: lambda,
    details: {
      absorberRadius: absorber.radius * BOHR_RADIUS_A,
      scattererRadius: scatterer.radius * BOHR_RADIUS_A,
      absorberNormanRadius: cluster.sites[0].normanRadius * BOHR_RADIUS_A,
      scattererNormanRadius: cluster.sites[scattererIndex].normanRadius * BOHR_RADIUS_A,
      groundStateInterstitialEv: cluster.groundStateInterstitial * HARTREE_EV,
      planeWaveAmplitude: planeWave,
      centralPhase,
      lmaxUsed: lmaxAll,
      environment: resolveEnvironment(request, settings).given ? 'given' : 'default',
      fermiAboveInterstitialEv: settings.energyZero === 'fermi' ? (0.5 * kFermi * kFermi) * HARTREE_EV : 0,
    },
  };
}
