/**
 * Ground-state electron configurations for Z = 1..96 and the core-hole (final-state)
 * configuration of an absorber.
 *
 * Ground states: subshells filled in the Madelung (n + l, then n) order, with the known
 * exceptions of the neutral-atom ground states written out below. The exceptions are the
 * ground-state configurations tabulated in the NIST Atomic Spectra Database and the CRC
 * Handbook of Chemistry and Physics ("Electron configuration of neutral atoms in the ground
 * state"), from memory. Fractional occupations are allowed everywhere (spherically averaged atom).
 *
 * Core hole (final-state rule; e.g. Rehr and Albers, Rev. Mod. Phys. 72, 621 (2000)):
 * one electron leaves the core level of the edge (K: 1s, L1: 2s, L2 and L3: 2p; without
 * spin-orbit the two 2p levels are one) and one electron is added to the lowest unoccupied or
 * partly filled valence level, chosen by the Z + 1 analogy (see screeningSubshell), so the atom
 * stays neutral and its valence screens the hole.
 */
import { InputError } from '../../core/errors';

/** Occupation of one (n, l) subshell. */
export interface OrbitalOccupation {
  /** Principal quantum number, >= l + 1. */
  n: number;
  /** Orbital angular momentum quantum number. */
  l: number;
  /** Number of electrons, 0 <= occupation <= 2 (2l + 1); fractional allowed. */
  occupation: number;
}

/** Core-hole edges shellrank knows. */
export type CoreHoleEdge = 'K' | 'L1' | 'L2' | 'L3';

/** Largest atomic number with a tabulated configuration. */
export const MAX_ATOMIC_NUMBER = 96;

/** Subshells in Madelung order up to 7p (enough for Z <= 118). */
const MADELUNG_ORDER: ReadonlyArray<readonly [number, number]> = (() => {
  const out: Array<[number, number]> = [];
  for (let nPlusL = 1; nPlusL <= 8; nPlusL++) {
    for (let n = 1; n <= nPlusL; n++) {
      const l = nPlusL - n;
      if (l < n && l <= 3) out.push([n, l]);
    }
  }
  return out;
})();

/**
 * Ground-state exceptions to Madelung filling: the outer subshells that differ, as
 * [n, l, occupation] triples that replace the Madelung values of the same subshells
 * (subshells not listed keep their Madelung occupation). From memory, see the module header.
 */
const EXCEPTIONS: Readonly<Record<number, ReadonlyArray<readonly [number, number, number]>>> = {
  24: [[3, 2, 5], [4, 0, 1]], // Cr 3d5 4s1
  29: [[3, 2, 10], [4, 0, 1]], // Cu 3d10 4s1
  41: [[4, 2, 4], [5, 0, 1]], // Nb 4d4 5s1
  42: [[4, 2, 5], [5, 0, 1]], // Mo 4d5 5s1
  44: [[4, 2, 7], [5, 0, 1]], // Ru 4d7 5s1
  45: [[4, 2, 8], [5, 0, 1]], // Rh 4d8 5s1
  46: [[4, 2, 10], [5, 0, 0]], // Pd 4d10
  47: [[4, 2, 10], [5, 0, 1]], // Ag 4d10 5s1
  57: [[4, 3, 0], [5, 2, 1]], // La 5d1 6s2
  58: [[4, 3, 1], [5, 2, 1]], // Ce 4f1 5d1 6s2
  64: [[4, 3, 7], [5, 2, 1]], // Gd 4f7 5d1 6s2
  78: [[5, 2, 9], [6, 0, 1]], // Pt 4f14 5d9 6s1
  79: [[5, 2, 10], [6, 0, 1]], // Au 4f14 5d10 6s1
  89: [[5, 3, 0], [6, 2, 1]], // Ac 6d1 7s2
  90: [[5, 3, 0], [6, 2, 2]], // Th 6d2 7s2
  91: [[5, 3, 2], [6, 2, 1]], // Pa 5f2 6d1 7s2
  92: [[5, 3, 3], [6, 2, 1]], // U 5f3 6d1 7s2
  93: [[5, 3, 4], [6, 2, 1]], // Np 5f4 6d1 7s2
  96: [[5, 3, 7], [6, 2, 1]], // Cm 5f7 6d1 7s2
};

/** Capacity of an (n, l) subshell without spin-orbit splitting. */
export function subshellCapacity(l: number): number {
  return 2 * (2 * l + 1);
}

function madelungIndex(n: number, l: number): number {
  return MADELUNG_ORDER.findIndex(([nn, ll]) => nn === n && ll === l);
}

/** Sorts subshells by n, then l (the usual way configurations are written). */
function sortByShell(orbitals: OrbitalOccupation[]): OrbitalOccupation[] {
  return orbitals.sort((a, b) => a.n - b.n || a.l - b.l);
}

/**
 * Ground-state configuration of the neutral atom.
 * @param z atomic number, integer 1..96 (InputError otherwise).
 * @returns occupied subshells sorted by n then l (no zero occupations), summing to z electrons.
 */
export function groundStateConfiguration(z: number): OrbitalOccupation[] {
  if (!Number.isInteger(z) || z < 1 || z > MAX_ATOMIC_NUMBER) {
    throw new InputError(`atomic number must be an integer 1-${MAX_ATOMIC_NUMBER}, got ${z}`, { key: 'z' });
  }
  const occupation = new Map<string, OrbitalOccupation>();
  let remaining = z;
  for (const [n, l] of MADELUNG_ORDER) {
    if (remaining <= 0) break;
    const take = Math.min(remaining, subshellCapacity(l));
    occupation.set(`${n},${l}`, { n, l, occupation: take });
    remaining -= take;
  }
  for (const [n, l, occ] of EXCEPTIONS[z] ?? []) occupation.set(`${n},${l}`, { n, l, occupation: occ });
  const out = [...occupation.values()].filter((o) => o.occupation > 0);
  return sortByShell(out);
}

/** The core level (n, l) emptied by an edge. */
export function coreLevelOf(edge: CoreHoleEdge): { n: number; l: number } {
  switch (edge) {
    case 'K':
      return { n: 1, l: 0 };
    case 'L1':
      return { n: 2, l: 0 };
    case 'L2':
    case 'L3':
      return { n: 2, l: 1 };
  }
}

/**
 * The valence subshell that receives the screening electron of a core hole in atom `z`: the
 * subshell that gains most electrons from the ground state of Z to that of Z + 1 (the Z + 1
 * analogy of the final state: the lowest unoccupied or partly filled valence level, with the
 * tabulated exceptions respected, e.g. La 5d rather than 4f, Pt 5d rather than 6s); ties go to the
 * earlier subshell in Madelung order. For Z = 96 (no Z + 1 in the table) the first subshell in
 * Madelung order that is not full.
 */
export function screeningSubshell(z: number): { n: number; l: number } {
  const here = groundStateConfiguration(z);
  if (z + 1 <= MAX_ATOMIC_NUMBER) {
    const next = groundStateConfiguration(z + 1);
    let best: { n: number; l: number; gain: number; order: number } | null = null;
    for (const o of next) {
      const before = here.find((h) => h.n === o.n && h.l === o.l)?.occupation ?? 0;
      const gain = o.occupation - before;
      const order = madelungIndex(o.n, o.l);
      if (gain > 0 && (best === null || gain > best.gain || (gain === best.gain && order < best.order))) {
        best = { n: o.n, l: o.l, gain, order };
      }
    }
    if (best) return { n: best.n, l: best.l };
  }
  for (const [n, l] of MADELUNG_ORDER) {
    const occ = here.find((h) => h.n === n && h.l === l)?.occupation ?? 0;
    if (occ < subshellCapacity(l)) return { n, l };
  }
  throw new InputError(`no free valence level in atom Z = ${z}`, { key: 'coreHole' });
}

/**
 * Final-state (core-hole) configuration: one electron fewer in the core level of `edge`, one
 * more in the screening subshell of {@link screeningSubshell}; when that subshell is already full
 * in `configuration` (a custom configuration), in the next subshell after it, in Madelung order,
 * that has room.
 * @param configuration the initial configuration (usually the ground state of z); not modified.
 * @param z atomic number (selects the screening subshell).
 * @returns a new configuration with the same electron count, sorted by n then l.
 * @throws InputError when the core level holds less than one electron.
 */
export function coreHoleConfiguration(
  configuration: readonly OrbitalOccupation[],
  edge: CoreHoleEdge,
  z: number,
): OrbitalOccupation[] {
  const core = coreLevelOf(edge);
  const out = configuration.map((o) => ({ ...o }));
  const hole = out.find((o) => o.n === core.n && o.l === core.l);
  if (!hole || hole.occupation < 1) {
    throw new InputError(
      `a ${edge} core hole needs at least one electron in the ${subshellName(core.n, core.l)} level, which holds ${hole?.occupation ?? 0}`,
      { key: 'coreHole' },
    );
  }
  hole.occupation -= 1;
  const target = screeningSubshell(z);
  let remaining = 1;
  for (let k = madelungIndex(target.n, target.l); k < MADELUNG_ORDER.length && remaining > 0; k++) {
    const [n, l] = MADELUNG_ORDER[k];
    let entry = out.find((o) => o.n === n && o.l === l);
    const room = subshellCapacity(l) - (entry?.occupation ?? 0);
    if (room <= 0) continue;
    if (!entry) {
      entry = { n, l, occupation: 0 };
      out.push(entry);
    }
    const add = Math.min(room, remaining);
    entry.occupation += add;
    remaining -= add;
  }
  if (remaining > 0) throw new InputError('no free valence level for the core-hole electron', { key: 'coreHole' });
  return sortByShell(out);
}

/** Symbolic subshell name, e.g. "3d". */
export function subshellName(n: number, l: number): string {
  return `${n}${'spdfghi'[l] ?? `(l=${l})`}`;
}
