/**
 * Curved-wave (spherical-wave) effective backscattering amplitude for single scattering, computed
 * exactly in the partial-wave (angular-momentum) basis; no small-atom or plane-wave approximation.
 *
 * Geometry: absorber at the origin, scatterer at R z. The photoelectron leaves the absorber in the
 * final-state channel L = (l, m) as the outgoing wave h_l(kr) Y_lm. About the scatterer it is
 * re-expanded in regular waves by the addition theorem for spherical waves (for |r'| < R,
 * e.g. Danos and Maximon, J. Math. Phys. 6, 766 (1965)):
 *   h_l Y_L(r' + d) = 4 pi sum_{L' L''} i^{l' + l'' - l} C(L; L', L'') j_l'(kr') Y_L'(r') h_l''(kd) Y_L''(d),
 *   C(L; L', L'') = ∫ Y_L Y*_L' Y*_L'' dΩ,
 * each regular component j_l' is scattered into j_l' + i t_l' h_l' (t = e^{i delta} sin delta), and
 * the scattered waves are translated back to the origin the same way (d = -R z). With d along z only
 * L'' = (l'', 0) contributes, m is conserved, and the two translations carry the same coefficient
 *   a_{l'}^{m} = 4 pi sum_l'' i^{l' + l'' - l} C(lm; l'm, l''0) sqrt((2l''+1)/4pi) h_l''(kR),
 * so the back-scattered regular amplitude in channel (l, m) is rho_m = sum_l' (a_l'^m)^2 i t_l'.
 * The Green's-function form of the golden rule (absorber Green's function plus the scattering term)
 * then gives, for an isotropic sample and a single final-state channel l,
 *   chi_l = (1 / (2l+1)) sum_m Re[ e^{2 i delta_l^c} rho_m ]
 *         = (-1)^l Im[ e^{2 i delta_l^c} e^{2ikR} F_l ] / (k R^2),
 *   F_l = (-1)^(l+1) k R^2 e^{-2ikR} sum_m rho_m / (i (2l+1)),
 * which tends to the plane-wave amplitude f(pi) = (1/k) sum_l (2l+1) (-1)^l t_l as kR -> infinity
 * (checked in the tests). For a pure s-wave scatterer and l = 1 it gives F = f (1 + i/(kR))^2.
 *
 * Edges: K and L1 (s core) -> final l = 1 only. L2 and L3 (p core) -> l = 2 and l = 0. For an
 * isotropic sample with the core m summed, the l = 0 / l = 2 cross term vanishes (the
 * polarisation-averaged dipole operator is rotationally invariant and so diagonal in l); the weights
 * are the angular factors sum |<l m| r_hat |1 m_c>|^2 = l_> / 3 per core m_c (Bethe and Salpeter,
 * Quantum Mechanics of One- and Two-Electron Atoms, the dipole sum rules), giving
 *   chi = (2 M_2^2 chi_2 + M_0^2 chi_0) / (2 M_2^2 + M_0^2)
 * with M_l the radial dipole matrix elements (supplied by the caller).
 */
import { gaunt } from './angular';
import { sphericalHankel } from './spherical-bessel';
import { tMatrix } from './phase-shifts';

/** Precomputed angular coefficients C(lm; l'm, l''0) sqrt((2l''+1)/4pi) for one final-state l. */
export interface TranslationCoefficients {
  finalL: number;
  lmax: number;
  /** coefficient[m + finalL][l'][j], j indexes l'' = |l' - l| + 2j. */
  coefficient: Float64Array[][];
}

export function translationCoefficients(finalL: number, lmax: number): TranslationCoefficients {
  const coefficient: Float64Array[][] = [];
  for (let m = -finalL; m <= finalL; m++) {
    const rows: Float64Array[] = [];
    for (let lp = 0; lp <= lmax; lp++) {
      const lo = Math.abs(lp - finalL);
      const count = Math.floor((lp + finalL - lo) / 2) + 1;
      const row = new Float64Array(count);
      for (let j = 0; j < count; j++) {
        const lpp = lo + 2 * j;
        // C(lm; l'm, l''0) = ∫ Y_lm Y*_l'm Y_l''0 = (-1)^m ∫ Y_lm Y_l',-m Y_l''0
        const c = (m % 2 === 0 ? 1 : -1) * gaunt(finalL, m, lp, -m, lpp, 0);
        row[j] = c * Math.sqrt((2 * lpp + 1) / (4 * Math.PI));
      }
      rows.push(row);
    }
    coefficient.push(rows);
  }
  return { finalL, lmax, coefficient };
}

/** i^n as [re, im]. */
export function iPower(n: number): [number, number] {
  switch (((n % 4) + 4) % 4) {
    case 0: return [1, 0];
    case 1: return [0, 1];
    case 2: return [-1, 0];
    default: return [0, -1];
  }
}

/**
 * Effective curved-wave amplitude F_l (bohr, complex [re, im]) of one scatterer with phase
 * shifts delta (re/im arrays, l' = 0..lmax) at distance R (bohr) and wave number k (1/bohr), for
 * final-state channel `coefficients.finalL`. Optionally a plane-wave flag replaces h_l''(kR) by its
 * asymptotic form (for comparisons).
 */
export function effectiveAmplitude(coefficients: TranslationCoefficients, deltaRe: ArrayLike<number>, deltaIm: ArrayLike<number>, lmax: number, k: number, distance: number): [number, number] {
  const l = coefficients.finalL;
  if (lmax > coefficients.lmax) throw new RangeError(`translation coefficients built for lmax ${coefficients.lmax}, asked ${lmax}`);
  const x = k * distance;
  const hank = sphericalHankel(lmax + l + 1, x);
  // e^{-ikR} factored into each translation, so that sums stay O(1/(kR))
  const c = Math.cos(x);
  const s = Math.sin(x);
  const nH = lmax + l + 2;
  const hr = new Float64Array(nH);
  const hi = new Float64Array(nH);
  for (let n = 0; n < nH; n++) {
    // h e^{-ix}
    hr[n] = hank.re[n] * c + hank.im[n] * s;
    hi[n] = hank.im[n] * c - hank.re[n] * s;
  }
  let sumR = 0;
  let sumI = 0;
  for (let m = -l; m <= l; m++) {
    const rows = coefficients.coefficient[m + l];
    for (let lp = 0; lp <= lmax; lp++) {
      const row = rows[lp];
      const lo = Math.abs(lp - l);
      let ar = 0;
      let ai = 0;
      for (let j = 0; j < row.length; j++) {
        const coef = row[j];
        if (coef === 0) continue;
        const lpp = lo + 2 * j;
        const [pr, pi] = iPower(lp + lpp - l);
        // coef * i^n * h
        const vr = coef * (pr * hr[lpp] - pi * hi[lpp]);
        const vi = coef * (pr * hi[lpp] + pi * hr[lpp]);
        ar += vr;
        ai += vi;
      }
      ar *= 4 * Math.PI;
      ai *= 4 * Math.PI;
      // a^2 * i t
      const a2r = ar * ar - ai * ai;
      const a2i = 2 * ar * ai;
      const [tr, ti] = tMatrix(deltaRe[lp], deltaIm[lp]);
      // i t = -ti + i tr
      sumR += a2r * -ti - a2i * tr;
      sumI += a2r * tr + a2i * -ti;
    }
  }
  // f = (-1)^(l+1) k R^2 sum / (i (2l+1)); 1/i = -i: (a + ib)(-i) = b - i a
  const sign = l % 2 === 0 ? -1 : 1;
  const scale = (sign * k * distance * distance) / (2 * l + 1);
  return [scale * sumI, -scale * sumR];
}

/** Plane-wave backscattering amplitude f(pi) = (1/k) sum (2l+1)(-1)^l t_l, bohr, [re, im]. */
export function planeWaveBackscattering(deltaRe: ArrayLike<number>, deltaIm: ArrayLike<number>, lmax: number, k: number): [number, number] {
  let fr = 0;
  let fi = 0;
  for (let l = 0; l <= lmax; l++) {
    const [tr, ti] = tMatrix(deltaRe[l], deltaIm[l]);
    const w = (l % 2 === 0 ? 1 : -1) * (2 * l + 1);
    fr += w * tr;
    fi += w * ti;
  }
  return [fr / k, fi / k];
}

/** Angular weights of the final-state channels of an edge, before the radial matrix elements. */
export function edgeChannels(edge: 'K' | 'L1' | 'L2' | 'L3'): number[] {
  return edge === 'K' || edge === 'L1' ? [1] : [2, 0];
}

/**
 * Combine the channels into the one complex number Z with chi = Im[Z e^{2ikR}] / (k R^2):
 * Z = sum_l w_l (-1)^l e^{2 i delta_l^c} F_l, with w_l normalised weights
 * (K, L1: w_1 = 1; L2,3: w_2 = 2 M_2^2 / (2 M_2^2 + M_0^2), w_0 = M_0^2 / (2 M_2^2 + M_0^2)).
 */
export function combineChannels(channels: { l: number; weight: number; centralRe: number; centralIm: number; amplitude: [number, number] }[]): [number, number] {
  let zr = 0;
  let zi = 0;
  for (const ch of channels) {
    const mod = Math.exp(-2 * ch.centralIm);
    const er = mod * Math.cos(2 * ch.centralRe);
    const ei = mod * Math.sin(2 * ch.centralRe);
    const [fr, fi] = ch.amplitude;
    const sign = ch.l % 2 === 0 ? 1 : -1;
    zr += ch.weight * sign * (er * fr - ei * fi);
    zi += ch.weight * sign * (er * fi + ei * fr);
  }
  return [zr, zi];
}
