/**
 * Diagnostics of the first-principles chain for the three first shells of
 * bench/measured-first-shell.ts (crystals in ./first-shell-lib): muffin-tin and Norman radii, the
 * ground-state interstitial level, the Fermi-level estimate E_F - V_0, and the mean slope over
 * k 3-14 1/Å of the total phase and of its parts (central 2 delta_1; the rest = scatterer arg F
 * + propagation 2 (k_int - k) R - pi), with values at k = 4, 8, 12. A phase-slope error delta
 * (rad Å) moves a fitted distance by about delta / 2. A measuring tool.
 * Run: npx tsx bench/first-shell-diagnostics.ts [--settings JSON]
 */
import { shellsOfStructure } from '../src/paths/index';
import { computeFirstPrinciples, DEFAULT_FIRST_PRINCIPLES_SETTINGS, solveAtomIntegrals, type AtomSource } from '../src/scatter/first-principles';
import type { AtomIntegrals } from '../src/scatter/muffin-tin';
import { cubic, SAMPLES } from './first-shell-lib';

const args = process.argv.slice(2);
const si = args.indexOf('--settings');
const settings = { ...DEFAULT_FIRST_PRINCIPLES_SETTINGS, ...(si >= 0 ? JSON.parse(args[si + 1]) : {}) };
const atomCache = new Map<string, AtomIntegrals>();
const atoms: AtomSource = (z, hole) => {
  const key = `${z} ${hole}`;
  if (!atomCache.has(key)) atomCache.set(key, solveAtomIntegrals(z, hole));
  return atomCache.get(key)!;
};
const k = new Float64Array(281).map((_, j) => 0.5 + j * 0.05);
const index = (x: number) => Math.round((x - 0.5) / 0.05);
function slope(y: Float64Array, a: number, b: number): number {
  let n = 0, sx = 0, sy = 0, sxx = 0, sxy = 0;
  for (let j = 0; j < k.length; j++) {
    if (k[j] < a || k[j] > b) continue;
    n++; sx += k[j]; sy += y[j]; sxx += k[j] * k[j]; sxy += k[j] * y[j];
  }
  return (n * sxy - sx * sy) / (n * sxx - sx * sx);
}
const round = (x: number, d: number) => Number(x.toFixed(d));
for (const sample of SAMPLES) {
  const ps = shellsOfStructure(cubic(sample.a, sample.sites), { absorber: { element: sample.absorber }, radius: 6, edge: 'K' });
  const p = ps.paths[0];
  const res = computeFirstPrinciples({ absorber: ps.absorber, scatterer: p.scatterer, edge: 'K', distance: p.r, k, environment: ps.environment }, settings, atoms);
  const d = res.details;
  const rest = res.phase.map((v, j) => v - d.centralPhase[j]);
  console.log(JSON.stringify({
    sample: sample.name,
    r: round(p.r, 4),
    muffinTin: [round(d.absorberRadius, 3), round(d.scattererRadius, 3)],
    norman: [round(d.absorberNormanRadius, 3), round(d.scattererNormanRadius, 3)],
    v0GroundEv: round(d.groundStateInterstitialEv, 2),
    fermiAboveV0Ev: round(d.fermiAboveInterstitialEv, 2),
    slope: { total: round(slope(res.phase, 3, 14), 4), central: round(slope(d.centralPhase, 3, 14), 4), rest: round(slope(rest, 3, 14), 4) },
    phaseAt4_8_12: [4, 8, 12].map((x) => round(res.phase[index(x)], 3)),
    centralAt4_8_12: [4, 8, 12].map((x) => round(d.centralPhase[index(x)], 3)),
    amplitudeAt4_8_12: [4, 8, 12].map((x) => round(res.amplitude[index(x)], 3)),
    lambdaAt4_8_12: [4, 8, 12].map((x) => round(res.meanFreePath[index(x)], 2)),
  }));
}
