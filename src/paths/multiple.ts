/**
 * Multiple-scattering paths around an absorber: the double-scattering (3-leg) paths
 * absorber -> i -> j -> absorber and the 4-leg "there and back" paths absorber -> i -> j -> i ->
 * absorber, with total length L <= 2 maxHalfLength, grouped by geometry with degeneracies.
 *
 * The path expansion of the photoelectron's Green's function (Rehr and Albers, Rev. Mod. Phys. 72,
 * 621 (2000), section II; Gurman, Binsted and Ross, J. Phys. C 17, 143 (1984) and 19, 1845 (1986)
 * for multiple scattering in the small-atom approximation) sums over every sequence of scatterers
 * that starts and ends at the absorber. This module keeps the two families that carry most of the
 * multiple-scattering signal of close-packed solids:
 * - triangles 0 -> i -> j -> 0 (in fcc metals the first-shell triangles, R_half = 1.5 d), and the
 *   collinear 0 -> i -> j -> 0 with i midway, where forward scattering through i focuses the wave;
 * - 0 -> i -> j -> i -> 0, whose collinear member (i midway between 0 and j) is the second-order
 *   focusing term: single scattering from j, twice the double scattering and this path together
 *   give the product structure (1 + x)^2 of the focused shell (see ../scatter/multiple-scattering).
 * Paths that scatter off the absorber itself (0 -> i -> 0 -> j -> 0) and longer paths are left out.
 *
 * Geometry of a path with legs rho_1..rho_n (propagation vectors, from the absorber back to it):
 * the scattering angle at each scatterer is the angle between the incoming and the outgoing leg
 * (0 = forward), and the K-edge polarisation factor of an isotropic sample is
 * 3 <(e.rho_1)(e.rho_n)> = rho_1_hat . rho_n_hat (the average of e_a e_b over directions is
 * delta_ab / 3), which is -1 for single scattering.
 *
 * Grouping: paths with the same species sequence, leg lengths equal within `tolerance` Å and
 * angle cosines equal within `cosTolerance` form one group; a path and its time reverse (the
 * same legs in reverse order) are the same group and both count in the degeneracy. Degeneracies
 * are averaged over absorber sites with the occupancy weights of ./pathset (the product of the
 * occupancies of the scatterers on the path). Common practice, no source, for the tolerances.
 */
import { InputError } from '../core/errors';
import type { Cluster } from '../structure/cluster';

/** One group of geometrically equivalent multiple-scattering paths. */
export interface MultiplePath {
  /** Stable id, e.g. "ms3.1" (3 legs, first such group by length). */
  id: string;
  /** Number of legs (3 or 4). */
  legs: 3 | 4;
  /** Scatterer species in the order visited. */
  species: string[];
  /** Leg lengths, Å, in the order travelled (first leg leaves the absorber). */
  legLengths: number[];
  /** Cosine of the scattering angle at each scatterer (1 = forward, -1 = backward). */
  cosAngles: number[];
  /** Polarisation factor rho_1_hat . rho_n_hat (K and L1 edges, isotropic sample). */
  polarisation: number;
  /** Half path length L / 2, Å (the R of the EXAFS equation). */
  halfLength: number;
  /** Number of paths in the group per absorber site (time reverses counted), may be fractional. */
  degeneracy: number;
}

export interface MultiplePathOptions {
  /** Largest half path length L / 2, Å. */
  maxHalfLength: number;
  /** Leg-length tolerance of the grouping, Å (default 0.01). */
  tolerance?: number;
  /** Angle-cosine tolerance of the grouping (default 0.01). */
  cosTolerance?: number;
  /** Include the 4-leg paths 0 -> i -> j -> i -> 0 (default true). */
  fourLeg?: boolean;
}

interface Accumulator { path: Omit<MultiplePath, 'id' | 'degeneracy'>; weight: number }

const norm = (x: number, y: number, z: number) => Math.sqrt(x * x + y * y + z * z);

/**
 * Enumerate and group the multiple-scattering paths of the clusters (one per absorber site; the
 * cluster radius must reach maxHalfLength, since no atom on such a path is farther than L / 2).
 * @returns groups sorted by half length, then legs; ids numbered per leg count.
 * @throws InputError for a bad length limit or a cluster smaller than it.
 */
export function multiplePaths(clusters: readonly Cluster[], options: MultiplePathOptions): MultiplePath[] {
  const { maxHalfLength } = options;
  if (!(maxHalfLength > 0) || !Number.isFinite(maxHalfLength)) throw new InputError(`the longest half path length must be a positive number of Å, got ${maxHalfLength}`);
  const tol = options.tolerance ?? 0.01;
  const cosTol = options.cosTolerance ?? 0.01;
  const fourLeg = options.fourLeg ?? true;
  const totalWeight = clusters.reduce((s, c) => s + c.absorber.weight, 0);
  if (clusters.length === 0) return [];
  if (!(totalWeight > 0)) throw new InputError('the absorber sites have zero total occupancy');
  const maxL = 2 * maxHalfLength + 1e-9;
  const groups = new Map<string, Accumulator>();
  const add = (species: string[], legs: number[], cos: number[], polarisation: number, weight: number) => {
    // canonical orientation: the smaller key of the path and its time reverse
    const forward = keyOf(species, legs, cos, polarisation, tol, cosTol);
    const backward = keyOf([...species].reverse(), [...legs].reverse(), [...cos].reverse(), polarisation, tol, cosTol);
    const key = forward <= backward ? forward : backward;
    const known = groups.get(key);
    if (known) { known.weight += weight; return; }
    const [s, l, c] = forward <= backward ? [species, legs, cos] : [[...species].reverse(), [...legs].reverse(), [...cos].reverse()];
    const halfLength = legs.reduce((a, b) => a + b, 0) / 2;
    groups.set(key, { path: { legs: legs.length as 3 | 4, species: s, legLengths: l, cosAngles: c, polarisation, halfLength }, weight });
  };
  for (const cluster of clusters) {
    if (cluster.radius + 1e-9 < maxHalfLength) {
      throw new InputError(`the cluster radius ${cluster.radius} Å is smaller than the longest half path length ${maxHalfLength} Å`, { key: '--radius' });
    }
    const n = cluster.distances.length;
    const o = cluster.offsets;
    const w0 = cluster.absorber.weight;
    for (let i = 0; i < n; i++) {
      const occI = cluster.occupancy[i];
      const r1 = cluster.distances[i];
      if (occI <= 0 || 2 * r1 > maxL) continue;
      const xi = o[3 * i], yi = o[3 * i + 1], zi = o[3 * i + 2];
      for (let j = 0; j < n; j++) {
        if (j === i) continue;
        const occJ = cluster.occupancy[j];
        if (occJ <= 0) continue;
        const dx = o[3 * j] - xi, dy = o[3 * j + 1] - yi, dz = o[3 * j + 2] - zi;
        const r2 = norm(dx, dy, dz);
        if (r2 < 0.1) continue; // two atoms on one site (mixed occupancy)
        const r3 = cluster.distances[j];
        // unit vectors: u1 = 0 -> i, u2 = i -> j, u3 = j -> 0
        const u1 = [xi / r1, yi / r1, zi / r1];
        const u2 = [dx / r2, dy / r2, dz / r2];
        const u3 = [-o[3 * j] / r3, -o[3 * j + 1] / r3, -o[3 * j + 2] / r3];
        const dot = (a: number[], b: number[]) => a[0] * b[0] + a[1] * b[1] + a[2] * b[2];
        const weight = w0 * occI * occJ;
        if (r1 + r2 + r3 <= maxL) {
          add([cluster.species[i], cluster.species[j]], [r1, r2, r3], [dot(u1, u2), dot(u2, u3)], dot(u1, u3), weight);
        }
        if (fourLeg && 2 * r1 + 2 * r2 <= maxL) {
          // 0 -> i -> j -> i -> 0: legs u1, u2, -u2, -u1; backscattering at j
          const back = [-u2[0], -u2[1], -u2[2]];
          const home = [-u1[0], -u1[1], -u1[2]];
          add([cluster.species[i], cluster.species[j], cluster.species[i]], [r1, r2, r2, r1], [dot(u1, u2), -1, dot(back, home)], -1, weight);
        }
      }
    }
  }
  const list = [...groups.values()]
    .map((g) => ({ ...g.path, degeneracy: g.weight / totalWeight }))
    .sort((a, b) => a.halfLength - b.halfLength || a.legs - b.legs || (a.species.join() < b.species.join() ? -1 : 1) || a.polarisation - b.polarisation);
  const counters = new Map<number, number>();
  return list.map((p) => {
    const c = (counters.get(p.legs) ?? 0) + 1;
    counters.set(p.legs, c);
    return { id: `ms${p.legs}.${c}`, ...p };
  });
}

function keyOf(species: string[], legs: number[], cos: number[], polarisation: number, tol: number, cosTol: number): string {
  const q = (x: number, t: number) => (t > 0 ? Math.round(x / t) : x).toString().padStart(8, '0');
  return [species.join(','), legs.map((x) => q(x, tol)).join(','), cos.map((x) => q(x + 1, cosTol)).join(','), q(polarisation + 1, cosTol)].join('|');
}
