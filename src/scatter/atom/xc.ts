/**
 * Local-density exchange-correlation for a spin-unpolarised electron gas, in hartree atomic units.
 *
 * Exchange: the Dirac (Slater) exchange of the homogeneous electron gas with the Kohn-Sham
 * coefficient, eps_x = -(3/4) (3 rho / pi)^(1/3), v_x = (4/3) eps_x
 * (Dirac, Proc. Cambridge Phil. Soc. 26, 376 (1930); Kohn and Sham, Phys. Rev. 140, A1133 (1965)).
 *
 * Correlation: the Vosko-Wilk-Nusair Pade fit to the Ceperley-Alder correlation energy, the
 * paramagnetic form usually called "VWN5" (Vosko, Wilk and Nusair, Can. J. Phys. 58, 1200 (1980),
 * with their paramagnetic parameters). With x = sqrt(r_s),
 * X(x) = x^2 + b x + c and Q = sqrt(4c - b^2):
 *
 *   eps_c = A { ln(x^2/X) + (2b/Q) atan(Q/(2x+b))
 *               - (b x0 / X(x0)) [ ln((x-x0)^2/X) + (2(b+2x0)/Q) atan(Q/(2x+b)) ] },
 *   v_c   = eps_c - (r_s/3) d eps_c / d r_s = eps_c - (x/6) d eps_c / dx.
 *
 * A = 0.0621814 / 2 hartree (the paper gives 0.0621814 rydberg), x0 = -0.10498, b = 3.72744,
 * c = 12.9352. This is the LDA of the NIST atomic reference data (Kotochigova, Levine, Shirley,
 * Stiles and Clark, Phys. Rev. A 55, 191 (1997)).
 */

/** Legend: rs = Wigner-Seitz radius (bohr), x = sqrt(rs). */
const VWN_A = 0.0310907;
const VWN_X0 = -0.10498;
const VWN_B = 3.72744;
const VWN_C = 12.9352;
const VWN_Q = Math.sqrt(4 * VWN_C - VWN_B * VWN_B);
const VWN_X_X0 = VWN_X0 * VWN_X0 + VWN_B * VWN_X0 + VWN_C;
const VWN_BX0_OVER_X_X0 = (VWN_B * VWN_X0) / VWN_X_X0;

/** (3/pi)^(1/3), the Dirac exchange-potential prefactor. */
const DIRAC_POTENTIAL_FACTOR = Math.cbrt(3 / Math.PI);
/** (3/(4 pi))^(1/3): r_s = this * rho^(-1/3). */
const RS_FACTOR = Math.cbrt(3 / (4 * Math.PI));

/** Densities below this (electrons per bohr^3) are treated as vacuum: eps_xc = v_xc = 0. */
export const XC_DENSITY_FLOOR = 1e-30;

/**
 * LDA exchange-correlation energy per electron and potential at one density.
 *
 * @param rho electron density in electrons per bohr^3 (spin-unpolarised). Values at or below
 *   {@link XC_DENSITY_FLOOR}, negative values and NaN give zeros (vacuum).
 * @returns `energyDensity`: eps_xc(rho), the exchange-correlation energy per electron in hartree
 *   (so the energy is the integral of rho * eps_xc); `potential`: v_xc = d(rho eps_xc)/d rho in hartree.
 */
export function ldaExchangeCorrelation(rho: number): { energyDensity: number; potential: number } {
  if (!(rho > XC_DENSITY_FLOOR)) return { energyDensity: 0, potential: 0 };
  const out = { energyDensity: 0, potential: 0 };
  ldaPointInto(rho, out);
  return out;
}

/** Same as {@link ldaExchangeCorrelation} but writes into `out` (no allocation). */
function ldaPointInto(rho: number, out: { energyDensity: number; potential: number }): void {
  const cbrtRho = Math.cbrt(rho);
  const vx = -DIRAC_POTENTIAL_FACTOR * cbrtRho;
  const ex = 0.75 * vx;
  const rs = RS_FACTOR / cbrtRho;
  const x = Math.sqrt(rs);
  const X = x * x + VWN_B * x + VWN_C;
  const twoXb = 2 * x + VWN_B;
  const atanTerm = Math.atan(VWN_Q / twoXb);
  const xm = x - VWN_X0;
  const ec =
    VWN_A *
    (Math.log((x * x) / X) +
      ((2 * VWN_B) / VWN_Q) * atanTerm -
      VWN_BX0_OVER_X_X0 * (Math.log((xm * xm) / X) + ((2 * (VWN_B + 2 * VWN_X0)) / VWN_Q) * atanTerm));
  const denom = VWN_Q * VWN_Q + twoXb * twoXb;
  const decDx =
    VWN_A *
    (2 / x -
      twoXb / X -
      (4 * VWN_B) / denom -
      VWN_BX0_OVER_X_X0 * (2 / xm - twoXb / X - (4 * (VWN_B + 2 * VWN_X0)) / denom));
  const vc = ec - (x / 6) * decDx;
  out.energyDensity = ex + ec;
  out.potential = vx + vc;
}

/**
 * LDA over a whole density array.
 * @param density rho_i in electrons per bohr^3.
 * @returns arrays of eps_xc and v_xc (hartree), same length as `density`.
 */
export function ldaOnGrid(density: Float64Array): { energyDensity: Float64Array; potential: Float64Array } {
  const n = density.length;
  const energyDensity = new Float64Array(n);
  const potential = new Float64Array(n);
  const point = { energyDensity: 0, potential: 0 };
  for (let i = 0; i < n; i++) {
    const rho = density[i];
    if (!(rho > XC_DENSITY_FLOOR)) continue;
    ldaPointInto(rho, point);
    energyDensity[i] = point.energyDensity;
    potential[i] = point.potential;
  }
  return { energyDensity, potential };
}
