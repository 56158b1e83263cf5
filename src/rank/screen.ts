/**
 * Hypotheses generated from one base structure, for `screen`: each `--vary` option is one
 * dimension of changes, the hypotheses are every combination of one choice per dimension
 * ("unchanged" being one of the choices), and each is named by what changed.
 *
 * Dimensions (option text in brackets):
 * - substitute [substitute:SHELL=EL[,EL...]]: m of the n neighbours of a shell become element EL,
 *   for m = 1..n (n a whole number; otherwise only the whole shell);
 * - remove [remove:SHELL=K[,K...] or remove:SHELL=K1..K2]: the coordination number of a shell
 *   goes down by K;
 * - strain [strain:FROM..TO/STEP], in percent: every distance scaled by 1 + s/100;
 * - site [site]: each absorber site on its own instead of the average over all sites.
 * Single scattering sees a shell only through its species, distance, count and spread, so the
 * choice of which m neighbours change does not matter; hypotheses whose shells come out the same
 * (same species, r to 1e-5 Å, n to 1e-6, spread to 1e-5 Å) are equivalent and generated once (the
 * first in generation order is kept).
 */
import { InputError } from '../core/errors';
import { hashOf } from '../core/hash';
import { canonicalSymbol } from '../elements/index';
import { selectAbsorbers } from '../structure/cluster';
import type { Structure } from '../structure/structure';
import type { ScatteringPath } from '../paths/pathset';
import { applyChanges, shellsOfFrame, type CandidateSpec, type Change, type FrameRef, type ShellSettings } from './candidates';

export type VaryDimension =
  | { kind: 'substitute'; shell: string; to: string[] }
  | { kind: 'remove'; shell: string; counts: number[] }
  | { kind: 'strain'; percents: number[] }
  | { kind: 'site' };

function parseCounts(text: string, option: string): number[] {
  const range = /^(\d+)\.\.(\d+)$/.exec(text.trim());
  if (range) {
    const lo = Number(range[1]);
    const hi = Number(range[2]);
    if (!(lo >= 1 && hi >= lo)) throw new InputError(`bad count range '${text}' (need 1 <= K1 <= K2)`, { key: option });
    return Array.from({ length: hi - lo + 1 }, (_, i) => lo + i);
  }
  return text.split(',').map((t) => {
    const v = Number(t.trim());
    if (!Number.isInteger(v) || v < 1) throw new InputError(`'${t}' is not a whole number >= 1`, { key: option });
    return v;
  });
}

/** Parse one `--vary` value (syntax in the module header). */
export function parseVary(text: string): VaryDimension {
  const option = '--vary';
  const t = text.trim();
  if (t === 'site') return { kind: 'site' };
  const colon = t.indexOf(':');
  if (colon < 0) throw new InputError(`expected substitute:SHELL=EL, remove:SHELL=K, strain:FROM..TO/STEP or site, got '${text}'`, { key: option });
  const kind = t.slice(0, colon);
  const body = t.slice(colon + 1);
  if (kind === 'substitute' || kind === 'remove') {
    const eq = body.indexOf('=');
    if (eq <= 0) throw new InputError(`expected ${kind}:SHELL=..., got '${text}'`, { key: option });
    const shell = body.slice(0, eq).trim();
    const value = body.slice(eq + 1);
    if (kind === 'remove') return { kind, shell, counts: parseCounts(value, option) };
    const to = value.split(',').map((s) => {
      const symbol = canonicalSymbol(s.trim());
      if (!symbol) throw new InputError(`'${s}' is not an element symbol`, { key: option });
      return symbol;
    });
    return { kind, shell, to };
  }
  if (kind === 'strain') {
    const m = /^\s*(-?[\d.]+)\s*\.\.\s*(-?[\d.]+)\s*\/\s*([\d.]+)\s*$/.exec(body);
    if (!m) throw new InputError(`expected strain:FROM..TO/STEP in percent (e.g. strain:-2..2/0.5), got '${text}'`, { key: option });
    const [from, to, step] = [Number(m[1]), Number(m[2]), Number(m[3])];
    if (!(step > 0) || !(to >= from) || ![from, to, step].every(Number.isFinite)) throw new InputError(`bad strain range '${body}'`, { key: option });
    const count = Math.floor((to - from) / step + 1e-9) + 1;
    if (count > 10000) throw new InputError(`the strain range gives ${count} values; use a coarser step`, { key: option });
    const percents = Array.from({ length: count }, (_, i) => Number((from + i * step).toFixed(10))).filter((p) => Math.abs(p) > 1e-12);
    return { kind, percents };
  }
  throw new InputError(`unknown variation '${kind}' (substitute, remove, strain, site)`, { key: option });
}

/** The choices of one dimension, as change lists (the unchanged choice first, empty). */
function choicesOf(dim: VaryDimension, baseShells: readonly ScatteringPath[], structure: Structure, settings: ShellSettings): { changes: Change[]; label: string }[] {
  const none = { changes: [] as Change[], label: '' };
  const shellOf = (id: string) => {
    const p = baseShells.find((s) => s.id === id);
    if (!p) throw new InputError(`the base has no shell '${id}' (shells: ${baseShells.map((s) => s.id).join(', ')})`, { key: '--vary' });
    return p;
  };
  if (dim.kind === 'substitute') {
    const p = shellOf(dim.shell);
    const n = p.degeneracy;
    const whole = Math.abs(n - Math.round(n)) < 1e-9;
    const counts = whole ? Array.from({ length: Math.round(n) }, (_, i) => i + 1) : [n];
    const out = [none];
    for (const to of dim.to) {
      if (to === p.scatterer) continue;
      for (const m of counts) out.push({ changes: [{ kind: 'substitute', shell: dim.shell, to, count: m }], label: `${dim.shell}: ${fmtCount(m)} of ${fmtCount(n)} ${p.scatterer} -> ${to}` });
    }
    return out;
  }
  if (dim.kind === 'remove') {
    const p = shellOf(dim.shell);
    const out = [none];
    for (const k of dim.counts) {
      if (k > p.degeneracy + 1e-9) throw new InputError(`shell ${dim.shell} holds ${fmtCount(p.degeneracy)} neighbours; cannot remove ${k}`, { key: '--vary' });
      out.push({ changes: [{ kind: 'remove', shell: dim.shell, count: k }], label: `${dim.shell}: n ${fmtCount(p.degeneracy)} -> ${fmtCount(p.degeneracy - k)}` });
    }
    return out;
  }
  if (dim.kind === 'strain') {
    return [none, ...dim.percents.map((s) => ({ changes: [{ kind: 'strain', percent: s } as Change], label: `strain ${s > 0 ? '+' : ''}${s} %` }))];
  }
  const sites = selectAbsorbers(structure, settings.absorber);
  return [none, ...sites.map((index) => ({
    changes: [{ kind: 'site', index, label: structure.labels[index] } as Change],
    label: `site ${structure.labels[index]} (#${index})`,
  }))];
}

function fmtCount(n: number): string {
  return Math.abs(n - Math.round(n)) < 1e-9 ? String(Math.round(n)) : n.toFixed(3);
}

/** Signature of a shell list for equivalence (see the module header). */
export function shellSignature(paths: readonly ScatteringPath[]): string {
  const rows = paths.map((p) => [p.scatterer, p.r.toFixed(5), p.degeneracy.toFixed(6), p.spread.toFixed(5)].join(' ')).sort();
  return hashOf(rows).slice(0, 24);
}

export interface GeneratedVariants {
  specs: CandidateSpec[];
  /** Combinations tried (base included). */
  generated: number;
  /** Combinations dropped as equivalent to an earlier one. */
  duplicates: number;
  /** Combinations that could not be made (e.g. a shell missing at one site), with the reason. */
  skipped: { name: string; reason: string }[];
}

/**
 * Generate the hypotheses (see the module header). The base itself comes first, named 'base'.
 * @param maxVariants refuse to generate more combinations than this (default 100000).
 */
export function generateVariants(structure: Structure, ref: FrameRef, dimensions: readonly VaryDimension[], settings: ShellSettings, maxVariants = 100000): GeneratedVariants {
  const base = shellsOfFrame(structure, ref, settings);
  const choiceLists = dimensions.map((d) => choicesOf(d, base.pathSet.paths, structure, settings));
  const total = choiceLists.reduce((p, c) => p * c.length, 1);
  if (total > maxVariants) throw new InputError(`the variations combine into ${total} hypotheses, more than the limit ${maxVariants}`, { key: '--vary' });
  const siteShells = new Map<number, ScatteringPath[]>();
  const shellsAtSite = (index: number) => {
    let p = siteShells.get(index);
    if (!p) {
      p = shellsOfFrame(structure, ref, { ...settings, absorber: { index } }).pathSet.paths;
      siteShells.set(index, p);
    }
    return p;
  };
  const seen = new Set<string>();
  const specs: CandidateSpec[] = [];
  const skipped: { name: string; reason: string }[] = [];
  let duplicates = 0;
  const digits = new Array<number>(choiceLists.length).fill(0);
  for (let n = 0; n < total; n++) {
    // mixed-radix counter over the dimensions, last dimension fastest
    let rest = n;
    for (let d = choiceLists.length - 1; d >= 0; d--) {
      digits[d] = rest % choiceLists[d].length;
      rest = Math.floor(rest / choiceLists[d].length);
    }
    const picked = digits.map((c, d) => choiceLists[d][c]);
    const changes = picked.flatMap((p) => p.changes);
    const labels = picked.map((p) => p.label).filter((l) => l !== '');
    const name = labels.length === 0 ? 'base' : labels.join('; ');
    const site = changes.find((c) => c.kind === 'site') as Extract<Change, { kind: 'site' }> | undefined;
    let paths: ScatteringPath[];
    try {
      const start = site ? shellsAtSite(site.index) : base.pathSet.paths;
      paths = applyChanges(start, changes.filter((c) => c.kind !== 'site'));
    } catch (error) {
      if (!(error instanceof InputError)) throw error;
      skipped.push({ name, reason: error.reason });
      continue;
    }
    const signature = shellSignature(paths);
    if (seen.has(signature)) {
      duplicates++;
      continue;
    }
    seen.add(signature);
    specs.push({ kind: 'structure', name, source: ref, changes: changes.length > 0 ? changes : undefined });
  }
  return { specs, generated: total, duplicates, skipped };
}
