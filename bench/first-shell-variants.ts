/**
 * The measured first-shell fit (bench/measured-first-shell.ts, same crystals, reduction, model,
 * window and free parameters) with variants of the absorber's final-state atom, to measure how the
 * core-hole treatment moves the fitted distances. Variants (--absorber):
 *   screened   one electron fewer in the core level, one more in the Z + 1 valence level (default);
 *   ground     no core hole (initial-state potential);
 *   z+1        the ground-state atom of Z + 1 (equivalent-core approximation) as the absorber's potential;
 *   half       half a core electron removed and half an electron added to the screening level;
 *   screen:NL  the screening electron in subshell NL (e.g. 4p, 3d) instead of the Z + 1 level.
 * A measuring tool. Run: npx tsx bench/first-shell-variants.ts --absorber z+1 [--settings JSON]
 */
import { solveAtom, groundStateConfiguration, screeningSubshell } from '../src/scatter/atom/index';
import type { OrbitalOccupation } from '../src/scatter/atom/index';
import { computeFirstPrinciples, DEFAULT_FIRST_PRINCIPLES_SETTINGS, ATOM_SCF_TOLERANCE, type AtomSource } from '../src/scatter/first-principles';
import { atomIntegrals, type AtomIntegrals } from '../src/scatter/muffin-tin';
import { checkTable, type ScatteringProvider } from '../src/scatter/provider';
import { fitShells, measuredChi, SAMPLES, shellsAndTables } from './first-shell-lib';

const args = process.argv.slice(2);
const option = (name: string) => { const i = args.indexOf(name); return i >= 0 ? args[i + 1] : undefined; };
const variant = option('--absorber') ?? 'screened';
const settings = { ...DEFAULT_FIRST_PRINCIPLES_SETTINGS, ...JSON.parse(option('--settings') ?? '{}') };
const freeC3 = args.includes('--c3');

const cache = new Map<string, AtomIntegrals>();
function integrals(key: string, make: () => ReturnType<typeof solveAtom>, zNucleus?: number): AtomIntegrals {
  let a = cache.get(key);
  if (!a) {
    const atom = make();
    a = atomIntegrals({ z: zNucleus ?? atom.z, r: atom.r, density: atom.density });
    cache.set(key, a);
  }
  return a;
}
const coreHoleConfig = (z: number, coreRemoved: number, target: { n: number; l: number }): OrbitalOccupation[] => {
  const c = groundStateConfiguration(z).map((o) => ({ ...o }));
  const core = c.find((o) => o.n === 1 && o.l === 0)!;
  core.occupation -= coreRemoved;
  let t = c.find((o) => o.n === target.n && o.l === target.l);
  if (!t) { t = { n: target.n, l: target.l, occupation: 0 }; c.push(t); }
  t.occupation += coreRemoved;
  return c;
};
const atoms: AtomSource = (z, hole) => {
  if (hole === null || variant === 'screened') return integrals(`${z}${hole}`, () => solveAtom({ z, coreHole: hole, tolerance: ATOM_SCF_TOLERANCE }));
  if (hole !== 'K') throw new Error('K only');
  if (variant === 'ground') return integrals(`${z}null`, () => solveAtom({ z, coreHole: null, tolerance: ATOM_SCF_TOLERANCE }));
  if (variant === 'z+1') return integrals(`${z + 1}null`, () => solveAtom({ z: z + 1, coreHole: null, tolerance: ATOM_SCF_TOLERANCE }));
  if (variant === 'half') return integrals(`${z}half`, () => solveAtom({ z, configuration: coreHoleConfig(z, 0.5, screeningSubshell(z)), tolerance: ATOM_SCF_TOLERANCE }));
  const m = /^screen:(\d)([spdf])$/.exec(variant);
  if (m) {
    const target = { n: Number(m[1]), l: 'spdf'.indexOf(m[2]) };
    return integrals(`${z}${variant}`, () => solveAtom({ z, configuration: coreHoleConfig(z, 1, target), tolerance: ATOM_SCF_TOLERANCE }));
  }
  throw new Error(`unknown variant ${variant}`);
};
const provider: ScatteringProvider = {
  name: 'variant', describe: 'variant',
  compute(request) {
    const r = computeFirstPrinciples(request, settings, atoms);
    return checkTable({ k: r.k, amplitude: r.amplitude, phase: r.phase, meanFreePath: r.meanFreePath, info: { provider: 'variant', approximate: true, settings: {}, hash: '' } }, request);
  },
};
const out = SAMPLES.map((s) => {
  const { k, chi } = measuredChi(s);
  const { shells, tables } = shellsAndTables(s, provider);
  const f = fitShells(s, k, chi, shells, tables, { freeC3 });
  return `${s.name} dR=${f.dR >= 0 ? '+' : ''}${f.dR.toFixed(4)} s0sq=${f.s0sq.toFixed(3)} e0=${f.e0.toFixed(2)}${freeC3 ? ` c3=${f.c3.toExponential(2)}` : ''}`;
});
console.log(`absorber=${variant} ${JSON.stringify(option('--settings') ?? '')} ${out.join('  ')}`);
