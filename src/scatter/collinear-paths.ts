/**
 * Exact curved-wave (spherical-wave) factor Z of a collinear scattering path: every scatterer on
 * one line through the absorber (the focusing paths of close-packed solids, where the plane-wave
 * approximation of ./multiple-scattering is worst, because forward scattering through a near
 * neighbour happens in the near field of its spherical wave).
 *
 * Method: the one used for single scattering in ./amplitude, extended to a chain. With the line
 * as z axis every translation is along +-z, so m is conserved and only L'' = (l'', 0) enters the
 * addition theorem (Danos and Maximon, J. Math. Phys. 6, 766 (1965)): an outgoing wave h_l Y_lm
 * about one site is, about a site displaced by s D z (s = +-1), the regular wave
 *   sum_l' G^m_{l'l}(s D) j_l' Y_l'm,
 *   G^m_{l'l}(s D) = 4 pi sum_l'' i^{l' + l'' - l} C(lm; l'm, l''0) s^l'' sqrt((2l''+1)/4pi) h_l''(kD),
 * (Y_l''0(-z) = (-1)^l'' Y_l''0(z)). Each scatterer turns its regular components j_l' into
 * i t_l' h_l' (t = e^{i delta} sin delta). Starting from h_l Y_lm at the absorber (final-state
 * channel l = 1 of a K or L1 edge) and translating leg by leg, the regular component in channel
 * (l, m) back at the absorber is rho_m, and as in ./amplitude (isotropic sample, m summed)
 *   chi = (-1)^l Im[e^{2 i delta_c} e^{ikL} F] / (k R^2),
 *   F = (-1)^(l+1) k R^2 e^{-ikL} sum_m rho_m / (i (2l+1)),  R = L / 2,
 * so Z = (-1)^l e^{2 i delta_c} F. For one scatterer this is exactly ./amplitude's result (tested),
 * and for long legs it tends to the plane-wave Z of ./multiple-scattering (tested).
 */
import { gaunt } from './angular';
import { sphericalHankel } from './spherical-bessel';
import { tMatrix } from './phase-shifts';
import { iPower } from './amplitude';

/** Angular coefficients 4 pi C(lm; l'm, l''0) sqrt((2l''+1)/4pi) for |m| <= finalL, l, l' <= lmax. */
export interface ChainCoefficients {
  finalL: number;
  lmax: number;
  /** coefficient[m + finalL][l][l'][j], l'' = |l - l'| + 2j. */
  coefficient: Float64Array[][][];
}

export function chainCoefficients(finalL: number, lmax: number): ChainCoefficients {
  const coefficient: Float64Array[][][] = [];
  for (let m = -finalL; m <= finalL; m++) {
    const byFrom: Float64Array[][] = [];
    for (let l = 0; l <= lmax; l++) {
      const byTo: Float64Array[] = [];
      for (let lp = 0; lp <= lmax; lp++) {
        const lo = Math.abs(l - lp);
        const count = Math.floor((l + lp - lo) / 2) + 1;
        const row = new Float64Array(count);
        if (Math.abs(m) <= l && Math.abs(m) <= lp) {
          for (let j = 0; j < count; j++) {
            const lpp = lo + 2 * j;
            const c = (m % 2 === 0 ? 1 : -1) * gaunt(l, m, lp, -m, lpp, 0);
            row[j] = 4 * Math.PI * c * Math.sqrt((2 * lpp + 1) / (4 * Math.PI));
          }
        }
        byTo.push(row);
      }
      byFrom.push(byTo);
    }
    coefficient.push(byFrom);
  }
  return { finalL, lmax, coefficient };
}

/** One scatterer of a collinear chain: its phase shifts (l = 0..lmax) at this k. */
export interface ChainSite {
  lmax: number;
  deltaRe: ArrayLike<number>;
  deltaIm: ArrayLike<number>;
}

/**
 * Z (bohr, [re, im]) of a collinear path at wave number k (1/bohr): `displacements` are the signed
 * legs along the line (bohr; the first leaves the absorber, the last returns to it, they sum to 0),
 * `sites` the scatterers between them; central-atom phase shift delta_c = centralRe + i centralIm
 * of channel coefficients.finalL.
 */
export function collinearPathFactor(
  coefficients: ChainCoefficients,
  sites: readonly ChainSite[],
  displacements: readonly number[],
  k: number,
  centralRe: number,
  centralIm: number,
): [number, number] {
  const l = coefficients.finalL;
  const lmax = Math.max(l, ...sites.map((s) => s.lmax));
  if (lmax > coefficients.lmax) throw new RangeError(`chain coefficients built for lmax ${coefficients.lmax}, asked ${lmax}`);
  if (displacements.length !== sites.length + 1) throw new RangeError('a chain needs one more leg than scatterers');
  // h_l''(kD) e^{-ikD} for every distinct leg length
  const hankels = new Map<number, { re: Float64Array; im: Float64Array }>();
  for (const s of displacements) {
    const d = Math.abs(s);
    if (hankels.has(d)) continue;
    const x = k * d;
    const h = sphericalHankel(2 * lmax + 1, x);
    const c = Math.cos(x);
    const sn = Math.sin(x);
    const re = new Float64Array(h.re.length);
    const im = new Float64Array(h.re.length);
    for (let n = 0; n < re.length; n++) {
      re[n] = h.re[n] * c + h.im[n] * sn;
      im[n] = h.im[n] * c - h.re[n] * sn;
    }
    hankels.set(d, { re, im });
  }
  const lengthTotal = displacements.reduce((a, b) => a + Math.abs(b), 0);
  const half = lengthTotal / 2;
  let sumR = 0;
  let sumI = 0;
  let vr = new Float64Array(lmax + 1);
  let vi = new Float64Array(lmax + 1);
  let wr = new Float64Array(lmax + 1);
  let wi = new Float64Array(lmax + 1);
  for (let m = -l; m <= l; m++) {
    const table = coefficients.coefficient[m + l];
    vr.fill(0);
    vi.fill(0);
    vr[l] = 1; // h_l Y_lm leaving the absorber
    let fromMax = l;
    for (let leg = 0; leg < displacements.length; leg++) {
      const s = displacements[leg];
      const sign = s >= 0 ? 1 : -1;
      const h = hankels.get(Math.abs(s)) as { re: Float64Array; im: Float64Array };
      const last = leg === displacements.length - 1;
      const toMax = last ? l : sites[leg].lmax;
      wr.fill(0);
      wi.fill(0);
      for (let lp = last ? l : 0; lp <= toMax; lp++) {
        let ar = 0;
        let ai = 0;
        for (let lf = 0; lf <= fromMax; lf++) {
          if (vr[lf] === 0 && vi[lf] === 0) continue;
          const row = table[lf][lp];
          const lo = Math.abs(lf - lp);
          let gr = 0;
          let gi = 0;
          for (let j = 0; j < row.length; j++) {
            const coef = row[j];
            if (coef === 0) continue;
            const lpp = lo + 2 * j;
            const [pr, pi] = iPower(lp + lpp - lf);
            const sc = sign < 0 && lpp % 2 === 1 ? -coef : coef;
            gr += sc * (pr * h.re[lpp] - pi * h.im[lpp]);
            gi += sc * (pr * h.im[lpp] + pi * h.re[lpp]);
          }
          ar += gr * vr[lf] - gi * vi[lf];
          ai += gr * vi[lf] + gi * vr[lf];
        }
        wr[lp] = ar;
        wi[lp] = ai;
      }
      if (!last) {
        // scatter: regular j_l' -> i t_l' h_l'
        const site = sites[leg];
        for (let lp = 0; lp <= toMax; lp++) {
          const [tr, ti] = tMatrix(site.deltaRe[lp], site.deltaIm[lp]);
          const xr = wr[lp];
          const xi = wi[lp];
          // (x)(i t) = x (-ti + i tr)
          wr[lp] = xr * -ti - xi * tr;
          wi[lp] = xr * tr + xi * -ti;
        }
        for (let lp = toMax + 1; lp <= lmax; lp++) { wr[lp] = 0; wi[lp] = 0; }
        fromMax = toMax;
      }
      [vr, wr] = [wr, vr];
      [vi, wi] = [wi, vi];
    }
    sumR += vr[l];
    sumI += vi[l];
  }
  // F = (-1)^(l+1) k R^2 sum / (i (2l+1)); 1/i: (a + ib)(-i) = b - ia
  const fSign = l % 2 === 0 ? -1 : 1;
  const scale = (fSign * k * half * half) / (2 * l + 1);
  const fr = scale * sumI;
  const fi = -scale * sumR;
  // Z = (-1)^l e^{2 i delta_c} F
  const mod = Math.exp(-2 * centralIm) * (l % 2 === 0 ? 1 : -1);
  const er = mod * Math.cos(2 * centralRe);
  const ei = mod * Math.sin(2 * centralRe);
  return [er * fr - ei * fi, er * fi + ei * fr];
}

/**
 * Signed legs of a path if it is collinear (every scattering angle 0 or pi and the first and last
 * legs parallel or antiparallel), else null. Directions: +1 along the first leg.
 */
export function collinearDisplacements(legLengths: readonly number[], cosAngles: readonly number[], polarisation: number, tolerance = 1e-6): number[] | null {
  if (Math.abs(Math.abs(polarisation) - 1) > tolerance) return null;
  if (cosAngles.some((c) => Math.abs(Math.abs(c) - 1) > tolerance)) return null;
  let direction = 1;
  const out: number[] = [];
  legLengths.forEach((rho, i) => {
    out.push(direction * rho);
    if (i < cosAngles.length && cosAngles[i] < 0) direction = -direction;
  });
  const sum = out.reduce((a, b) => a + b, 0);
  return Math.abs(sum) < 1e-6 * legLengths.reduce((a, b) => a + b, 0) ? out : null;
}
