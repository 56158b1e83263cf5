/**
 * The `parametric` provider: closed-form, APPROXIMATE scattering functions for tests and
 * benchmarks. Not first-principles and not for analysing real data: its shapes only mimic the
 * qualitative trends of real backscattering (heavier scatterers scatter more strongly and peak at
 * higher k; the total phase falls roughly linearly with k, which moves |chi(R)| peaks below the
 * bond length; common practice, no source). The formulas, in 1/Å, Å and radians:
 *
 *   |f|(k)   = a (exp(-(k - kp)^2 / (2 w^2)) + 0.05),  a = 0.1 + 0.02 Zs^0.8,  kp = 2 + 0.09 Zs,  w = 3 + 0.03 Zs
 *   phase(k) = p0 - s k + 0.5 / max(k, 0.5),          p0 = 1 - 0.02 Zs,  s = 0.5 + 0.004 (Za + Zs)
 *   lambda(k) = 4 (hbar^2/2m) k / (G + 3 + 0.15 k^2)   (Å), G = core-hole width of the edge in eV
 *
 * The mean-free-path form follows from a complex energy E + i Gamma_tot / 2 with Gamma_tot the sum
 * of the core-hole width and an invented loss 3 + 0.15 k^2 eV: Im p = Gamma_tot / (4 (hbar^2/2m) k).
 */
import { HBAR2_OVER_2ME_EV_A2 } from '../core/constants';
import { hashOf } from '../core/hash';
import { elementBySymbol } from '../elements/index';
import { checkTable, type ScatteringProvider, type ScatteringRequest, type ScatteringTable } from './provider';

export function parametricTable(request: ScatteringRequest): ScatteringTable {
  const zs = elementBySymbol(request.scatterer).z;
  const absorber = elementBySymbol(request.absorber);
  const za = absorber.z;
  const hole = absorber.edges[request.edge]?.width ?? 1;
  const a = 0.1 + 0.02 * Math.pow(zs, 0.8);
  const kp = 2 + 0.09 * zs;
  const w = 3 + 0.03 * zs;
  const p0 = 1 - 0.02 * zs;
  const slope = 0.5 + 0.004 * (za + zs);
  const n = request.k.length;
  const amplitude = new Float64Array(n);
  const phase = new Float64Array(n);
  const meanFreePath = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const k = request.k[i];
    amplitude[i] = a * (Math.exp(-((k - kp) ** 2) / (2 * w * w)) + 0.05);
    phase[i] = p0 - slope * k + 0.5 / Math.max(k, 0.5);
    meanFreePath[i] = (4 * HBAR2_OVER_2ME_EV_A2 * Math.max(k, 0.05)) / (hole + 3 + 0.15 * k * k);
  }
  const settings = { absorber: request.absorber, scatterer: request.scatterer, edge: request.edge };
  return checkTable(
    {
      k: Float64Array.from(request.k),
      amplitude,
      phase,
      meanFreePath,
      info: { provider: 'parametric', approximate: true, settings, hash: hashOf({ provider: 'parametric', settings, k: request.k }).slice(0, 16) },
    },
    request,
  );
}

export const parametricProvider: ScatteringProvider = {
  name: 'parametric',
  describe: 'closed-form approximate functions, for tests and benchmarks only (not for real data)',
  approximate: true,
  compute: parametricTable,
};
