/**
 * First-principles single-scattering functions for one absorber-scatterer pair, end to end:
 *
 *   1. self-consistent LDA atoms (./atom): a core-hole atom for the absorber (the edge's core level
 *      emptied, one extra valence electron) and ground-state atoms for every other species;
 *   2. muffin-tin cluster potentials from overlapped densities (./muffin-tin, Mattheiss; Norman radii
 *      with a settable overlap; interstitial level = surface average);
 *   3. the photoelectron's energy-dependent complex potential (./exchange: Dirac-Hara real part,
 *      plasmon-pole losses; ./site-potential);
 *   4. complex phase shifts on a coarse k grid (./phase-shifts), continued in k and splined;
 *   5. the exact curved-wave effective amplitude at the actual distance and the central-atom phase
 *      (./amplitude), combined over the edge's final-state channels;
 *   6. the mean free path from Im V_0 and the core-hole width (./mean-free-path).
 *
 * The result is what the EXAFS model needs: amplitude |Z| (Å), total phase arg Z (continuous) and
 * lambda (Å) on the requested k grid, where chi = Im[Z e^{2ikR}] / (kR^2), Z = sum_l w_l (-1)^l
 * e^{2 i delta_l^c} f_eff,l, i.e. phase = 2 delta_c - l pi + arg f_eff for a single channel. The
 * amplitude includes |e^{2 i delta_c}| (central-atom losses) when the absorber's delta is complex.
 *
 * Below `kFloor` (default 0.5 1/Å) the functions are held at their kFloor values: the curved-wave
 * amplitude diverges as k -> 0 and EXAFS theory does not apply there.
 *
 * L2,3 channel weights use radial dipole matrix elements M_l = ∫ R_2p(r) r R_l(r) r^2 dr inside the
 * absorber sphere with R_l the continuum solutions and R_2p a hydrogenic 2p orbital with Slater's
 * screened charge Z - 4.15 (Slater, Phys. Rev. 36, 57 (1930)), an approximation noted in the settings.
 */
import { BOHR_RADIUS_A, HARTREE_EV } from '../core/constants';
import { ComputationError, InputError } from '../core/errors';
import { elementBySymbol, type EdgeName } from '../elements/index';
import { solveAtom } from './atom/index';
import { combineChannels, edgeChannels, effectiveAmplitude, planeWaveBackscattering, translationCoefficients } from './amplitude';
import { fermiMomentum, selfEnergy, type ExchangeModel, type LossModel, type SelfEnergyOptions } from './exchange';
import { meanFreePath } from './mean-free-path';
import { atomIntegrals, buildMuffinTins, type AtomIntegrals, type MuffinTinCluster, type SiteNeighbour, type SiteSpec } from './muffin-tin';
import { phaseShifts, phaseShiftWorkspace, regularSolution, type SpherePotential } from './phase-shifts';
import type { NeighbourSpec, ScatteringRequest } from './provider';
import { interstitialLevel, lossTable, siteRadial, sphereAtEnergy, type SiteRadial } from './site-potential';
import { cubicSpline, splineAt } from './spline';

/** Bump when the physics or numerics change, so cached results are not reused. */
export const FIRST_PRINCIPLES_REVISION = 1;

/** Settings of the first-principles calculation, all with defaults. */
export interface FirstPrinciplesSettings {
  /** Fractional muffin-tin overlap of touching spheres. */
  overlap: number;
  /** Real part of the photoelectron self-energy. */
  exchange: ExchangeModel;
  /** Loss model (imaginary part). */
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
   * Zero of the k scale: 'fermi' (default) puts k = 0 at the Fermi level, estimated from the
   * electron gas of the interstitial density, E_F - V_0 = k_F^2/2 + Sigma(k_F) - Sigma(p);
   * 'interstitial' puts it at the interstitial level (k = interstitial wave number).
   */
  energyZero: 'fermi' | 'interstitial';
}

export const DEFAULT_FIRST_PRINCIPLES_SETTINGS: FirstPrinciplesSettings = {
  overlap: 0.1,
  exchange: 'dirac-hara',
  losses: 'plasmon-pole',
  coreHole: true,
  defaultCoordination: 12,
  gridStep: 0.01,
  coarseStep: 0.1,
  kFloor: 0.5,
  lmaxExtra: 5,
  lmaxCap: 70,
  energyZero: 'fermi',
};

/** Source of atomic densities (so callers can cache atoms across requests). */
export type AtomSource = (z: number, coreHole: EdgeName | null) => AtomIntegrals;

/** Solve atoms directly (no caching). */
export function solveAtomIntegrals(z: number, coreHole: EdgeName | null): AtomIntegrals {
  const atom = solveAtom({ z, coreHole });
  if (!atom.converged) throw new ComputationError(`the LDA atom Z = ${z}${coreHole ? ` with a ${coreHole} core hole` : ''} did not converge`);
  return atomIntegrals({ z: atom.z, r: atom.r, density: atom.density });
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
  const zEff = Math.max(z - 4.15, 1);
  return r * Math.exp((-zEff * r) / 2);
}

/**
 * Compute first-principles scattering functions for one request (no disk cache; atoms from `atoms`).
 */
export function computeFirstPrinciples(request: ScatteringRequest, settings: FirstPrinciplesSettings = DEFAULT_FIRST_PRINCIPLES_SETTINGS, atoms: AtomSource = solveAtomIntegrals): FirstPrinciplesResult {
  checkRequest(request);
  const absorberElement = elementBySymbol(request.absorber);
  const scattererElement = elementBySymbol(request.scatterer);
  const edgeData = absorberElement.edges[request.edge];
  if (!edgeData) throw new InputError(`${absorberElement.symbol} has no ${request.edge} edge in the element table`, { key: 'edge' });
  const gammaHartree = (edgeData.width ?? 0) / HARTREE_EV;
  const env = resolveEnvironment(request, settings);
  const bohr = (a: number) => a / BOHR_RADIUS_A;
  const symbolOf = (s: string) => elementBySymbol(s).symbol;
  const ground = (symbol: string) => atoms(elementBySymbol(symbol).z, null);
  const neighbours = (list: NeighbourSpec[]): SiteNeighbour[] =>
    list.map((nb) => ({ species: symbolOf(nb.species), atom: ground(nb.species), distance: bohr(nb.distance), count: nb.count }));

  const absorberAtom = settings.coreHole ? atoms(absorberElement.z, request.edge) : ground(absorberElement.symbol);
  const absorberSite: SiteSpec = { species: absorberElement.symbol, atom: absorberAtom, neighbours: neighbours(env.absorber), weight: 1 };
  const specs: SiteSpec[] = [absorberSite];
  const abundance = (species: string) => env.absorber.filter((nb) => symbolOf(nb.species) === species).reduce((a, nb) => a + nb.count, 0);
  let scattererIndex = -1;
  for (const [species, list] of Object.entries(env.scatterers)) {
    const symbol = symbolOf(species);
    if (specs.some((s, i) => i > 0 && s.species === symbol)) continue;
    if (symbol === scattererElement.symbol) scattererIndex = specs.length;
    specs.push({ species: symbol, atom: ground(symbol), neighbours: neighbours(list), weight: Math.max(abundance(symbol), 1) });
  }
  if (scattererIndex < 0) throw new ComputationError(`no site built for scatterer ${scattererElement.symbol}`);
  const cluster: MuffinTinCluster = buildMuffinTins(specs, { overlap: settings.overlap });
  const radial: SiteRadial[] = cluster.sites.map((s) => siteRadial(s, settings.gridStep));
  const absorber = radial[0];
  const scatterer = radial[scattererIndex];
  const selfEnergyOptions: SelfEnergyOptions = { exchange: settings.exchange, losses: settings.losses };

  // coarse grid in 1/Å
  const kMaxRequest = request.k.length ? request.k[request.k.length - 1] : settings.kFloor;
  const kTop = Math.max(kMaxRequest, settings.kFloor) + 2 * settings.coarseStep;
  const nCoarse = Math.max(4, Math.ceil((kTop - settings.kFloor) / settings.coarseStep) + 1);
  const coarse = new Float64Array(nCoarse);
  for (let i = 0; i < nCoarse; i++) coarse[i] = settings.kFloor + i * settings.coarseStep;
  const kAu = (kA: number) => kA * BOHR_RADIUS_A;
  const lmaxAt = (k: number) => Math.min(settings.lmaxCap, Math.ceil(k * scatterer.radius) + settings.lmaxExtra);
  const lmaxAll = lmaxAt(1.05 * Math.hypot(kAu(coarse[nCoarse - 1]), fermiMomentum(cluster.interstitialDensity)));
  const channels = edgeChannels(request.edge);
  const scatRe = Array.from({ length: lmaxAll + 1 }, () => new Float64Array(nCoarse));
  const scatIm = Array.from({ length: lmaxAll + 1 }, () => new Float64Array(nCoarse));
  const centRe = channels.map(() => new Float64Array(nCoarse));
  const centIm = channels.map(() => new Float64Array(nCoarse));
  const weight = channels.map(() => new Float64Array(nCoarse));
  const imV0 = new Float64Array(nCoarse);
  const kInt = new Float64Array(nCoarse);
  // interstitial wave number for experimental k (relative to E_F): k_int^2 = 2 (E - V_0(E))
  const interstitialDensity = cluster.interstitialDensity;
  const kFermi = fermiMomentum(interstitialDensity);
  const sigmaAverage = (k: number) => radial.reduce((a, s) => a + s.weight * selfEnergy(s.surfaceDensity, k, { ...selfEnergyOptions, losses: 'none' })[0], 0);
  const sigmaFermi = sigmaAverage(0);
  const interstitialWaveNumber = (kExp: number) =>
    settings.energyZero === 'interstitial' ? kExp : Math.sqrt(kExp * kExp + kFermi * kFermi + 2 * (sigmaFermi - sigmaAverage(kExp)));
  const workAbs = phaseShiftWorkspace(absorber.r.length);
  const workSc = phaseShiftWorkspace(scatterer.r.length);
  const potAbs: SpherePotential = { radius: absorber.radius, h: absorber.h, r: absorber.r, re: new Float64Array(absorber.r.length), im: new Float64Array(absorber.r.length) };
  const potSc: SpherePotential = { radius: scatterer.radius, h: scatterer.h, r: scatterer.r, re: new Float64Array(scatterer.r.length), im: new Float64Array(scatterer.r.length) };
  for (let i = 0; i < nCoarse; i++) {
    const kExp = kAu(coarse[i]);
    const losses = lossTable(kExp, selfEnergyOptions);
    const v0 = interstitialLevel(radial, kExp, selfEnergyOptions, losses);
    imV0[i] = v0[1];
    const k = interstitialWaveNumber(kExp);
    kInt[i] = k;
    sphereAtEnergy(absorber, k, selfEnergyOptions, v0, losses, potAbs);
    const lmaxCentral = Math.max(...channels);
    const central = phaseShifts(potAbs, k, lmaxCentral, workAbs);
    const matrix: number[] = [];
    channels.forEach((l, c) => {
      centRe[c][i] = central.re[l];
      centIm[c][i] = central.im[l];
      if (channels.length > 1) {
        const sol = regularSolution(potAbs, k, l, { re: central.re[l], im: central.im[l] });
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
    sphereAtEnergy(scatterer, k, selfEnergyOptions, v0, losses, potSc);
    const lmax = lmaxAt(k);
    const shifts = phaseShifts(potSc, k, lmax, workSc);
    for (let l = 0; l <= lmax; l++) {
      scatRe[l][i] = shifts.re[l];
      scatIm[l][i] = shifts.im[l];
    }
  }
  for (let l = 0; l <= lmaxAll; l++) continueModPi(scatRe[l]);
  centRe.forEach(continueModPi);

  const splinesRe = scatRe.map((v) => cubicSpline(coarse, v));
  const splinesIm = scatIm.map((v) => cubicSpline(coarse, v));
  const centSplRe = centRe.map((v) => cubicSpline(coarse, v));
  const centSplIm = centIm.map((v) => cubicSpline(coarse, v));
  const weightSpl = weight.map((v) => cubicSpline(coarse, v));
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
    const k = splineAt(kIntSpl, kA);
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
      environment: env.given ? 'given' : 'default',
      fermiAboveInterstitialEv: settings.energyZero === 'fermi' ? (0.5 * kFermi * kFermi) * HARTREE_EV : 0,
    },
  };
}
