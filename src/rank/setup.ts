/**
 * Setting up a ranking: the user's options with every default filled in, the measured data, the
 * reference environment for shared scattering tables, and the settings hash that identifies the
 * run's results (for resume and merge).
 *
 * Defaults (each recorded in the settings of the output):
 * - window: k 3-14 1/Å (14 lowered to the end of the data, in steps of 0.5), R 1.2-4.0 Å,
 *   k-weight 2, R-space fit, Hann windows with tapers 1 1/Å and 0.5 Å. R reaches 4 Å so that
 *   the second and third shells of close-packed structures, which tell fcc from bcc and hcp and
 *   zinc blende from rock salt, are inside the window (common practice, no source);
 * - shells: cluster radius rMax + pathMargin + 0.5 Å, shell width 0.01 Å;
 * - recipe: ./recipe defaults (bands of 0.3 Å, s0sq free in [0.5, 1.5], one expansion factor);
 * - pre-screen: correlated Debye sigma^2 with a Debye temperature of 300 K at 300 K (an
 *   order-of-magnitude choice for metals and simple compounds near room temperature, common
 *   practice, no source; give --debye-temp or --einstein-temp for the sample), e0 searched in
 *   -15..15 eV;
 * - tables: 'own' whatever the number of candidates ('auto' means 'own': a candidate's result never
 *   depends on how many others are ranked with it; ./tables explains both policies).
 */
import { resolve as resolvePath } from 'node:path';
import { InputError } from '../core/errors';
import { checkWindowSettings } from '../fit/exafs/window-check';
import { MAX_STARTS } from '../fit/exafs/refine';
import { hashOf } from '../core/hash';
import { SHELLRANK_VERSION } from '../core/provenance';
import type { EdgeName } from '../elements/index';
import type { FitDomain } from '../fit/exafs/problem';
import type { WindowShape } from '../numeric/window';
import type { Chi } from '../reduce/index';
import type { AbsorberSelector } from '../structure/cluster';
import { componentsOf, FrameCache, makeCandidates, type Candidate, type CandidateSpec } from './candidates';
import { settingsHashOf, type CandidateSettings, type PrescreenDisorder, type RankJob } from './evaluate';
import { DEFAULT_MULTIPLE_SCATTERING, type MultipleScatteringSettings } from './multiple';
import { DEFAULT_SHARED_TABLE_STEP, type Environment, type TableMode } from './tables';

/** What the user chooses; everything but the absorber has a default. */
export interface RankOptions {
  absorber: AbsorberSelector;
  edge?: EdgeName;
  radius?: number;
  tolerance?: number;
  kRange?: [number, number];
  rRange?: [number, number];
  kWeightings?: number[];
  fitIn?: FitDomain;
  kTaper?: { shape: WindowShape; taper: number };
  rTaper?: { shape: WindowShape; taper: number };
  pathMargin?: number;
  bandWidth?: number;
  s0sq?: number | 'free';
  s0sqBounds?: [number, number];
  distances?: 'expand' | 'fixed';
  maxFree?: number;
  disorder?: PrescreenDisorder;
  e0Range?: [number, number];
  provider?: string;
  tables?: TableMode | 'auto';
  tableStep?: number;
  starts?: number;
  /** Multiple-scattering paths in the refinement (./multiple): on by default; false = single scattering only. */
  multipleScattering?: boolean | Partial<MultipleScatteringSettings>;
}

/** Measured data for a ranking. */
export interface RankData {
  name: string;
  file: string | null;
  sha256: string | null;
  chi: Chi;
}

export interface PreparedRanking {
  job: RankJob;
  candidates: Candidate[];
}

/** Default upper k: 14 1/Å, or the end of the data rounded down to 0.5 1/Å. */
export function defaultKRange(chi: Chi): [number, number] {
  const last = chi.k[chi.k.length - 1];
  return [3, Math.min(14, Math.floor(last * 2) / 2)];
}

/** Fill in every default (see the module header). */
export function resolveSettings(options: RankOptions, chi: Chi, _candidateCount?: number): CandidateSettings {
  const rRange = options.rRange ?? [1.2, 4.0];
  const pathMargin = options.pathMargin ?? 0.5;
  const tables = options.tables ?? 'auto';
  const mode: TableMode = tables === 'auto' ? 'own' : tables;
  const settings: CandidateSettings = {
    absorber: options.absorber,
    edge: options.edge ?? 'K',
    radius: options.radius ?? rRange[1] + pathMargin + 0.5,
    tolerance: options.tolerance ?? 0.01,
    window: {
      kRange: options.kRange ?? defaultKRange(chi),
      rRange,
      kWeightings: options.kWeightings ?? [2],
      fitIn: options.fitIn ?? 'R',
      kTaper: options.kTaper ?? { shape: 'hann', taper: 1 },
      rTaper: options.rTaper ?? { shape: 'hann', taper: 0.5 },
    },
    recipe: {
      pathMargin,
      bandWidth: options.bandWidth ?? 0.3,
      s0sq: options.s0sq ?? 'free',
      s0sqBounds: options.s0sqBounds ?? [0.5, 1.5],
      distances: options.distances ?? 'expand',
      ...(options.maxFree !== undefined ? { maxFree: options.maxFree } : {}),
    },
    prescreen: {
      disorder: options.disorder ?? { kind: 'debye', debyeTemperature: 300, temperature: 300 },
      e0Range: options.e0Range ?? [-15, 15],
    },
    provider: options.provider ?? 'firstPrinciples',
    tables: { mode, distanceStep: options.tableStep ?? (mode === 'shared' ? DEFAULT_SHARED_TABLE_STEP : 0) },
    starts: options.starts ?? 1,
    ...(options.multipleScattering === false ? {} : { multipleScattering: { ...DEFAULT_MULTIPLE_SCATTERING, ...(typeof options.multipleScattering === 'object' ? options.multipleScattering : {}) } }),
  };
  const w = settings.window;
  checkWindowSettings({ kRange: w.kRange, weights: w.kWeightings, kTaper: w.kTaper.taper, rRange: w.rRange, rTaper: w.rTaper.taper });
  if (settings.starts > MAX_STARTS) throw new InputError(`must be at most ${MAX_STARTS}, got ${settings.starts}`, { key: '--starts' });
  if (options.tableStep !== undefined && !(options.tableStep > 0)) throw new InputError(`must be greater than 0, got ${options.tableStep}`, { key: '--table-step' });
  if (options.tableStep !== undefined && options.tableStep > 0.5) throw new InputError(`must be at most 0.5 Å (a coarser rounding changes the shells), got ${options.tableStep}`, { key: '--table-step' });
  if (settings.radius < rRange[1] + pathMargin) {
    throw new InputError(`the cluster radius ${settings.radius} Å is smaller than the model range ${rRange[1] + pathMargin} Å (R max + margin)`, { key: '--radius' });
  }
  return settings;
}

/**
 * Prepare a ranking: settings, the reference environment of shared tables (only when
 * `reference` is given) and the job for the workers.
 * @throws InputError when there are no candidates or the reference cannot be read.
 */
export function prepareRanking(data: RankData, specs: readonly CandidateSpec[], options: RankOptions, context: { cwd: string; cache?: boolean; cacheDir?: string; reference?: CandidateSpec }): PreparedRanking {
  if (specs.length === 0) throw new InputError('no candidates to rank');
  const candidates = makeCandidates(specs);
  const keys = new Map<string, string>();
  for (const c of candidates) {
    const other = keys.get(c.key);
    if (other !== undefined) throw new InputError(`two candidates are the same (${other} and ${c.spec.name}); give each once`);
    keys.set(c.key, c.spec.name);
  }
  const settings = resolveSettings(options, data.chi, candidates.length);
  let reference: Environment | null = null;
  if (settings.tables.mode === 'shared' && context.reference) {
    // an explicit reference (a screen's base) is a setting of the run, never one of the candidates
    const shellSettings = { absorber: settings.absorber, edge: settings.edge, radius: settings.radius, tolerance: settings.tolerance };
    const cache = new FrameCache((p) => resolvePath(context.cwd, p));
    reference = componentsOf(context.reference, shellSettings, cache)[0].pathSet.environment;
  }
  if (settings.tables.mode === 'shared') {
    settings.tables.environment = reference ? { reference: hashOf(reference).slice(0, 16) } : 'candidate';
  }
  const measured = { k: data.chi.k, chi: data.chi.chi, sha256: data.sha256 };
  const settingsHash = settingsHashOf(settings, measured, reference, SHELLRANK_VERSION);
  const job: RankJob = {
    settings,
    settingsHash,
    data: { name: data.name, file: data.file, sha256: data.sha256, k: Float64Array.from(data.chi.k), chi: Float64Array.from(data.chi.chi), noiseChi: data.chi.noise.k },
    referenceEnvironment: reference,
    cwd: context.cwd,
    cache: context.cache ?? true,
    ...(context.cacheDir ? { cacheDir: context.cacheDir } : {}),
  };
  return { job, candidates };
}
