/**
 * Thermal disorder (MSRD, sigma^2) of an absorber-scatterer pair from phonon models.
 *
 * Both follow sigma^2 = (hbar / 2 mu) * integral dw rho_R(w) / w * coth(hbar w / 2 k_B T),
 * with mu the reduced mass of the pair (Sevillano, Meuth and Rehr, Phys. Rev. B 20, 4908 (1979)).
 * - Einstein: rho_R = delta(w - w_E), so sigma^2 = hbar^2 / (2 mu k_B theta_E) coth(theta_E / 2T).
 * - Correlated Debye: rho_R(w) = (3 w^2 / w_D^3) [1 - sin(w R / c) / (w R / c)] for w < w_D, with
 *   w_D = c k_D and k_D = (6 pi^2 n)^(1/3), n the atomic number density. With x = w / w_D:
 *   sigma^2 = hbar^2 / (2 mu k_B theta_D) * integral_0^1 dx 3x [1 - sinc(x k_D R)] coth(x theta_D / 2T).
 * As R -> infinity the bracket tends to 1 and sigma^2 tends to twice the single-atom projected
 * Debye mean-square displacement, the uncorrelated limit.
 */
import { HBAR2_OVER_KB_AMU_A2_K } from '../core/constants';
import { InputError } from '../core/errors';
import { coth } from '../numeric/special';
import { integrate } from '../numeric/quadrature';

/** Reduced mass (amu) of two masses (amu). */
export function reducedMass(m1: number, m2: number): number {
  return (m1 * m2) / (m1 + m2);
}

function checkTemperatures(model: string, characteristic: number, temperature: number): void {
  if (!(characteristic > 0) || !Number.isFinite(characteristic)) throw new InputError(`the ${model} temperature must be positive, got ${characteristic} K`);
  if (!(temperature >= 0) || !Number.isFinite(temperature)) throw new InputError(`the sample temperature must be >= 0 K, got ${temperature} K`);
}

/**
 * Einstein-model sigma^2 (Å^2) for a pair of reduced mass `mu` (amu) at temperature T (K),
 * Einstein temperature thetaE (K). At T = 0 it is the zero-point value hbar^2 / (2 mu k_B thetaE).
 */
export function einsteinMsrd(mu: number, thetaE: number, temperature: number): number {
  checkTemperatures('Einstein', thetaE, temperature);
  const zeroPoint = HBAR2_OVER_KB_AMU_A2_K / (2 * mu * thetaE);
  if (temperature === 0) return zeroPoint;
  return zeroPoint * coth(thetaE / (2 * temperature));
}

/**
 * Correlated-Debye sigma^2 (Å^2) for a pair of reduced mass `mu` (amu) at distance R (Å) in a
 * solid of atomic number density `density` (atoms / Å^3), Debye temperature thetaD (K), at T (K).
 */
export function correlatedDebyeMsrd(mu: number, thetaD: number, temperature: number, distance: number, density: number): number {
  checkTemperatures('Debye', thetaD, temperature);
  if (!(distance > 0)) throw new InputError(`the pair distance must be positive, got ${distance} Å`);
  if (!(density > 0)) throw new InputError(`the atomic density must be positive, got ${density} / Å^3`);
  const kD = Math.cbrt(6 * Math.PI * Math.PI * density);
  const kR = kD * distance;
  const half = thetaD / (2 * Math.max(temperature, 1e-12));
  const integrand = (x: number) => {
    if (x === 0) return 0;
    const y = x * kR;
    const oneMinusSinc = y < 1e-4 ? (y * y) / 6 : 1 - Math.sin(y) / y;
    const thermal = temperature === 0 ? 1 : coth(x * half);
    return 3 * x * oneMinusSinc * thermal;
  };
  return (HBAR2_OVER_KB_AMU_A2_K / (2 * mu * thetaD)) * integrate(integrand, 0, 1, 16);
}

/** Atomic number density (atoms / Å^3) of a periodic structure: atoms (weighted by occupancy) / volume. */
export function numberDensity(atomCountWeighted: number, cellVolume: number): number {
  return atomCountWeighted / Math.abs(cellVolume);
}
