/**
 * Scoring one candidate, in either stage, the same way on the main thread and in a worker:
 * - 'prescreen': shells at their structure distances and degeneracies, sigma^2 from the phonon
 *   model plus static spread^2, only e0 and s0sq (and a mixture fraction) adjusted (./prescreen);
 * - 'refine': the ranking recipe (./recipe) refined by Levenberg-Marquardt with the fit
 *   module's problem builder and statistics (../fit/exafs).
 * A candidate that cannot be read or fitted gives a record with ok = false and the error
 * message, so one bad file does not stop a screen of thousands.
 */
import { resolve as resolvePath } from 'node:path';
import { ComputationError, InputError } from '../core/errors';
import { hashOf } from '../core/hash';
import { elementBySymbol } from '../elements/index';
import { correlatedDebyeMsrd, einsteinMsrd, reducedMass } from '../model/disorder';
import { buildExafsProblem } from '../fit/exafs/problem';
import type { NoiseBlock } from '../fit/noise-propagation';
import { refine, type FitStats } from '../fit/exafs/refine';
import type { ScatteringPath } from '../paths/pathset';
import { defaultProviders } from '../scatter/registry';
import type { AbsorberSelector } from '../structure/cluster';
import type { EdgeName } from '../elements/index';
import { candidateKey, componentsOf, FrameCache, type Candidate, type CandidateSpec, type ComponentShells, type FrameRef } from './candidates';
import { prescreen } from './prescreen';
import { rankingRecipe, type RankingRecipeOptions } from './recipe';
import { TableSource, type Environment, type TableOrigin, type TablePolicy } from './tables';
import { clustersOfCandidate, multipleScatteringForComponent, type MultipleScatteringSettings } from './multiple';
import type { ScatteringProvider, ScatteringTable } from '../scatter/provider';
import { distanceResolution, resolvedShells, type ResolvedShell } from './verdicts';
import { compileWindow, type DataWindow, type WindowSettings } from './window';

export type Stage = 'prescreen' | 'refine';

/** sigma^2 model of the pre-screen. */
export type PrescreenDisorder =
  | { kind: 'debye'; debyeTemperature: number; temperature: number }
  | { kind: 'einstein'; einsteinTemperature: number; temperature: number }
  | { kind: 'fixed'; msrd: number };

/** Every setting that decides a candidate's score (hashed into the settings hash). */
export interface CandidateSettings {
  absorber: AbsorberSelector;
  edge: EdgeName;
  /** Cluster radius, Å. */
  radius: number;
  /** Shell width, Å. */
  tolerance: number;
  window: WindowSettings;
  recipe: Omit<RankingRecipeOptions, 'kRange' | 'rRange'>;
  prescreen: { disorder: PrescreenDisorder; e0Range: [number, number] };
  provider: string;
  tables: TablePolicy;
  /** Starts of each refinement (1 = from the recipe's start values only). */
  starts: number;
  /** Opt-in multiple-scattering paths in the refinement (./multiple); absent = single scattering only. */
  multipleScattering?: MultipleScatteringSettings;
}

/** Everything a worker needs, as plain data (structured-clone safe). */
export interface RankJob {
  settings: CandidateSettings;
  settingsHash: string;
  data: { name: string; file: string | null; sha256: string | null; k: Float64Array; chi: Float64Array; noiseChi: number };
  referenceEnvironment: Environment | null;
  /** Folder against which candidate paths are resolved. */
  cwd: string;
  cache: boolean;
  cacheDir?: string;
}

/** A value as the summaries write it: fixed values carry a null error. */
export interface SummaryValue { value: number; error: number | null; state?: string }

/**
 * One shell of a fit summary, the same shape in both stages (the report reads it): pre-screened
 * shells are written with their structure distance, degeneracy and model msrd, all fixed.
 */
export interface ShellSummary {
  id: string;
  species: string;
  /** Index of the candidate component (mixture part) the shell belongs to. */
  component: number;
  /** msrd group of the refinement recipe (refinement only). */
  group?: string;
  /** Distance in the structure, Å. */
  r0: number;
  /** Neighbours in the structure (the shell's degeneracy). */
  degeneracy: number;
  n: number | SummaryValue;
  r: SummaryValue;
  msrd: SummaryValue;
  c3?: SummaryValue;
  c4?: SummaryValue;
}

/** The fit part of a record: refinement or pre-screen summary (plain JSON). */
export interface FitSummary {
  stage: Stage;
  stats: FitStats;
  params: Record<string, unknown>;
  shells: ShellSummary[];
  [key: string]: unknown;
}

/** A structure file as the records name it: with `#frame` for one frame of a multi-frame file. */
function sourceName(ref: FrameRef): string {
  return (ref.frames ?? 1) > 1 ? `${ref.file}#${ref.frame}` : ref.file;
}

/** Every structure file of a candidate, in order, each once (all parts of a mixture). */
export function filesOf(spec: CandidateSpec): string[] {
  if (spec.kind === 'structure') return [sourceName(spec.source)];
  if (spec.kind === 'ensemble') return [...new Set(spec.sources.map((s) => s.file))];
  return [...new Set(spec.parts.flatMap(filesOf))];
}

/** One line of a stream file. */
export interface CandidateRecord {
  key: string;
  index: number;
  name: string;
  kind: CandidateSpec['kind'];
  /** First structure file of the candidate. */
  file: string;
  frame?: number;
  stage: Stage;
  settingsHash: string;
  ok: boolean;
  error?: string;
  stats: FitStats | null;
  signature: ResolvedShell[] | null;
  /** Keys of candidates nested in this one (mixture parts). */
  contains?: string[];
  /** Every structure file of the candidate (all parts of a mixture). */
  files?: string[];
  /** A mixture's parts, in the order of the shells' `component` index. */
  components?: { name: string; files: string[] }[];
  fit: FitSummary | null;
  /** How the scattering tables of each component were made. */
  tables?: TableOrigin[];
  /** Wall time of this candidate, ms (not part of any result). */
  ms: number;
}

/** Per-thread evaluation state: the compiled window, tables and frame cache. */
export interface EvaluationContext {
  job: RankJob;
  window: DataWindow;
  tables: TableSource;
  frames: FrameCache;
  /** The provider behind `tables` (for multiple-scattering tables). */
  provider: ScatteringProvider;
  /** Noise blocks of the refinement problems, shared by all candidates (same data and window). */
  noiseCache: Map<string, NoiseBlock>;
}

/** Build the per-thread state for a job. */
export function makeContext(job: RankJob): EvaluationContext {
  const s = job.settings;
  const window = compileWindow({ name: job.data.name, k: job.data.k, chi: job.data.chi, noiseChi: job.data.noiseChi }, s.window);
  const provider = defaultProviders({ cache: job.cache, cacheDir: job.cacheDir }).get(s.provider);
  const kMax = s.window.kRange[1] + s.window.kTaper.taper;
  const tables = new TableSource(provider, s.tables, job.referenceEnvironment, kMax);
  return { job, window, tables, frames: new FrameCache((p) => resolvePath(job.cwd, p)), provider, noiseCache: new Map() };
}

function firstSource(spec: CandidateSpec): { file: string; frame?: number } {
  if (spec.kind === 'structure') return spec.source.frames === 1 ? { file: spec.source.file } : { file: spec.source.file, frame: spec.source.frame };
  if (spec.kind === 'ensemble') return { file: spec.sources[0].file };
  return firstSource(spec.parts[0]);
}

/** sigma^2 of a path under the pre-screen model (+ its static spread^2). */
export function prescreenMsrd(disorder: PrescreenDisorder, absorber: string, path: ScatteringPath, density: number): number {
  const static2 = path.spread * path.spread;
  if (disorder.kind === 'fixed') return disorder.msrd + static2;
  const mu = reducedMass(elementBySymbol(absorber).weight, elementBySymbol(path.scatterer).weight);
  if (disorder.kind === 'einstein') return einsteinMsrd(mu, disorder.einsteinTemperature, disorder.temperature) + static2;
  return correlatedDebyeMsrd(mu, disorder.debyeTemperature, disorder.temperature, path.r, density) + static2;
}

/** Paths inside the model range (r0 <= rMax + pathMargin). */
function pathsInRange(ctx: EvaluationContext, component: ComponentShells): ScatteringPath[] {
  const limit = ctx.job.settings.window.rRange[1] + (ctx.job.settings.recipe.pathMargin ?? 0.5) + 1e-9;
  return component.pathSet.paths.filter((p) => p.r <= limit);
}

function round(x: number, digits = 8): number {
  return Number.isFinite(x) ? Number(x.toPrecision(digits)) : x;
}

function evaluatePrescreen(ctx: EvaluationContext, components: ComponentShells[]): { stats: FitStats; fit: FitSummary; ok: boolean } {
  const s = ctx.job.settings;
  const parts = components.map((c) => {
    const paths = pathsInRange(ctx, c);
    const lookup = ctx.tables.forCandidate(c.pathSet.absorber, c.pathSet.edge, c.pathSet.environment);
    return {
      paths,
      tables: paths.map((p) => lookup(p.scatterer, p.r)),
      msrd: Float64Array.from(paths, (p) => prescreenMsrd(s.prescreen.disorder, c.pathSet.absorber, p, c.density)),
    };
  });
  if (parts.every((p) => p.paths.length === 0)) throw new InputError(`no shell lies within the model range (r0 <= ${s.window.rRange[1] + (s.recipe.pathMargin ?? 0.5)} Å)`);
  const s0sq = s.recipe.s0sq ?? 'free';
  const result = prescreen(ctx.window, parts.filter((p) => p.paths.length > 0), {
    s0sq, s0sqBounds: s.recipe.s0sqBounds ?? [0.5, 1.5], e0Range: s.prescreen.e0Range,
  });
  const shells: ShellSummary[] = parts.flatMap((p, component) => p.paths.map((path, i) => ({
    id: path.id, species: path.scatterer, component, r0: path.r, degeneracy: path.degeneracy,
    n: path.degeneracy, r: { value: path.r, error: null, state: 'fixed' }, msrd: { value: round(p.msrd[i]), error: null, state: 'fixed' },
  })));
  const params: Record<string, { value: number; error: number; state: string }> = {
    s0sq: { value: round(result.s0sq.value), error: round(result.s0sq.error), state: s0sq === 'free' ? 'free' : 'fixed' },
    e0: { value: round(result.e0.value), error: round(result.e0.error), state: 'free' },
  };
  if (result.fraction) params.fraction = { value: round(result.fraction.value), error: round(result.fraction.error), state: 'free' };
  const fit: FitSummary = {
    stage: 'prescreen',
    status: { converged: result.converged, message: result.message, evaluations: result.evaluations },
    stats: result.stats,
    params,
    shells,
    msrd: s.prescreen.disorder,
    warnings: result.warnings,
  };
  return { stats: result.stats, fit, ok: result.converged };
}

/**
 * Per-shell curves for up to 12 shells; beyond that (disordered clusters, ensembles) the sum of
 * each msrd group, labelled by the group's parameter name, to keep records small.
 */
function curvesByShellOrGroup(ids: readonly string[], groups: readonly string[], perPath: readonly Float64Array[]): { label: string; chi: number[] }[] {
  if (ids.length <= 12) return ids.map((id, i) => ({ label: id, chi: Array.from(perPath[i], (x) => round(x, 8)) }));
  const sums = new Map<string, Float64Array>();
  groups.forEach((g, i) => {
    const sum = sums.get(g) ?? new Float64Array(perPath[i].length);
    for (let j = 0; j < sum.length; j++) sum[j] += perPath[i][j];
    sums.set(g, sum);
  });
  return [...sums].map(([label, chi]) => ({ label, chi: Array.from(chi, (x) => round(x, 8)) }));
}

/** The multiple-scattering paths and tables of each component (empty lists when not asked for). */
function multipleOf(ctx: EvaluationContext, spec: CandidateSpec, components: ComponentShells[]): { paths: ScatteringPath[]; tables: ScatteringTable[]; found: number; skipped?: string }[] {
  const s = ctx.job.settings;
  const ms = s.multipleScattering;
  if (!ms) return components.map(() => ({ paths: [], tables: [], found: 0 }));
  const clusters = clustersOfCandidate(spec, { absorber: s.absorber, edge: s.edge, radius: s.radius, tolerance: s.tolerance }, ctx.frames);
  const maxHalfLength = s.window.rRange[1] + (s.recipe.pathMargin ?? 0.5);
  const shared = s.tables.mode === 'shared' && ctx.job.referenceEnvironment !== null;
  return components.map((c, ci) => {
    const paths = pathsInRange(ctx, c);
    const lookup = ctx.tables.forCandidate(c.pathSet.absorber, c.pathSet.edge, c.pathSet.environment);
    return multipleScatteringForComponent(ctx.provider, clusters[ci], { paths, tables: paths.map((p) => lookup(p.scatterer, p.r)) }, {
      absorber: c.pathSet.absorber, edge: c.pathSet.edge,
      environment: shared ? ctx.job.referenceEnvironment as Environment : c.pathSet.environment,
      maxHalfLength, kRange: s.window.kRange, kMax: s.window.kRange[1] + s.window.kTaper.taper,
    }, ms);
  });
}

function evaluateRefine(ctx: EvaluationContext, components: ComponentShells[], spec: CandidateSpec): { stats: FitStats; fit: FitSummary; ok: boolean } {
  const s = ctx.job.settings;
  const w = s.window;
  const multiple = multipleOf(ctx, spec, components);
  const msTable = new Map<ScatteringPath, ScatteringTable>();
  multiple.forEach((m) => m.paths.forEach((p, i) => msTable.set(p, m.tables[i])));
  const recipe = rankingRecipe(
    components.map((c, i) => ({ paths: [...c.pathSet.paths, ...multiple[i].paths], share: components.length === 1 ? 'all' : i === 0 ? 'fraction' : 'rest' })),
    { ...s.recipe, kRange: w.kRange, rRange: w.rRange },
  );
  if (s.multipleScattering) {
    const kept = multiple.reduce((a, m) => a + m.paths.length, 0);
    const found = multiple.reduce((a, m) => a + m.found, 0);
    const skipped = [...new Set(multiple.map((m) => m.skipped).filter((x) => x !== undefined))];
    recipe.description.push(skipped.length > 0 && kept === 0
      ? `single scattering only: ${skipped.join('; ')}`
      : `${kept} of ${found} multiple-scattering path groups kept (plane waves, exact curved waves for collinear paths; at least ${s.multipleScattering.minImportance} of the strongest shell), `
        + 'n fixed at their degeneracies, path length L = sum of the legs of the structure, R = L/2 scaled by the same expansion factor as the shells, '
        + 'msrd free and shared in bands of R among multiple-scattering paths (labels ms:...), a collinear path sharing the msrd of the shell of the atom it turns at'
        + (skipped.length > 0 ? `; single scattering for some components: ${skipped.join('; ')}` : ''));
  }
  const lookups = components.map((c) => ctx.tables.forCandidate(c.pathSet.absorber, c.pathSet.edge, c.pathSet.environment));
  const tables = recipe.paths.map((p, i) => msTable.get(p) ?? lookups[recipe.componentOf[i]](p.scatterer, p.r));
  const m = ctx.job.data;
  const problem = buildExafsProblem(recipe.parameters, [{
    name: m.name, k: m.k, chi: m.chi, noiseChi: m.noiseChi, paths: recipe.paths, tables, rules: recipe.rules,
    kRange: w.kRange, kWeightings: w.kWeightings, kTaper: w.kTaper, rRange: w.rRange, rTaper: w.rTaper, fitIn: w.fitIn,
  }], { noiseCache: ctx.noiseCache });
  const result = refine(problem, { starts: s.starts });
  const fit: FitSummary = {
    stage: 'refine',
    status: result.status,
    stats: result.stats,
    params: result.params,
    shells: result.shells.map((sh, i) => ({
      id: sh.id, species: sh.species, component: recipe.componentOf[i], group: recipe.groupOf[i], r0: sh.r0, degeneracy: recipe.paths[i].degeneracy,
      n: sh.n, r: sh.r, msrd: sh.msrd,
    })),
    correlations: result.correlations,
    warnings: result.warnings,
    plausibility: result.plausibility,
    recipe: recipe.description,
    // unweighted chi(k) of data, model and each shell, in the shape of the fit document's curves
    curves: result.curves.map((c) => ({
      name: c.name,
      kWeighting: w.kWeightings[0],
      k: Array.from(c.k, (x) => round(x, 8)),
      data: Array.from(c.data, (x) => round(x, 8)),
      model: Array.from(c.model, (x) => round(x, 8)),
      window: { shape: w.kTaper.shape, min: w.kRange[0], max: w.kRange[1], taper: w.kTaper.taper },
      rRange: w.rRange,
      shells: curvesByShellOrGroup(result.shells.map((sh) => sh.id), recipe.groupOf, c.perPath),
    }))[0],
  };
  const ok = Number.isFinite(result.stats.reducedChiSquare) && result.status.code !== 'failed';
  return { stats: result.stats, fit, ok };
}

/** Score one candidate in one stage. Never throws for a bad candidate: see the module header. */
export function evaluateCandidate(ctx: EvaluationContext, candidate: Candidate, stage: Stage): CandidateRecord {
  const started = performance.now();
  const { spec } = candidate;
  const source = firstSource(spec);
  const base: CandidateRecord = {
    key: candidate.key, index: candidate.index, name: spec.name, kind: spec.kind, file: source.file, stage,
    settingsHash: ctx.job.settingsHash, ok: false, stats: null, signature: null, fit: null, ms: 0,
  };
  if (source.frame !== undefined) base.frame = source.frame;
  base.files = filesOf(spec);
  if (spec.kind === 'mixture') {
    base.contains = spec.parts.map(candidateKey);
    base.components = spec.parts.map((p) => ({ name: p.name, files: filesOf(p) }));
  }
  try {
    const s = ctx.job.settings;
    const components = componentsOf(spec, { absorber: s.absorber, edge: s.edge, radius: s.radius, tolerance: s.tolerance }, ctx.frames);
    base.tables = components.map((c) => ctx.tables.originOf(c.pathSet.environment));
    const scored = stage === 'prescreen' ? evaluatePrescreen(ctx, components) : evaluateRefine(ctx, components, spec);
    base.ok = scored.ok;
    base.stats = scored.stats;
    base.fit = scored.fit;
    if (components.length === 1) {
      base.signature = resolvedShells(pathsInRange(ctx, components[0]), distanceResolution(s.window.kRange))
        .map((x) => ({ species: x.species, n: round(x.n, 10), r: round(x.r, 10) }));
    }
  } catch (error) {
    if (!(error instanceof InputError) && !(error instanceof ComputationError) && !(error instanceof RangeError)) throw error;
    base.ok = false;
    base.error = error.message;
  }
  base.ms = Math.round((performance.now() - started) * 10) / 10;
  return base;
}

/** Hash of the settings, data and reference environment: the identity of a run's results. */
export function settingsHashOf(settings: CandidateSettings, data: { sha256: string | null; k: Float64Array; chi: Float64Array }, reference: Environment | null, version: string): string {
  const dataId = data.sha256 ?? hashOf({ k: data.k, chi: data.chi });
  return hashOf({ settings, data: dataId, reference, version }).slice(0, 16);
}
