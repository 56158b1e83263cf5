/**
 * Hartree potential of a spherical charge density, from the radial Poisson equation in its
 * integral form (Gauss's law in shells):
 *
 *   v_H(r) = (4 pi / r) int_0^r rho(s) s^2 ds + 4 pi int_r^inf rho(s) s ds      (hartree, bohr)
 *
 * Both running integrals are taken in x = ln r with the fourth-order rule of ./grid
 * (cumulativeFromStart / cumulativeToEnd). The piece inside r0 is rho(r0) r0^3 / 3 (constant
 * density there); the density beyond the last point is taken as zero.
 */
import { cumulativeFromStart, cumulativeToEnd, type LogGrid } from './grid';

/**
 * @param grid the logarithmic grid.
 * @param density rho_i in electrons per bohr^3, length grid.n.
 * @returns v_H at the grid points in hartree (an electron's potential energy: positive).
 */
export function hartreePotential(grid: LogGrid, density: Float64Array): Float64Array {
  const { r, h, n } = grid;
  const inner = new Float64Array(n);
  const outer = new Float64Array(n);
  const g = new Float64Array(n);
  const fourPi = 4 * Math.PI;
  for (let i = 0; i < n; i++) g[i] = fourPi * density[i] * r[i] * r[i] * r[i];
  cumulativeFromStart(g, h, (fourPi * density[0] * r[0] * r[0] * r[0]) / 3, inner);
  for (let i = 0; i < n; i++) g[i] = fourPi * density[i] * r[i] * r[i];
  cumulativeToEnd(g, h, 0, outer);
  const v = new Float64Array(n);
  for (let i = 0; i < n; i++) v[i] = inner[i] / r[i] + outer[i];
  return v;
}
