/**
 * Photoelectron mean free path from the imaginary part of its energy.
 *
 * In the interstitial the photoelectron has energy E = k^2/2 + V_0 with V_0 = Re V_0 + i Im V_0
 * (Im V_0 < 0 from the losses), and the final state decays with the core-hole lifetime, which adds
 * + i Gamma/2 to the kinetic energy (Gamma = core-level width, FWHM; Krause and Oliver, J. Phys.
 * Chem. Ref. Data 8, 329 (1979), through the element table). The complex momentum is then
 *   p^2 = 2 (E - V_0 + i Gamma/2) = k^2 + i (2 |Im V_0| + Gamma)     (hartree atomic units),
 * and a wave e^{i p r} = e^{i Re p r} e^{-Im p r}. The EXAFS amplitude of a path of length 2R
 * carries e^{-2 R Im p} = e^{-2R/lambda}, so
 *   lambda(k) = 1 / Im p,  Im p = sqrt((|p^2| - k^2) / 2),
 * which for small losses is lambda ~ 2k / (2|Im V_0| + Gamma) (e.g. Lee, Citrin, Eisenberger and
 * Kincaid, Rev. Mod. Phys. 53, 769 (1981), for the lambda = k / Gamma-type relation).
 */

/**
 * Mean free path (bohr) at interstitial wave number k (1/bohr), with the imaginary interstitial level
 * imV0 (hartree, <= 0) and core-hole width gamma (hartree, FWHM). Infinity without losses.
 */
export function meanFreePath(k: number, imV0: number, gamma: number): number {
  const b = 2 * Math.abs(imV0) + Math.max(gamma, 0);
  if (b === 0) return Infinity;
  const a = k * k;
  // Im sqrt(a + ib) = b / (2 Re sqrt) = sqrt((|z| - a)/2), computed stably
  const mod = Math.hypot(a, b);
  const imP = a > 0 ? b / Math.sqrt(2 * (mod + a)) : Math.sqrt((mod - a) / 2);
  return 1 / imP;
}
