/**
 * Absorber-centred clusters: for each absorber site, every atom (including periodic images when
 * the structure has a lattice) within a radius, with its offset and distance.
 *
 * Neighbour search: a cell list (linked bins) over fractional coordinates for periodic structures
 * and over the bounding box for finite clusters, so the cost is linear in the number of atoms
 * (Allen and Tildesley, Computer Simulation of Liquids, 2nd ed. (2017), section 5.3; common practice).
 * For a periodic cell, atom j is within R of the absorber only if its fractional separation along
 * axis i is at most R / d_i, where d_i = V / |a_j x a_k| is the spacing of the lattice planes
 * normal to axis i; the bins scanned follow from that bound, so small cells are covered by as many
 * periodic images as needed and large supercells by a few neighbouring bins.
 */
import { InputError } from '../core/errors';
import { canonicalSymbol } from '../elements/index';
import { cellVolume, invertCell, type Structure } from './structure';

/** How the absorber is chosen. */
export type AbsorberSelector =
  | { element: string }
  | { index: number }
  | { label: string };

export interface AbsorberSite {
  /** 0-based index of the atom in the structure. */
  index: number;
  species: string;
  label: string;
  position: [number, number, number];
  /** Weight of this site in a site average (its occupancy). */
  weight: number;
}

/** One absorber and its neighbours within `radius`, sorted by distance. */
export interface Cluster {
  absorber: AbsorberSite;
  radius: number;
  species: string[];
  /** Neighbour positions relative to the absorber, Å, 3 per neighbour. */
  offsets: Float64Array;
  distances: Float64Array;
  occupancy: Float64Array;
  /** Index of each neighbour's atom in the structure (images share the index). */
  sourceIndex: Int32Array;
}

export interface ClusterOptions {
  absorber: AbsorberSelector;
  /** Radius in Å (default 6). */
  radius?: number;
  /**
   * Atoms closer than this to the absorber (Å, default 0.1) are taken to share its site
   * (mixed occupancy) and are skipped.
   */
  siteTolerance?: number;
}

/** Indices of the absorber atoms picked by a selector; InputError when none match. */
export function selectAbsorbers(structure: Structure, selector: AbsorberSelector): number[] {
  const n = structure.species.length;
  const where = { file: structure.info.file };
  if ('index' in selector) {
    const i = selector.index;
    if (!Number.isInteger(i) || i < 0 || i >= n) {
      throw new InputError(`absorber index ${i} is outside 0..${n - 1}`, { ...where, key: '--absorber' });
    }
    return [i];
  }
  if ('label' in selector) {
    const out: number[] = [];
    for (let i = 0; i < n; i++) if (structure.labels[i] === selector.label) out.push(i);
    if (out.length === 0) throw new InputError(`no site labelled '${selector.label}'`, { ...where, key: '--absorber' });
    return out;
  }
  const symbol = canonicalSymbol(selector.element);
  if (!symbol) throw new InputError(`'${selector.element}' is not an element symbol`, { key: '--absorber' });
  const out: number[] = [];
  for (let i = 0; i < n; i++) if (structure.species[i] === symbol && structure.occupancy[i] > 0) out.push(i);
  if (out.length === 0) throw new InputError(`the structure has no ${symbol} atom`, { ...where, key: '--absorber' });
  return out;
}

/**
 * Parse an absorber option: "Cu" (element), "#12" or "12" (0-based index), or "label:Cu1"
 * (site label). A bare word that is not an element is taken as a site label.
 */
export function parseAbsorberSelector(text: string): AbsorberSelector {
  const t = text.trim();
  if (t === '') throw new InputError('the absorber is empty', { key: '--absorber' });
  if (t.startsWith('label:')) return { label: t.slice(6) };
  if (/^#?\d+$/.test(t)) return { index: Number(t.replace('#', '')) };
  if (canonicalSymbol(t)) return { element: t };
  return { label: t };
}

/** Which of the selected absorber sites a site average uses, and why. */
export interface AbsorberSelection {
  /** Indices of the absorber atoms used. */
  used: number[];
  /** Selected sites left out because their shells are cut by the cluster's surface. */
  excluded: number;
  /** True when no site had complete shells and the deepest one was used alone. */
  fallback: boolean;
  /** A warning for the user (null when every selected site was used). */
  warning: string | null;
}

/**
 * Search directions for the surface depth: the 26 directions of the faces, edges and corners of
 * a cube (exact for box-shaped cuts) and 240 spread over the sphere (Fibonacci lattice; common
 * practice, no source).
 */
function depthDirections(): Float64Array {
  const dirs: number[] = [];
  for (let x = -1; x <= 1; x++) for (let y = -1; y <= 1; y++) for (let z = -1; z <= 1; z++) {
    if (x === 0 && y === 0 && z === 0) continue;
    const n = Math.hypot(x, y, z);
    dirs.push(x / n, y / n, z / n);
  }
  const count = 240;
  const golden = Math.PI * (3 - Math.sqrt(5));
  for (let i = 0; i < count; i++) {
    const y = 1 - ((i + 0.5) / count) * 2;
    const r = Math.sqrt(1 - y * y);
    dirs.push(Math.cos(i * golden) * r, y, Math.sin(i * golden) * r);
  }
  return Float64Array.from(dirs);
}

/**
 * Depth of each given atom below the surface of a finite cluster: the smallest distance from the
 * atom to a supporting plane of the cluster, min over directions u of h(u) - p.u with
 * h(u) = max_j x_j.u over the occupied atoms (the support function of the convex hull, sampled
 * in the directions of `depthDirections`; slightly optimistic between directions).
 */
export function surfaceDepths(structure: Structure, indices: readonly number[]): Float64Array {
  const dirs = depthDirections();
  const nd = dirs.length / 3;
  const h = new Float64Array(nd).fill(-Infinity);
  const p = structure.positions;
  for (let j = 0; j < structure.species.length; j++) {
    if (!(structure.occupancy[j] > 0)) continue;
    const x = p[3 * j], y = p[3 * j + 1], z = p[3 * j + 2];
    for (let d = 0; d < nd; d++) {
      const v = x * dirs[3 * d] + y * dirs[3 * d + 1] + z * dirs[3 * d + 2];
      if (v > h[d]) h[d] = v;
    }
  }
  return Float64Array.from(indices, (i) => {
    let depth = Infinity;
    for (let d = 0; d < nd; d++) {
      depth = Math.min(depth, h[d] - (p[3 * i] * dirs[3 * d] + p[3 * i + 1] * dirs[3 * d + 1] + p[3 * i + 2] * dirs[3 * d + 2]));
    }
    return depth;
  });
}

/**
 * The absorber sites to average. In a periodic structure, and for a single chosen atom, every
 * selected site. In a finite cluster, a site near the surface has shells cut short (an fcc
 * surface atom has fewer than 12 nearest neighbours), so averaging it in lowers every
 * coordination number: only sites deeper below the surface than the radius are used (their
 * shells within the radius are complete), or, when there is none, the deepest site alone.
 */
export function selectAbsorberSites(structure: Structure, selector: AbsorberSelector, radius: number): AbsorberSelection {
  const selected = selectAbsorbers(structure, selector);
  if (structure.lattice || selected.length === 1) return { used: selected, excluded: 0, fallback: false, warning: null };
  const depths = surfaceDepths(structure, selected);
  // 1e-6 Å: an atom exactly on the surface at the radius still belongs to a complete shell
  const used = selected.filter((_, i) => depths[i] >= radius - 1e-6);
  const where = structure.info.file ? `${structure.info.file}: ` : '';
  if (used.length === selected.length) return { used, excluded: 0, fallback: false, warning: null };
  if (used.length > 0) {
    return {
      used, excluded: selected.length - used.length, fallback: false,
      warning: `${where}finite cluster: averaged ${used.length} of ${selected.length} absorber sites, those more than ${radius} Å below the surface (atoms ${listOf(used)}); the other ${selected.length - used.length} have incomplete shells`,
    };
  }
  let best = 0;
  for (let i = 1; i < selected.length; i++) if (depths[i] > depths[best]) best = i;
  return {
    used: [selected[best]], excluded: selected.length - 1, fallback: true,
    warning: `${where}finite cluster: no absorber site lies ${radius} Å below the surface; used the deepest one alone (atom ${selected[best]}, ${depths[best].toFixed(2)} Å deep), whose outer shells may still be incomplete`,
  };
}

function listOf(indices: readonly number[]): string {
  return indices.length <= 8 ? indices.join(', ') : `${indices.slice(0, 8).join(', ')}, ... (${indices.length})`;
}

/**
 * Build one cluster per absorber site: the given `sites`, else those `selectAbsorberSites` picks
 * (in a finite cluster only the sites with complete shells; call it to get its warning).
 */
export function buildClusters(structure: Structure, options: ClusterOptions & { sites?: readonly number[] }): Cluster[] {
  const radius = options.radius ?? 6;
  if (!(radius > 0) || !Number.isFinite(radius)) throw new InputError(`the radius must be a positive number of Å, got ${radius}`, { key: '--radius' });
  const siteTolerance = options.siteTolerance ?? 0.1;
  const absorbers = options.sites ?? selectAbsorberSites(structure, options.absorber, radius).used;
  const search = structure.lattice ? periodicSearch(structure, radius) : finiteSearch(structure, radius);
  return absorbers.map((index) => {
    const p = structure.positions;
    const site: AbsorberSite = {
      index,
      species: structure.species[index],
      label: structure.labels[index],
      position: [p[3 * index], p[3 * index + 1], p[3 * index + 2]],
      weight: structure.occupancy[index],
    };
    return search(site, siteTolerance);
  });
}

type Search = (site: AbsorberSite, siteTolerance: number) => Cluster;

/** Collects neighbours into growable typed arrays, then sorts them by distance. */
class NeighbourCollector {
  private count = 0;
  private offsets = new Float64Array(3 * 64);
  private distances = new Float64Array(64);
  private indices = new Int32Array(64);
  add(j: number, dx: number, dy: number, dz: number, d: number): void {
    if (this.count === this.distances.length) this.grow();
    const c = this.count++;
    this.offsets[3 * c] = dx;
    this.offsets[3 * c + 1] = dy;
    this.offsets[3 * c + 2] = dz;
    this.distances[c] = d;
    this.indices[c] = j;
  }
  private grow(): void {
    const size = this.distances.length * 2;
    const o = new Float64Array(3 * size); o.set(this.offsets); this.offsets = o;
    const d = new Float64Array(size); d.set(this.distances); this.distances = d;
    const i = new Int32Array(size); i.set(this.indices); this.indices = i;
  }
  finish(structure: Structure, site: AbsorberSite, radius: number): Cluster {
    const order = Array.from({ length: this.count }, (_, i) => i);
    // sort by distance, ties by source index then offset, so the order is reproducible
    order.sort((a, b) => this.distances[a] - this.distances[b] || this.indices[a] - this.indices[b]
      || this.offsets[3 * a] - this.offsets[3 * b] || this.offsets[3 * a + 1] - this.offsets[3 * b + 1]
      || this.offsets[3 * a + 2] - this.offsets[3 * b + 2]);
    const n = this.count;
    const offsets = new Float64Array(3 * n);
    const distances = new Float64Array(n);
    const occupancy = new Float64Array(n);
    const sourceIndex = new Int32Array(n);
    const species: string[] = new Array(n);
    order.forEach((from, to) => {
      offsets[3 * to] = this.offsets[3 * from];
      offsets[3 * to + 1] = this.offsets[3 * from + 1];
      offsets[3 * to + 2] = this.offsets[3 * from + 2];
      distances[to] = this.distances[from];
      const j = this.indices[from];
      sourceIndex[to] = j;
      occupancy[to] = structure.occupancy[j];
      species[to] = structure.species[j];
    });
    return { absorber: site, radius, species, offsets, distances, occupancy, sourceIndex };
  }
}

/** Cell list over the bounding box of a finite cluster. */
function finiteSearch(structure: Structure, radius: number): Search {
  const p = structure.positions;
  const n = structure.species.length;
  const lo = [Infinity, Infinity, Infinity];
  const hi = [-Infinity, -Infinity, -Infinity];
  for (let i = 0; i < n; i++) {
    for (let a = 0; a < 3; a++) {
      const v = p[3 * i + a];
      if (v < lo[a]) lo[a] = v;
      if (v > hi[a]) hi[a] = v;
    }
  }
  // bins at least `radius` wide, and no more bins than about 2 per atom
  const bins = [0, 0, 0];
  const maxPerAxis = Math.max(1, Math.floor(Math.cbrt(2 * n)));
  for (let a = 0; a < 3; a++) bins[a] = Math.max(1, Math.min(maxPerAxis, Math.floor((hi[a] - lo[a]) / radius)));
  const width = [0, 1, 2].map((a) => (hi[a] - lo[a]) / bins[a] || 1);
  const binOf = (v: number, a: number) => Math.min(bins[a] - 1, Math.max(0, Math.floor((v - lo[a]) / width[a])));
  const { head, next } = linkBins(n, bins[0] * bins[1] * bins[2], (i) => {
    const bx = binOf(p[3 * i], 0);
    const by = binOf(p[3 * i + 1], 1);
    const bz = binOf(p[3 * i + 2], 2);
    return (bx * bins[1] + by) * bins[2] + bz;
  });
  const reach = [0, 1, 2].map((a) => Math.floor(radius / width[a]) + 1);
  const r2 = radius * radius;
  return (site, siteTolerance) => {
    const collector = new NeighbourCollector();
    const [x0, y0, z0] = site.position;
    const b = [binOf(x0, 0), binOf(y0, 1), binOf(z0, 2)];
    for (let ix = Math.max(0, b[0] - reach[0]); ix <= Math.min(bins[0] - 1, b[0] + reach[0]); ix++) {
      for (let iy = Math.max(0, b[1] - reach[1]); iy <= Math.min(bins[1] - 1, b[1] + reach[1]); iy++) {
        for (let iz = Math.max(0, b[2] - reach[2]); iz <= Math.min(bins[2] - 1, b[2] + reach[2]); iz++) {
          for (let j = head[(ix * bins[1] + iy) * bins[2] + iz]; j >= 0; j = next[j]) {
            const dx = p[3 * j] - x0;
            const dy = p[3 * j + 1] - y0;
            const dz = p[3 * j + 2] - z0;
            const d2 = dx * dx + dy * dy + dz * dz;
            if (d2 > r2) continue;
            const d = Math.sqrt(d2);
            if (d < siteTolerance) continue;
            collector.add(j, dx, dy, dz, d);
          }
        }
      }
    }
    return collector.finish(structure, site, radius);
  };
}

/** Linked-list bins: head[bin] is the first atom, next[atom] the following one (-1 ends). */
function linkBins(n: number, binCount: number, binOfAtom: (i: number) => number): { head: Int32Array; next: Int32Array } {
  const head = new Int32Array(binCount).fill(-1);
  const next = new Int32Array(n).fill(-1);
  for (let i = n - 1; i >= 0; i--) {
    const b = binOfAtom(i);
    next[i] = head[b];
    head[b] = i;
  }
  return { head, next };
}

/** Cell list over wrapped fractional coordinates of a periodic structure. */
function periodicSearch(structure: Structure, radius: number): Search {
  const lattice = structure.lattice as Float64Array;
  const inverse = invertCell(lattice);
  const p = structure.positions;
  const n = structure.species.length;
  const volume = Math.abs(cellVolume(lattice));
  const row = (i: number) => [lattice[3 * i], lattice[3 * i + 1], lattice[3 * i + 2]];
  const cross = (u: number[], v: number[]) => [u[1] * v[2] - u[2] * v[1], u[2] * v[0] - u[0] * v[2], u[0] * v[1] - u[1] * v[0]];
  const norm = (u: number[]) => Math.hypot(u[0], u[1], u[2]);
  const spacing = [
    volume / norm(cross(row(1), row(2))),
    volume / norm(cross(row(2), row(0))),
    volume / norm(cross(row(0), row(1))),
  ];
  const maxPerAxis = Math.max(1, Math.floor(Math.cbrt(2 * n)));
  const bins = spacing.map((d) => Math.max(1, Math.min(maxPerAxis, Math.floor(d / radius))));
  // wrapped fractional coordinates of every atom
  const frac = new Float64Array(3 * n);
  for (let i = 0; i < n; i++) {
    const x = p[3 * i], y = p[3 * i + 1], z = p[3 * i + 2];
    for (let a = 0; a < 3; a++) {
      // fractional = position . inverse (row-vector convention: r = f . L, so f = r . L^-1)
      const f = x * inverse[a] + y * inverse[3 + a] + z * inverse[6 + a];
      frac[3 * i + a] = f - Math.floor(f);
    }
  }
  const binIndex = (f: number, a: number) => Math.min(bins[a] - 1, Math.floor(f * bins[a]));
  const { head, next } = linkBins(n, bins[0] * bins[1] * bins[2], (i) =>
    (binIndex(frac[3 * i], 0) * bins[1] + binIndex(frac[3 * i + 1], 1)) * bins[2] + binIndex(frac[3 * i + 2], 2));
  const reach = [0, 1, 2].map((a) => Math.floor((radius * bins[a]) / spacing[a]) + 1);
  const r2 = radius * radius;
  return (site, siteTolerance) => {
    const collector = new NeighbourCollector();
    const i0 = site.index;
    const fa = [frac[3 * i0], frac[3 * i0 + 1], frac[3 * i0 + 2]];
    const ba = [binIndex(fa[0], 0), binIndex(fa[1], 1), binIndex(fa[2], 2)];
    for (let ox = -reach[0]; ox <= reach[0]; ox++) {
      const bx = ba[0] + ox;
      const wx = Math.floor(bx / bins[0]);
      const cx = bx - wx * bins[0];
      for (let oy = -reach[1]; oy <= reach[1]; oy++) {
        const by = ba[1] + oy;
        const wy = Math.floor(by / bins[1]);
        const cy = by - wy * bins[1];
        for (let oz = -reach[2]; oz <= reach[2]; oz++) {
          const bz = ba[2] + oz;
          const wz = Math.floor(bz / bins[2]);
          const cz = bz - wz * bins[2];
          for (let j = head[(cx * bins[1] + cy) * bins[2] + cz]; j >= 0; j = next[j]) {
            const fx = frac[3 * j] + wx - fa[0];
            const fy = frac[3 * j + 1] + wy - fa[1];
            const fz = frac[3 * j + 2] + wz - fa[2];
            const dx = fx * lattice[0] + fy * lattice[3] + fz * lattice[6];
            const dy = fx * lattice[1] + fy * lattice[4] + fz * lattice[7];
            const dz = fx * lattice[2] + fy * lattice[5] + fz * lattice[8];
            const d2 = dx * dx + dy * dy + dz * dz;
            if (d2 > r2) continue;
            const d = Math.sqrt(d2);
            if (d < siteTolerance) continue;
            collector.add(j, dx, dy, dz, d);
          }
        }
      }
    }
    return collector.finish(structure, site, radius);
  };
}
