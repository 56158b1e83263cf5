/**
 * The ranking recipe: one refinement recipe applied unchanged to every candidate, so that their
 * scores are comparable, with few enough free parameters to stay well inside the independent
 * points of the data window (N_ind = 2 Dk DR / pi + 2, Stern, Phys. Rev. B 48, 9825 (1993)).
 *
 * What it does, as an analyst would by hand (common practice, no source):
 * - Shells: those whose structure distance is at most rMax + pathMargin (|chi(R)| peaks sit about
 *   0.3-0.5 Å below the bond length because of the scattering phase).
 * - Groups: within one scatterer species, a group starts at the nearest shell not yet grouped and
 *   takes every further shell up to `bandWidth` Å beyond it. A group shares one msrd (sigma^2);
 *   each shell adds its own static spread^2 (the width of the shell in the structure, which is
 *   how an ensemble of frames brings its configurational disorder), so
 *     msrd_shell = msrd_group + spread_shell^2.
 * - Coordination numbers: fixed at the structure's degeneracies (the hypothesis under test),
 *   times the component fraction in a mixture.
 * - Distances: 'expand' (default) scales every distance by one global factor,
 *     r_shell = r0_shell (1 + expansion),
 *   so the candidate's shape is kept and its size refined; 'fixed' keeps the structure distances
 *   (used when the hypotheses differ by strain, which an expansion would undo).
 * - e0 free; s0sq free within bounds, or fixed at a given value (needed when the hypotheses differ
 *   in coordination number, which a free s0sq absorbs for a single shell).
 * - A limit on the free parameters (default: half the independent points, rounded down): when the
 *   groups would exceed it, bands are widened (x1.5 at a time), then one msrd per species, then
 *   one msrd for all shells. The recipe's `description` says what happened.
 *
 * A two-candidate mixture adds one free `fraction` (bounded 0..1): the shells of the first
 * component carry n0 * fraction, those of the second n0 * (1 - fraction); groups are formed over
 * the shells of both, so the msrd of a band is shared.
 */
import { InputError } from '../core/errors';
import type { ScatteringPath } from '../paths/pathset';
import type { ParameterSpec } from '../fit/parameters';
import type { PathRule } from '../fit/exafs/problem';
import { independentPoints } from '../fit/statistics';

/** Options of {@link rankingRecipe}, every field with a documented default. */
export interface RankingRecipeOptions {
  kRange: [number, number];
  rRange: [number, number];
  /** Include shells with r0 <= rMax + pathMargin, Å (default 0.5). */
  pathMargin?: number;
  /** Width of a distance band sharing one msrd, Å (default 0.3). */
  bandWidth?: number;
  /** 'free' (default, bounded by s0sqBounds) or a fixed S0^2. */
  s0sq?: number | 'free';
  /** Bounds of a free s0sq (default [0.5, 1.5]). */
  s0sqBounds?: [number, number];
  /** 'expand' (default): one global expansion factor; 'fixed': structure distances. */
  distances?: 'expand' | 'fixed';
  /** Largest number of free parameters (default floor(N_ind / 2)). */
  maxFree?: number;
  /** Start value of the group msrd, Å^2 (default 0.005). */
  msrdStart?: number;
}

/** One component of a candidate: its shells and, for a mixture, which share of it is present. */
export interface RecipeComponent {
  paths: readonly ScatteringPath[];
  /** 'all' for a single candidate; 'fraction' / 'rest' for the two parts of a mixture. */
  share: 'all' | 'fraction' | 'rest';
}

/** The shells of a recipe and the rule for each, in the order of `paths`. */
export interface RankingRecipe {
  parameters: ParameterSpec[];
  /** Shells of all components, in component order. */
  paths: ScatteringPath[];
  /** Index of the component each path belongs to. */
  componentOf: number[];
  rules: PathRule[];
  /** Group of each path (its msrd parameter name). */
  groupOf: string[];
  /** Plain sentences saying what the recipe did. */
  description: string[];
  nFree: number;
  nIndependent: number;
}

/** Parameter-name-safe form of a species or label. */
function safe(text: string): string {
  return text.replace(/[^A-Za-z0-9]/g, '_');
}

/** Number text for an expression (full precision, never exponent notation for ordinary values). */
function num(x: number): string {
  if (!Number.isFinite(x)) throw new InputError(`a shell quantity is not finite (${x})`);
  const text = String(x);
  return text.includes('e') ? x.toFixed(12) : text;
}

type Grouping = { kind: 'bands'; width: number } | { kind: 'species' } | { kind: 'one' };

/** Group labels for shells (sorted input not required). */
function groupShells(paths: readonly ScatteringPath[], grouping: Grouping): string[] {
  const labels = new Array<string>(paths.length);
  if (grouping.kind === 'one') return labels.fill('all');
  const bySpecies = new Map<string, number[]>();
  paths.forEach((p, i) => {
    const list = bySpecies.get(p.scatterer) ?? [];
    list.push(i);
    bySpecies.set(p.scatterer, list);
  });
  for (const [species, indices] of bySpecies) {
    if (grouping.kind === 'species') {
      for (const i of indices) labels[i] = safe(species);
      continue;
    }
    indices.sort((a, b) => paths[a].r - paths[b].r || a - b);
    let band = 0;
    let start = -Infinity;
    for (const i of indices) {
      if (paths[i].r - start > grouping.width + 1e-9) {
        band++;
        start = paths[i].r;
      }
      labels[i] = `${safe(species)}_${band}`;
    }
  }
  return labels;
}

/**
 * Build the ranking recipe for one candidate (one component) or a mixture (two components).
 * @throws InputError when no shell lies inside the path range or the window leaves no room for
 *   the parameters.
 */
export function rankingRecipe(components: readonly RecipeComponent[], options: RankingRecipeOptions): RankingRecipe {
  if (components.length === 0 || components.length > 2) throw new InputError(`a candidate has one or two components, got ${components.length}`);
  const margin = options.pathMargin ?? 0.5;
  const bandWidth = options.bandWidth ?? 0.3;
  const s0sq = options.s0sq ?? 'free';
  const [s0sqLow, s0sqHigh] = options.s0sqBounds ?? [0.5, 1.5];
  const distances = options.distances ?? 'expand';
  const [kMin, kMax] = options.kRange;
  const [rMin, rMax] = options.rRange;
  const nIndependent = independentPoints(kMin, kMax, rMin, rMax);
  const maxFree = options.maxFree ?? Math.floor(nIndependent / 2);
  const limit = rMax + margin;

  const paths: ScatteringPath[] = [];
  const componentOf: number[] = [];
  components.forEach((c, ci) => {
    for (const p of c.paths) {
      if (p.r <= limit + 1e-9) {
        paths.push(p);
        componentOf.push(ci);
      }
    }
  });
  if (paths.length === 0) {
    throw new InputError(`no shell lies within ${limit.toFixed(2)} Å of the absorber (R range ends at ${rMax} Å, margin ${margin} Å)`, { key: '--r' });
  }
  const isMixture = components.length === 2;
  const fixedCount = (s0sq === 'free' ? 1 : 0) + 1 + (distances === 'expand' ? 1 : 0) + (isMixture ? 1 : 0);

  // choose the grouping: bands, wider bands, per species, one for all
  const attempts: Grouping[] = [];
  for (let w = bandWidth; w < limit * 1.5; w *= 1.5) attempts.push({ kind: 'bands', width: w });
  attempts.push({ kind: 'species' }, { kind: 'one' });
  let grouping = attempts[0];
  let labels = groupShells(paths, grouping);
  for (const g of attempts) {
    grouping = g;
    labels = groupShells(paths, g);
    if (fixedCount + new Set(labels).size <= maxFree) break;
  }
  const groups = [...new Set(labels)];
  const nFree = fixedCount + groups.length;
  if (nFree > maxFree) {
    throw new InputError(
      `the window k ${kMin}-${kMax} 1/Å, R ${rMin}-${rMax} Å has ${nIndependent.toFixed(1)} independent points: too few for ${nFree} free parameters `
      + `(limit ${maxFree}); widen the window or fix s0sq`, { key: '--r' });
  }

  const parameters: ParameterSpec[] = [
    s0sq === 'free' ? { name: 's0sq', value: Math.min(Math.max(0.9, s0sqLow), s0sqHigh), lower: s0sqLow, upper: s0sqHigh } : { name: 's0sq', value: s0sq, state: 'fixed' },
    { name: 'e0', value: 0, lower: -20, upper: 20 },
  ];
  if (distances === 'expand') parameters.push({ name: 'expansion', value: 0, lower: -0.1, upper: 0.1 });
  if (isMixture) parameters.push({ name: 'fraction', value: 0.5, lower: 0, upper: 1 });
  for (const g of groups) parameters.push({ name: `msrd_${g}`, value: options.msrdStart ?? 0.005, lower: -0.005, upper: 0.05 });

  const rules: PathRule[] = paths.map((p, i) => {
    const share = components[componentOf[i]].share;
    const n = share === 'all' ? num(p.degeneracy) : share === 'fraction' ? `${num(p.degeneracy)} * fraction` : `${num(p.degeneracy)} * (1 - fraction)`;
    const r = distances === 'expand' ? `${num(p.r)} * (1 + expansion)` : num(p.r);
    const static2 = p.spread * p.spread;
    const msrd = static2 > 0 ? `msrd_${labels[i]} + ${num(static2)}` : `msrd_${labels[i]}`;
    return { n, r, msrd, c3: '0', c4: '0' };
  });

  const groupText = grouping.kind === 'bands'
    ? `shells of one species within ${grouping.width.toFixed(2)} Å of a group's nearest shell share one msrd (${groups.length} group${groups.length === 1 ? '' : 's'})`
    : grouping.kind === 'species' ? `one msrd per scatterer species (${groups.length}), bands would exceed the parameter limit`
      : 'one msrd for all shells, per-species msrd would exceed the parameter limit';
  const description = [
    `${paths.length} shell${paths.length === 1 ? '' : 's'} with r0 <= ${limit.toFixed(2)} Å${isMixture ? ' from two components mixed by a free fraction' : ''}`,
    groupText + '; each shell adds its static spread^2',
    'n fixed at the structure\'s degeneracies' + (isMixture ? ' times the component fraction' : ''),
    distances === 'expand' ? 'distances scaled by one free expansion factor' : 'distances fixed at the structure\'s',
    `e0 free; s0sq ${s0sq === 'free' ? `free in [${s0sqLow}, ${s0sqHigh}]` : `fixed at ${s0sq}`}`,
    `${nFree} free parameters for ${nIndependent.toFixed(1)} independent points (limit ${maxFree})`,
  ];
  return { parameters, paths, componentOf, rules, groupOf: labels.map((l) => `msrd_${l}`), description, nFree, nIndependent };
}
