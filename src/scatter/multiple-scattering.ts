/**
 * Scattering functions of multiple-scattering paths in the plane-wave (small-atom) approximation,
 * from the first-principles phase shifts of ./first-principles (same cluster potentials, central-
 * atom phase, interstitial wave number and mean free path as the single-scattering tables).
 *
 * Method (plane-wave path expansion; Gurman, Binsted and Ross, J. Phys. C 19, 1845 (1986); Rehr
 * and Albers, Rev. Mod. Phys. 72, 621 (2000), section II, whose curved-wave theory this simplifies):
 * between scatterers the photoelectron travels as a plane wave e^{ik rho} / rho, and a scatterer
 * turning it through the angle theta multiplies it by the plane-wave amplitude
 *   f(theta) = (1/k) sum_l (2l+1) e^{i delta_l} sin delta_l P_l(cos theta).
 * For a K or L1 edge (final state l = 1) of an isotropic sample a path with legs rho_1..rho_n and
 * scatterers 1..n-1 contributes
 *   chi = Im[ P prod_i f_i(theta_i) e^{2 i delta_1^c} e^{ikL} ] / (k rho_1 rho_2 ... rho_n),
 * P = rho_1_hat . rho_n_hat (../paths/multiple). For single scattering (n = 2, theta = pi, P = -1)
 * this is -Im[f(pi) e^{2 i delta_c} e^{2ikR}] / (kR^2), the plane-wave limit of ./amplitude. In the
 * form of the EXAFS model, chi = |Z| / (k R^2) sin(kL + arg Z) with R = L / 2, so
 *   Z = P prod_i f_i(theta_i) e^{2 i delta_1^c} R^2 / (rho_1 ... rho_n),
 * amplitude |Z| (with the central-atom loss |e^{2 i delta_c}|), phase arg Z (continuous in k), the
 * mean free path of the single-scattering tables (losses over the whole length L = 2R), and the
 * same rewriting from the interstitial to the experimental wave number as ./first-principles.
 *
 * Collinear check (our derivation, tested): for absorber, i and j on a line with i midway
 * (rho = d each), single scattering from j, the two double-scattering paths through i and the
 * 4-leg path 0 -> i -> j -> i -> 0 sum to Z_SS(j) (1 + x)^2 with x = 2 f_i(0) / d: the forward
 * scattering of the intervening atom multiplies the far shell's wave on the way out and back.
 *
 * Collinear paths (every angle 0 or pi: the focusing paths through the first shell) are computed
 * instead with the exact curved-wave chain of ./collinear-paths, because forward scattering is
 * where plane waves fail most: for fcc Cu at 2d = 5.11 Å the curved-wave phase of the path
 * 0 -> A -> B -> 0 is about 1.2-1.5 rad above the plane-wave one between 6 and 12 1/Å, and
 * about twice that for the 4-leg path (measured with this code). `curvedCollinear: false`
 * gives the plane-wave value for them too (for comparisons).
 *
 * APPROXIMATION, said plainly: every non-collinear path (triangles, bent paths) uses plane waves
 * in place of the curved (spherical) waves of the exact theory; only the polarisation-averaged
 * K/L1 (l = 1) channel is done. Their amplitudes and phases carry errors of the order of the
 * curved-wave corrections of single scattering at the same leg lengths (tenths of a radian at low
 * k for 2.5 Å legs). Use these paths to tell arrangements apart (with their msrd refined), not
 * to read coordination numbers or distances from multiple-scattering peaks. Only K and L1 edges.
 */
import { BOHR_RADIUS_A, HARTREE_EV } from '../core/constants';
import { ComputationError, InputError } from '../core/errors';
import { elementBySymbol } from '../elements/index';
import { legendre } from './angular';
import {
  clusterStageFor,
  DEFAULT_FIRST_PRINCIPLES_SETTINGS,
  lmaxFor,
  siteShifts,
  solveAtomIntegrals,
  type AtomSource,
  type ClusterMemo,
  type FirstPrinciplesSettings,
} from './first-principles';
import { meanFreePath } from './mean-free-path';
import { freeWaveNumber, tMatrix } from './phase-shifts';
import type { ScatteringRequest } from './provider';
import { cubicSpline, splineAt } from './spline';
import { chainCoefficients, collinearDisplacements, collinearPathFactor } from './collinear-paths';

/** The geometry of one multiple-scattering path (as ../paths/multiple gives it). */
export interface PathGeometry {
  /** Scatterer species in the order visited (n - 1 of them for n legs). */
  species: readonly string[];
  /** Leg lengths, Å (n). */
  legLengths: readonly number[];
  /** Cosine of the scattering angle at each scatterer (n - 1). */
  cosAngles: readonly number[];
  /** rho_1_hat . rho_n_hat. */
  polarisation: number;
}

/** Functions of one path on the request grid: chi = amplitude / (k R^2) e^{-2R/lambda} sin(2kR + phase), R = L/2. */
export interface PathFunctions {
  amplitude: Float64Array;
  phase: Float64Array;
  meanFreePath: Float64Array;
}

/**
 * Plane-wave amplitude f(theta) (bohr when k is in 1/bohr) from phase shifts delta_l = re + i im,
 * l = 0..lmax, as [re, im]. `p` is a scratch array of at least lmax + 1 values.
 */
export function planeWaveScattering(deltaRe: ArrayLike<number>, deltaIm: ArrayLike<number>, lmax: number, k: number, cosTheta: number, p: Float64Array = new Float64Array(lmax + 1)): [number, number] {
  legendre(lmax, cosTheta, p);
  let fr = 0;
  let fi = 0;
  for (let l = 0; l <= lmax; l++) {
    const [tr, ti] = tMatrix(deltaRe[l], deltaIm[l]);
    fr += (2 * l + 1) * tr * p[l];
    fi += (2 * l + 1) * ti * p[l];
  }
  return [fr / k, fi / k];
}

/**
 * Z of one path at one k (see the module header), bohr, [re, im]: P prod f_i e^{2 i delta_c}
 * R^2 / prod rho, with f_i already evaluated at the path's angles and lengths in bohr.
 */
export function pathFactor(polarisation: number, amplitudes: readonly [number, number][], legsBohr: readonly number[], centralRe: number, centralIm: number): [number, number] {
  let zr = polarisation;
  let zi = 0;
  for (const [fr, fi] of amplitudes) {
    const r = zr * fr - zi * fi;
    zi = zr * fi + zi * fr;
    zr = r;
  }
  const half = legsBohr.reduce((a, b) => a + b, 0) / 2;
  let scale = half * half;
  for (const rho of legsBohr) scale /= rho;
  const mod = Math.exp(-2 * centralIm) * scale;
  const er = mod * Math.cos(2 * centralRe);
  const ei = mod * Math.sin(2 * centralRe);
  return [zr * er - zi * ei, zr * ei + zi * er];
}

/**
 * Scattering functions of multiple-scattering paths for one absorber and environment: plane
 * waves, except exact curved waves for collinear paths unless `options.curvedCollinear` is false
 * (see the module header). The request's scatterer and distance only name a shell whose
 * environment entry exists (use the first single-scattering shell). With a `memo`, the cluster
 * stage is shared with the single-scattering tables of the same structure.
 * @returns one set of functions per path, on the request's k grid (amplitude Å, phase rad, lambda Å).
 * @throws InputError for edges other than K and L1 or unknown species.
 */
export function multipleScatteringFunctions(
  request: ScatteringRequest,
  paths: readonly PathGeometry[],
  settings: FirstPrinciplesSettings = DEFAULT_FIRST_PRINCIPLES_SETTINGS,
  atoms: AtomSource = solveAtomIntegrals,
  memo?: ClusterMemo,
  options: { curvedCollinear?: boolean } = {},
): PathFunctions[] {
  if (request.edge !== 'K' && request.edge !== 'L1') {
    throw new InputError(`multiple-scattering paths are computed for K and L1 edges only, not ${request.edge}`, { key: '--multiple-scattering' });
  }
  if (paths.length === 0) return [];
  const absorberElement = elementBySymbol(request.absorber);
  const edgeData = absorberElement.edges[request.edge];
  if (!edgeData) throw new InputError(`${absorberElement.symbol} has no ${request.edge} edge in the element table`, { key: 'edge' });
  const gammaHartree = (edgeData.width ?? 0) / HARTREE_EV;
  const stage = clusterStageFor(request, settings, atoms, memo);
  const { coarse } = stage;
  const kIntSpl = cubicSpline(coarse, stage.kInt);
  const imV0Spl = cubicSpline(coarse, stage.v0Im);
  const centRe = cubicSpline(coarse, stage.centralRe[0]);
  const centIm = cubicSpline(coarse, stage.centralIm[0]);
  // phase shifts of every species on the paths, splined
  const speciesList = [...new Set(paths.flatMap((p) => p.species.map((s) => elementBySymbol(s).symbol)))];
  const sites = new Map<string, { lmaxAll: number; radius: number; re: ReturnType<typeof cubicSpline>[]; im: ReturnType<typeof cubicSpline>[] }>();
  for (const symbol of speciesList) {
    const index = stage.siteOf.get(symbol) ?? -1;
    if (index < 0) throw new ComputationError(`no site built for scatterer ${symbol}`);
    const shifts = siteShifts(stage, index, settings);
    sites.set(symbol, {
      lmaxAll: shifts.lmax,
      radius: stage.radial[index].radius,
      re: shifts.re.map((v) => cubicSpline(coarse, v)),
      im: shifts.im.map((v) => cubicSpline(coarse, v)),
    });
  }
  const n = request.k.length;
  const out: PathFunctions[] = paths.map(() => ({ amplitude: new Float64Array(n), phase: new Float64Array(n), meanFreePath: new Float64Array(n) }));
  const legsBohr = paths.map((p) => p.legLengths.map((x) => x / BOHR_RADIUS_A));
  const lengthBohr = legsBohr.map((legs) => legs.reduce((a, b) => a + b, 0));
  const lmaxTop = Math.max(...[...sites.values()].map((s) => s.lmaxAll));
  const scratch = new Float64Array(lmaxTop + 1);
  // phase shifts of each species at the current k
  const current = new Map<string, { lmax: number; deltaRe: Float64Array; deltaIm: Float64Array }>(
    speciesList.map((symbol) => [symbol, { lmax: 0, deltaRe: new Float64Array(lmaxTop + 1), deltaIm: new Float64Array(lmaxTop + 1) }]));
  // collinear paths get the exact curved-wave factor (./collinear-paths)
  const collinear = paths.map((p, j) => (options.curvedCollinear === false ? null : collinearDisplacements(legsBohr[j], p.cosAngles, p.polarisation)));
  const chain = collinear.some((c) => c !== null) ? chainCoefficients(1, lmaxTop) : null;
  const symbols = paths.map((p) => p.species.map((s) => elementBySymbol(s).symbol));
  const propagation = paths.map(() => new Float64Array(n));
  for (let i = 0; i < n; i++) {
    const kA = Math.max(request.k[i], settings.kFloor);
    const kExp = kA * BOHR_RADIUS_A;
    const k = freeWaveNumber(splineAt(kIntSpl, kA), { relativistic: settings.relativistic });
    const cRe = splineAt(centRe, kA);
    const cIm = splineAt(centIm, kA);
    const lambda = meanFreePath(k, Math.min(0, splineAt(imV0Spl, kA)), gammaHartree) * BOHR_RADIUS_A;
    for (const [symbol, site] of sites) {
      const now = current.get(symbol) as { lmax: number; deltaRe: Float64Array; deltaIm: Float64Array };
      now.lmax = Math.min(site.lmaxAll, lmaxFor(settings, site.radius, k));
      for (let l = 0; l <= now.lmax; l++) {
        now.deltaRe[l] = splineAt(site.re[l], kA);
        now.deltaIm[l] = splineAt(site.im[l], kA);
      }
    }
    // f(theta) per species and angle, computed once per k
    const memoF = new Map<string, [number, number]>();
    const amplitudeOf = (symbol: string, cos: number): [number, number] => {
      const key = `${symbol}|${cos.toFixed(9)}`;
      const hit = memoF.get(key);
      if (hit) return hit;
      const now = current.get(symbol) as { lmax: number; deltaRe: Float64Array; deltaIm: Float64Array };
      const f = planeWaveScattering(now.deltaRe, now.deltaIm, now.lmax, k, Math.max(-1, Math.min(1, cos)), scratch);
      memoF.set(key, f);
      return f;
    };
    paths.forEach((p, j) => {
      const line = collinear[j];
      const [zr, zi] = line && chain
        ? collinearPathFactor(chain, symbols[j].map((sym) => current.get(sym) as { lmax: number; deltaRe: Float64Array; deltaIm: Float64Array }), line, k, cRe, cIm)
        : pathFactor(p.polarisation, symbols[j].map((sym, a) => amplitudeOf(sym, p.cosAngles[a])), legsBohr[j], cRe, cIm);
      out[j].amplitude[i] = Math.hypot(zr, zi) * (kExp / k) * BOHR_RADIUS_A;
      out[j].phase[i] = Math.atan2(zi, zr);
      out[j].meanFreePath[i] = lambda;
      propagation[j][i] = (k - kExp) * lengthBohr[j];
    });
  }
  out.forEach((f, j) => {
    const phase = f.phase;
    for (let i = n - 2; i >= 0; i--) phase[i] -= 2 * Math.PI * Math.round((phase[i] - phase[i + 1]) / (2 * Math.PI));
    for (let i = 0; i < n; i++) {
      phase[i] += propagation[j][i];
      if (!Number.isFinite(f.amplitude[i]) || !Number.isFinite(phase[i])) throw new ComputationError(`non-finite multiple-scattering function at k = ${request.k[i]}`);
    }
  });
  return out;
}
