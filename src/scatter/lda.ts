/**
 * The ground-state local-density exchange-correlation potential used for cluster potentials,
 * taken from the atom module (Slater exchange with the VWN5 correlation fit; see src/scatter/atom).
 */
import { ldaExchangeCorrelation } from './atom/index';

/** LDA exchange-correlation potential v_xc(rho), hartree, for rho in electrons/bohr^3. */
export function ldaExchangeCorrelationPotential(rho: number): number {
  return ldaExchangeCorrelation(rho).potential;
}
