/**
 * Self-consistent radial Kohn-Sham atoms in the local-density approximation (Slater exchange,
 * VWN5 correlation), non-relativistic or scalar-relativistic, with optional core hole.
 * Hartree atomic units throughout (energies in hartree, lengths in bohr).
 *
 * Methods and references are in the module headers: ./scf (SCF cycle, total energy),
 * ./radial (Numerov and Adams-Moulton bound states), ./poisson (Hartree), ./xc (LDA),
 * ./configuration (ground states Z = 1..96, core holes), ./grid (log grid), ./mixing (Anderson).
 *
 * The public contract is `solveAtom`, `groundStateConfiguration`, `ldaExchangeCorrelation` and
 * their types; the grid, Hartree, LDA-on-grid and bound-state helpers are exported too, for
 * building cluster potentials on the same log grid.
 */
export { solveAtom, RELATIVISTIC_FROM_Z } from './scf';
export type { AtomOptions, AtomOrbital, AtomResult, ResolvedAtomOptions } from './scf';
export {
  groundStateConfiguration,
  coreHoleConfiguration,
  screeningSubshell,
  coreLevelOf,
  subshellCapacity,
  subshellName,
  MAX_ATOMIC_NUMBER,
} from './configuration';
export type { OrbitalOccupation, CoreHoleEdge } from './configuration';
export { ldaExchangeCorrelation, ldaOnGrid, XC_DENSITY_FLOOR } from './xc';
export { defaultGridSettings, logGrid, integrate, integrateProduct, cumulativeFromStart, cumulativeToEnd } from './grid';
export type { LogGrid, LogGridSettings } from './grid';
export { hartreePotential } from './poisson';
export { solveBoundState, createRadialWorkspace } from './radial';
export type { BoundState, BoundStateRequest, RadialWorkspace } from './radial';
