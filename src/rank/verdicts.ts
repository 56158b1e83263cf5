/**
 * From scored candidates to a ranking: order, significance of each candidate against the best,
 * plain-word verdicts, and shared ranks for candidates the data cannot tell apart.
 *
 * Order: by reduced chi-square (chi2 / (N_ind - nu)), lowest first, so candidates with more free
 * parameters pay for them; failed fits last; ties by the stable candidate order.
 *
 * Significance of candidate c against the best b (same data, same window, same recipe):
 * - Nested pairs (a mixture contains each of its parts: fraction 1 or 0 gives the part back, up
 *   to the grouping of msrd over the union of shells, so the nesting is approximate): Hamilton's
 *   R-ratio test (Hamilton, Acta Cryst. 18, 502 (1965)) with b = nu_full - nu_restricted
 *   restrictions and n = N_ind observations, via ../fit/statistics.
 * - Non-nested pairs (different structures: the usual case): Hamilton's test does not apply
 *   strictly. We use the variance-ratio F-test of the two reduced chi-squares,
 *     F = (chi2_c / nu_c) / (chi2_b / nu_b),  p = P(F(nu_c, nu_b) > F),  nu = N_ind - n_varied,
 *   as an approximate guide: the two chi-squares come from the same data and are not independent,
 *   so p is indicative, not exact. With equal parameter counts F is simply the ratio of the
 *   R-factors (the form of Hamilton's ratio for equal parameter counts). Common practice, no source.
 * Verdicts: 'best'; 'not distinguishable from the best' (p >= alpha, or equivalent within
 * resolution); 'worse at 95 %' (rejectAlpha <= p < alpha; the percentage follows alpha);
 * 'rejected' (p < rejectAlpha, or the fit failed). A candidate that cannot be tested (no degrees of
 * freedom left) is 'not distinguishable': there is no evidence against it.
 *
 * Resolution: shells of one species closer than dR = pi / (2 Dk) cannot be told apart by data over
 * a k range Dk (the Nyquist spacing behind N_ind = 2 Dk DR / pi; Stern, Phys. Rev. B 48, 9825
 * (1993)). Each candidate's shells inside the fitted range are merged into resolved shells (one
 * species, members within dR of the first; n summed, r the n-weighted mean). Two candidates whose
 * resolved shells agree (same species; n within `nTolerance` relative; r within `sameWithin` Å)
 * differ only below the resolution: they are equivalent, share a rank, and an equivalent of the
 * best is 'not distinguishable from the best' whatever its p-value, rather than ranked by noise.
 */
import { fDistributionSurvival } from '../fit/distributions';
import { hamiltonTest } from '../fit/statistics';
import type { FitStats } from '../fit/exafs/refine';

/** One resolved shell of a candidate's signature. */
export interface ResolvedShell {
  species: string;
  n: number;
  r: number;
}

/** What the ranking needs of one candidate. */
export interface ScoredCandidate {
  key: string;
  /** Position in the stable candidate order (ties). */
  index: number;
  /** False when the fit could not be made (no stats, or not finite). */
  ok: boolean;
  stats: FitStats | null;
  /** Resolved shells (null: not compared for equivalence, e.g. mixtures). */
  signature: ResolvedShell[] | null;
  /** Keys of candidates nested in this one (a mixture contains its two parts). */
  contains?: string[];
}

export type TestMethod = 'variance-ratio' | 'hamilton' | 'none';

export interface SignificanceTest {
  method: TestMethod;
  /** F statistic (variance ratio, or Hamilton's equivalent F). */
  statistic: number;
  d1: number;
  d2: number;
  pValue: number;
}

export type Verdict = string;

export interface RankedCandidate {
  key: string;
  index: number;
  /** 1-based rank; equivalent candidates share the rank of the best-scored of them. */
  rank: number;
  /** Position in the ranked list (1-based, no ties). */
  position: number;
  verdict: Verdict;
  /** Test against the best (null for the best itself and failed fits). */
  test: SignificanceTest | null;
  /** Key of the better-scored candidate this one is equivalent to within resolution. */
  equivalentTo?: string;
}

export interface RankingOptions {
  /** Significance level of "worse" (default 0.05). */
  alpha?: number;
  /** Level below which a candidate is rejected (default 0.001). */
  rejectAlpha?: number;
  /** Resolved shells of equivalent candidates agree in r within this, Å (default 0.01). */
  sameWithin?: number;
  /** ... and in n within this fraction (default 0.05). */
  nTolerance?: number;
}

/** Distance resolution pi / (2 Dk), Å, for a k range in 1/Å. */
export function distanceResolution(kRange: [number, number]): number {
  return Math.PI / (2 * (kRange[1] - kRange[0]));
}

/**
 * Merge shells into resolved shells: within one species, sorted by distance, a resolved shell
 * takes every shell less than `resolution` beyond its first. Sorted by species, then r.
 */
export function resolvedShells(shells: readonly { scatterer: string; r: number; degeneracy: number }[], resolution: number): ResolvedShell[] {
  const bySpecies = new Map<string, { r: number; n: number }[]>();
  for (const s of shells) {
    if (!(s.degeneracy > 0)) continue;
    const list = bySpecies.get(s.scatterer) ?? [];
    list.push({ r: s.r, n: s.degeneracy });
    bySpecies.set(s.scatterer, list);
  }
  const out: ResolvedShell[] = [];
  for (const species of [...bySpecies.keys()].sort()) {
    const list = bySpecies.get(species)!.sort((a, b) => a.r - b.r);
    let i = 0;
    while (i < list.length) {
      const start = list[i].r;
      let n = 0, sum = 0;
      while (i < list.length && list[i].r - start < resolution) { n += list[i].n; sum += list[i].n * list[i].r; i++; }
      out.push({ species, n, r: sum / n });
    }
  }
  return out;
}

/** True when two signatures agree within the tolerances. */
export function equivalentSignatures(a: readonly ResolvedShell[], b: readonly ResolvedShell[], sameWithin = 0.01, nTolerance = 0.05): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) {
    if (a[i].species !== b[i].species) return false;
    if (Math.abs(a[i].n - b[i].n) > nTolerance * Math.max(a[i].n, b[i].n) + 1e-9) return false;
    if (Math.abs(a[i].r - b[i].r) > sameWithin + 1e-12) return false;
  }
  return true;
}

function usable(c: ScoredCandidate): boolean {
  return c.ok && c.stats !== null && Number.isFinite(c.stats.reducedChiSquare) && c.stats.reducedChiSquare >= 0;
}

/** The test of candidate c against the best b (see the module header). */
export function testAgainstBest(c: ScoredCandidate, b: ScoredCandidate): SignificanceTest {
  const cs = c.stats as FitStats;
  const bs = b.stats as FitStats;
  const n = bs.nIndependent;
  const nested = (outer: ScoredCandidate, inner: ScoredCandidate) => (outer.contains ?? []).includes(inner.key);
  const hamilton = (restricted: FitStats, full: FitStats): SignificanceTest | null => {
    try {
      const h = hamiltonTest(restricted.rFactor, full.rFactor, restricted.nVaried, full.nVaried, n);
      return { method: 'hamilton', statistic: h.f, d1: h.d1, d2: h.d2, pValue: h.pValue };
    } catch {
      return null;
    }
  };
  if (nested(b, c)) {
    const h = hamilton(cs, bs);
    if (h) return h;
  } else if (nested(c, b)) {
    const h = hamilton(bs, cs);
    // c contains the best: it cannot fit worse, only fail to fit significantly better
    if (h) return { ...h, pValue: 1 };
  }
  const f = cs.reducedChiSquare / bs.reducedChiSquare;
  const d1 = cs.degreesOfFreedom;
  const d2 = bs.degreesOfFreedom;
  if (!(d1 > 0 && d2 > 0) || !Number.isFinite(f)) return { method: 'none', statistic: NaN, d1, d2, pValue: NaN };
  return { method: 'variance-ratio', statistic: f, d1, d2, pValue: fDistributionSurvival(f, d1, d2) };
}

/** The verdict words for a worse-at level alpha (e.g. 0.05 -> 'worse at 95 %'). */
export function worseText(alpha: number): string {
  return `worse at ${Number(((1 - alpha) * 100).toPrecision(4))} %`;
}

export const VERDICT_BEST = 'best';
export const VERDICT_INDISTINGUISHABLE = 'not distinguishable from the best';
export const VERDICT_REJECTED = 'rejected';

/**
 * Rank scored candidates (see the module header). Output in ranked order. Memory and time are
 * linear in the number of candidates apart from the equivalence search, which compares a
 * candidate only with class leaders of the same species pattern and a nearby first distance.
 */
export function rankCandidates(candidates: readonly ScoredCandidate[], options: RankingOptions = {}): RankedCandidate[] {
  const alpha = options.alpha ?? 0.05;
  const rejectAlpha = options.rejectAlpha ?? 0.001;
  const sameWithin = options.sameWithin ?? 0.01;
  const nTolerance = options.nTolerance ?? 0.05;
  const order = [...candidates].sort((a, b) => {
    const ua = usable(a), ub = usable(b);
    if (ua !== ub) return ua ? -1 : 1;
    if (ua && ub) {
      const d = (a.stats as FitStats).reducedChiSquare - (b.stats as FitStats).reducedChiSquare;
      if (d !== 0) return d;
    }
    return a.index - b.index;
  });
  // equivalence classes, leaders first in score order
  const leaders = new Map<string, { leader: ScoredCandidate; members: ScoredCandidate[] }[]>();
  const classes: { leader: ScoredCandidate; members: ScoredCandidate[] }[] = [];
  const bucketOf = (s: ResolvedShell[]) => s.map((x) => x.species).join(',');
  const binOf = (s: ResolvedShell[]) => (s.length > 0 ? Math.round(s[0].r / Math.max(sameWithin, 1e-6)) : 0);
  for (const c of order) {
    if (usable(c) && c.signature) {
      const bucketKey = bucketOf(c.signature);
      const bin = binOf(c.signature);
      let joined = false;
      for (let b = bin - 1; b <= bin + 1 && !joined; b++) {
        for (const cls of leaders.get(`${bucketKey}|${b}`) ?? []) {
          if (equivalentSignatures(cls.leader.signature as ResolvedShell[], c.signature, sameWithin, nTolerance)) {
            cls.members.push(c);
            joined = true;
            break;
          }
        }
      }
      if (joined) continue;
      const cls = { leader: c, members: [] as ScoredCandidate[] };
      const key = `${bucketKey}|${bin}`;
      leaders.set(key, [...(leaders.get(key) ?? []), cls]);
      classes.push(cls);
      continue;
    }
    classes.push({ leader: c, members: [] });
  }
  const best = classes.length > 0 && usable(classes[0].leader) ? classes[0].leader : null;
  const out: RankedCandidate[] = [];
  classes.forEach((cls, ci) => {
    const rank = out.length + 1;
    [cls.leader, ...cls.members].forEach((c, mi) => {
      const position = out.length + 1;
      const entry: RankedCandidate = { key: c.key, index: c.index, rank, position, verdict: VERDICT_REJECTED, test: null };
      if (mi > 0) entry.equivalentTo = cls.leader.key;
      if (!usable(c) || !best) {
        out.push(entry);
        return;
      }
      if (c === best) {
        entry.verdict = VERDICT_BEST;
        out.push(entry);
        return;
      }
      entry.test = testAgainstBest(c, best);
      const p = entry.test.pValue;
      if (ci === 0) entry.verdict = VERDICT_INDISTINGUISHABLE;
      else if (!Number.isFinite(p) || p >= alpha) entry.verdict = VERDICT_INDISTINGUISHABLE;
      else if (p < rejectAlpha) entry.verdict = VERDICT_REJECTED;
      else entry.verdict = worseText(alpha);
      out.push(entry);
    });
  });
  return out;
}
