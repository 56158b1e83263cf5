/**
 * The contract between the fit and rank stages and the report: the JSON shapes the report reads,
 * validated at the boundary (zod), and the one normalised view the renderers work from.
 *
 * The shapes follow the fit JSON of the fit issue and the rank JSON of the rank issue:
 *
 *     fit:  { "stats": { "rFactor", "chiSquare", "reducedChiSquare", "nIndependent", "nVaried",
 *                        "aic", "bic" },
 *             "params": { "s0sq": { "value", "error", "state" }, "e0": { ... } },
 *             "shells": [ { "species", "n", "r": { "value", "error" }, "msrd": { "value", "error" } } ],
 *             "correlations": [ ... ], "status": { ... }, "provenance": { ... } }
 *     rank: { "candidates": [ { "name", "file", "rank", "verdict", "stats": { ...as in fit... },
 *                               "fit": { ...the fit JSON... } } ],
 *             "settings": { ... }, "provenance": { ... } }
 *
 * Everything the issues leave open is accepted leniently and documented here, so the lead can
 * reconcile names when fit and rank land:
 * - numbers may be `null` (our JSON writer turns NaN and Infinity into null): shown as "n/a";
 * - `shells[].n` is a number (fixed at the structure's value) or a `{ value, error, state }`;
 *   shells may also carry `c3`, `c4`, `label`, `group`, `r0` (structure distance), `degeneracy`
 *   (or `n0`) and `component` (index into the candidate's `components`, the parts of a mixture);
 *   without a `label` a shell is named by species, distance and degeneracy ("O 3.317 Å (4)");
 * - a candidate may list `files` (every structure file, all parts of a mixture) and `components`
 *   (`[{ "name", "files" }]`, a mixture's parts); `stats` and `fit` are null for a failed candidate;
 * - `correlations` is either a list of pairs `{ "a", "b", "value" }` (also `names: [a, b]` or
 *   `params: [a, b]`) or a matrix `{ "names": [...], "matrix": [[...]] }`;
 * - `warnings` (top level, per fit or per candidate) are strings or `{ "message" }` objects;
 * - a candidate's significance test is `pValue` beside the stats or
 *   `significance: { test, statistic, pValue, level }` or (as the rank stage writes it)
 *   `test: { method, statistic, d1, d2, pValue }`;
 * - a rank result may state the "not distinguishable from the best" band of the score chart as
 *   `band: { metric, lower, upper, level }`; without it the band is drawn from the best score to
 *   the worst score among candidates whose verdict says "not distinguishable";
 * - **curves** (proposed here; neither issue fixes them): a fit may carry the data and model it was
 *   refined on, so the report can draw overlays:
 *
 *       "curves": { "kWeighting": w, "k": [1/Å, uniform from a multiple of its step],
 *                   "data": [chi(k), unweighted], "model": [chi(k), unweighted],
 *                   "window": { "shape", "min", "max", "taper" },      // k window of the transform
 *                   "rRange": [Å, Å],                                  // fit range in R, if any
 *                   "shells": [ { "label", "chi": [chi_j(k), unweighted] } ] }
 *
 *   The R-space curves are computed by the report from these with the project's transform
 *   (src/numeric/fourier.ts), so data and models are always transformed alike.
 */
import { z } from 'zod';
import { InputError } from '../core/errors';

/** A nullable number as our JSON writes it (null for NaN/Infinity). */
const num = z.number().nullable();

const valueWithErrorSchema = z.looseObject({
  value: num,
  error: num.optional(),
  state: z.string().optional(),
  expression: z.string().optional(),
  bounds: z.array(num).optional(),
});

const warningSchema = z.union([z.string(), z.looseObject({ message: z.string() })]);

const statsSchema = z.looseObject({
  rFactor: num.optional(),
  chiSquare: num.optional(),
  reducedChiSquare: num.optional(),
  nIndependent: num.optional(),
  nVaried: num.optional(),
  aic: num.optional(),
  bic: num.optional(),
  misfitRatio: num.optional(),
});

const shellSchema = z.looseObject({
  species: z.string(),
  n: z.union([num, valueWithErrorSchema]),
  r: valueWithErrorSchema,
  msrd: valueWithErrorSchema,
  c3: valueWithErrorSchema.optional(),
  c4: valueWithErrorSchema.optional(),
  label: z.string().optional(),
  group: z.string().optional(),
  // the rank stage's extras: structure distance and degeneracy, and the mixture part it belongs to
  r0: z.number().optional(),
  degeneracy: num.optional(),
  n0: num.optional(),
  component: z.number().int().nonnegative().optional(),
});

const correlationPairSchema = z.looseObject({
  a: z.string().optional(),
  b: z.string().optional(),
  names: z.array(z.string()).optional(),
  params: z.array(z.string()).optional(),
  value: num,
});

const correlationMatrixSchema = z.looseObject({ names: z.array(z.string()), matrix: z.array(z.array(num)) });

const windowSchema = z.looseObject({ shape: z.string(), min: z.number(), max: z.number(), taper: z.number().optional() });

const curvesSchema = z.looseObject({
  kWeighting: z.number(),
  k: z.array(z.number()),
  data: z.array(num),
  model: z.array(num),
  window: windowSchema.optional(),
  rRange: z.array(z.number()).length(2).optional(),
  shells: z.array(z.looseObject({ label: z.string(), chi: z.array(num) })).optional(),
});

const fitSchema = z.looseObject({
  name: z.string().optional(),
  file: z.string().optional(),
  stats: statsSchema,
  params: z.record(z.string(), valueWithErrorSchema),
  shells: z.array(shellSchema).default([]),
  correlations: z.union([z.array(correlationPairSchema), correlationMatrixSchema]).optional(),
  status: z.looseObject({}).optional(),
  warnings: z.array(warningSchema).optional(),
  curves: curvesSchema.optional(),
  settings: z.looseObject({}).optional(),
  provenance: z.looseObject({}).optional(),
});

const candidateSchema = z.looseObject({
  name: z.string(),
  file: z.string().optional(),
  files: z.array(z.string()).optional(),
  components: z.array(z.looseObject({ name: z.string(), files: z.array(z.string()).optional() })).optional(),
  rank: z.number(),
  verdict: z.string(),
  // null for a candidate that could not be read or fitted (the rank stage writes its error)
  stats: statsSchema.nullable(),
  fit: fitSchema.nullable().optional(),
  pValue: num.optional(),
  significance: z.looseObject({ test: z.string().optional(), statistic: num.optional(), pValue: num.optional(), level: num.optional() }).optional(),
  // the rank stage's form: test: { method, statistic, d1, d2, pValue } (null for the best)
  test: z.looseObject({ method: z.string().optional(), statistic: num.optional(), pValue: num.optional() }).nullable().optional(),
  warnings: z.array(warningSchema).optional(),
});

const rankSchema = z.looseObject({
  candidates: z.array(candidateSchema),
  settings: z.looseObject({}).optional(),
  provenance: z.looseObject({}).optional(),
  warnings: z.array(warningSchema).optional(),
  band: z.looseObject({ metric: z.string().optional(), lower: num.optional(), upper: num.optional(), level: num.optional() }).optional(),
  data: z.looseObject({}).optional(),
});

/** A fit JSON as the report reads it (see the module header for the lenient parts). */
export type FitResultJson = z.infer<typeof fitSchema>;
/** One candidate of a rank JSON. */
export type RankCandidateJson = z.infer<typeof candidateSchema>;
/** A rank JSON as the report reads it. */
export type RankResultJson = z.infer<typeof rankSchema>;
export type FitCurvesJson = z.infer<typeof curvesSchema>;

/** A number with its standard uncertainty and how the fit treated it. */
export interface ValueWithError {
  /** null when the result held NaN or Infinity. */
  value: number | null;
  /** Standard uncertainty (1 sigma); null or absent when unknown; 0 when exact. */
  error: number | null;
  /** 'free' | 'fixed' | 'tied' (free text accepted). */
  state?: string;
  /** The expression of a tied parameter. */
  expression?: string;
}

/** Fit statistics; every entry may be missing (null). */
export interface FitStatistics {
  rFactor: number | null;
  chiSquare: number | null;
  reducedChiSquare: number | null;
  nIndependent: number | null;
  nVaried: number | null;
  aic: number | null;
  bic: number | null;
  /** Sum of squares over its expectation for noise alone (fits with propagated errors). */
  misfitRatio: number | null;
}

/** One shell (or group) row of a fit. */
export interface ShellView {
  label: string;
  species: string;
  n: ValueWithError;
  r: ValueWithError;
  msrd: ValueWithError;
  c3?: ValueWithError;
  c4?: ValueWithError;
}

export interface CorrelationView { a: string; b: string; value: number }

/** The curves of one fit, typed arrays, unweighted chi(k). */
export interface CurvesView {
  kWeighting: number;
  k: Float64Array;
  data: Float64Array;
  model: Float64Array;
  window?: { shape: string; min: number; max: number; taper: number };
  rRange?: [number, number];
  shells: { label: string; chi: Float64Array }[];
}

/** Plain-word class of a verdict, for colours and the band. */
export type VerdictClass = 'best' | 'indistinguishable' | 'worse' | 'rejected' | 'other';

/** One fitted candidate, as every renderer sees it. */
export interface CandidateView {
  name: string;
  /** Every structure file, joined with ' + ' (all parts of a mixture). */
  file?: string;
  files: string[];
  /** Names of a mixture's parts (empty for a single structure); shells name their part. */
  components: string[];
  rank: number;
  verdict: string;
  verdictClass: VerdictClass;
  stats: FitStatistics;
  pValue: number | null;
  significanceTest?: string;
  params: Record<string, ValueWithError>;
  shells: ShellView[];
  correlations: CorrelationView[];
  status?: Record<string, unknown>;
  warnings: string[];
  curves?: CurvesView;
  settings?: Record<string, unknown>;
  provenance?: Record<string, unknown>;
}

/** Everything a report shows, from either a fit or a rank result. */
export interface ReportModel {
  kind: 'fit' | 'rank';
  /** Candidates in rank order (one for a fit result). */
  candidates: CandidateView[];
  settings?: Record<string, unknown>;
  provenance?: Record<string, unknown>;
  warnings: string[];
  band?: { metric?: string; lower: number | null; upper: number | null; level?: number | null };
  /** The document as read, for the provenance section and the JSON copy. */
  source: unknown;
}

/** Which kind of result a parsed JSON document is, or null when neither. */
export function detectResultKind(document: unknown): 'fit' | 'rank' | null {
  if (document === null || typeof document !== 'object' || Array.isArray(document)) return null;
  const d = document as Record<string, unknown>;
  if (Array.isArray(d.candidates)) return 'rank';
  if (d.stats !== undefined && typeof d.stats === 'object' && d.params !== undefined && typeof d.params === 'object') return 'fit';
  return null;
}

/** Class of a verdict in plain words ('best', 'not distinguishable from the best', 'worse at 95 %', 'rejected'). */
export function classifyVerdict(verdict: string): VerdictClass {
  const v = verdict.toLowerCase();
  if (v.includes('not distinguishable') || v.includes('indistinguishable')) return 'indistinguishable';
  if (v.includes('reject')) return 'rejected';
  if (v.includes('worse')) return 'worse';
  if (v.startsWith('best')) return 'best';
  return 'other';
}

function issueToError(error: z.ZodError, file: string | undefined, prefix: string): InputError {
  const issue = error.issues[0];
  const key = [prefix, ...issue.path.map(String)].filter((x) => x !== '').join('.');
  return new InputError(issue.message, { file, key: key || undefined });
}

function warningText(w: string | { message: string }): string {
  return typeof w === 'string' ? w : w.message;
}

function valueView(v: z.infer<typeof valueWithErrorSchema> | number | null | undefined): ValueWithError {
  if (v === undefined || v === null) return { value: null, error: null };
  if (typeof v === 'number') return { value: v, error: null, state: 'fixed' };
  return { value: v.value, error: v.error ?? null, state: v.state, expression: v.expression };
}

function statsView(s: z.infer<typeof statsSchema>): FitStatistics {
  return {
    rFactor: s.rFactor ?? null,
    chiSquare: s.chiSquare ?? null,
    reducedChiSquare: s.reducedChiSquare ?? null,
    nIndependent: s.nIndependent ?? null,
    nVaried: s.nVaried ?? null,
    aic: s.aic ?? null,
    bic: s.bic ?? null,
    misfitRatio: s.misfitRatio ?? null,
  };
}

function toFloat(values: (number | null)[]): Float64Array {
  return Float64Array.from(values, (x) => (x === null ? Number.NaN : x));
}

function curvesView(c: FitCurvesJson | undefined, file: string | undefined, key: string): CurvesView | undefined {
  if (!c) return undefined;
  const n = c.k.length;
  const check = (name: string, length: number) => {
    if (length !== n) throw new InputError(`has ${length} values but curves.k has ${n}`, { file, key: `${key}.curves.${name}` });
  };
  check('data', c.data.length);
  check('model', c.model.length);
  (c.shells ?? []).forEach((s, i) => check(`shells.${i}.chi`, s.chi.length));
  return {
    kWeighting: c.kWeighting,
    k: Float64Array.from(c.k),
    data: toFloat(c.data),
    model: toFloat(c.model),
    window: c.window ? { shape: c.window.shape, min: c.window.min, max: c.window.max, taper: c.window.taper ?? 1 } : undefined,
    rRange: c.rRange ? [c.rRange[0], c.rRange[1]] : undefined,
    shells: (c.shells ?? []).map((s) => ({ label: s.label, chi: toFloat(s.chi) })),
  };
}

function correlationsView(c: FitResultJson['correlations']): CorrelationView[] {
  if (!c) return [];
  const out: CorrelationView[] = [];
  if (Array.isArray(c)) {
    for (const pair of c) {
      const names = pair.names ?? pair.params ?? [pair.a ?? '?', pair.b ?? '?'];
      if (pair.value !== null) out.push({ a: names[0] ?? '?', b: names[1] ?? '?', value: pair.value });
    }
    return out;
  }
  for (let i = 0; i < c.names.length; i++) {
    for (let j = i + 1; j < c.names.length; j++) {
      const value = c.matrix[i]?.[j];
      if (value !== undefined && value !== null) out.push({ a: c.names[i], b: c.names[j], value });
    }
  }
  return out;
}

/**
 * A shell's name in tables: its label, or species, distance and degeneracy ("O 3.317 Å (4)"; three
 * decimals keep apart shells that differ by more than the usual 0.01 Å shell width), prefixed by
 * the mixture part it belongs to.
 */
export function shellLabel(shell: z.infer<typeof shellSchema>, index: number, components: readonly string[] = []): string {
  const part = components.length > 1 && shell.component !== undefined ? `${components[shell.component] ?? `part ${shell.component + 1}`}: ` : '';
  if (shell.label) return part + shell.label;
  const r = shell.r0 ?? shell.r.value;
  const n = shell.degeneracy ?? shell.n0 ?? (typeof shell.n === 'number' || shell.n === null ? shell.n : shell.n.value);
  if (r === null || r === undefined) return `${part}${shell.species} ${index + 1}`;
  const count = n === null || n === undefined ? '' : ` (${Number(n.toFixed(2))})`;
  return `${part}${shell.species} ${r.toFixed(3)} Å${count}`;
}

function fitCandidate(
  fit: FitResultJson,
  base: {
    name: string; file?: string; files?: string[]; components?: string[]; rank: number; verdict: string;
    stats?: z.infer<typeof statsSchema>; pValue: number | null; test?: string; warnings: string[];
  },
  file: string | undefined,
  key: string,
): CandidateView {
  const components = base.components ?? [];
  return {
    name: base.name,
    file: base.files && base.files.length > 0 ? base.files.join(' + ') : base.file,
    files: base.files ?? (base.file ? [base.file] : []),
    components,
    rank: base.rank,
    verdict: base.verdict,
    verdictClass: classifyVerdict(base.verdict),
    stats: statsView(base.stats ?? fit.stats),
    pValue: base.pValue,
    significanceTest: base.test,
    params: Object.fromEntries(Object.entries(fit.params).map(([k, v]) => [k, valueView(v)])),
    shells: fit.shells.map((s, i) => ({
      label: shellLabel(s, i, components),
      species: s.species,
      n: valueView(s.n),
      r: valueView(s.r),
      msrd: valueView(s.msrd),
      c3: s.c3 ? valueView(s.c3) : undefined,
      c4: s.c4 ? valueView(s.c4) : undefined,
    })),
    correlations: correlationsView(fit.correlations),
    status: fit.status as Record<string, unknown> | undefined,
    warnings: [...base.warnings, ...(fit.warnings ?? []).map(warningText)],
    curves: curvesView(fit.curves, file, key),
    settings: fit.settings as Record<string, unknown> | undefined,
    provenance: fit.provenance as Record<string, unknown> | undefined,
  };
}

/**
 * Validate a parsed fit or rank JSON document and build the report's view of it.
 * @param document the parsed JSON
 * @param file the file it came from, for error messages
 * @throws InputError naming the file and the key when the document is neither a fit nor a rank
 *   result, or when a field has the wrong type.
 */
export function reportModelFrom(document: unknown, file?: string): ReportModel {
  const kind = detectResultKind(document);
  if (kind === null) {
    throw new InputError(
      'is neither a fit result (an object with "stats" and "params") nor a rank result (an object with a "candidates" list)',
      { file },
    );
  }
  if (kind === 'fit') {
    const parsed = fitSchema.safeParse(document);
    if (!parsed.success) throw issueToError(parsed.error, file, '');
    const fit = parsed.data;
    const name = fit.name ?? fit.file ?? 'fit';
    return {
      kind,
      candidates: [fitCandidate(fit, { name, file: fit.file, rank: 1, verdict: 'single fit', pValue: null, warnings: [] }, file, '')],
      settings: fit.settings as Record<string, unknown> | undefined,
      provenance: fit.provenance as Record<string, unknown> | undefined,
      warnings: [],
      source: document,
    };
  }
  const parsed = rankSchema.safeParse(document);
  if (!parsed.success) throw issueToError(parsed.error, file, '');
  const rank = parsed.data;
  const shortNames = displayNames(rank.candidates.map((c) => c.name));
  const componentNames = rank.candidates.map((c) => (c.components ? displayNames(c.components.map((p) => p.name)) : undefined));
  const candidates = rank.candidates
    .map((c, index) => {
      const base = {
        name: shortNames[index],
        file: c.file,
        files: c.files,
        components: componentNames[index],
        rank: c.rank,
        verdict: c.verdict,
        stats: c.stats ?? undefined,
        pValue: c.significance?.pValue ?? c.test?.pValue ?? c.pValue ?? null,
        test: c.significance?.test ?? c.test?.method,
        warnings: (c.warnings ?? []).map(warningText),
      };
      const fit: FitResultJson = c.fit ?? { stats: c.stats ?? {}, params: {}, shells: [] };
      return fitCandidate(fit, base, file, `candidates.${index}.fit`);
    })
    .sort((x, y) => x.rank - y.rank);
  const band = rank.band
    ? { metric: rank.band.metric, lower: rank.band.lower ?? null, upper: rank.band.upper ?? null, level: rank.band.level ?? null }
    : undefined;
  return {
    kind,
    candidates,
    settings: rank.settings as Record<string, unknown> | undefined,
    provenance: rank.provenance as Record<string, unknown> | undefined,
    warnings: (rank.warnings ?? []).map(warningText),
    band,
    source: document,
  };
}

/**
 * Candidate names as plots and tables show them: structure-file paths inside a name reduced to the
 * file's base name without its extension ("mixture of structures/a.xyz and structures/b.xyz" ->
 * "mixture of a and b"), when that keeps every name distinct; otherwise the names as given.
 * The full names stay in the JSON and in each candidate's file field.
 */
export function displayNames(names: readonly string[]): string[] {
  const shorten = (name: string) => name.replace(/(?:[^\s#]*\/)?([^\s/#]+?)\.(?:xyz|extxyz|cif|pdb)\b/gi, '$1');
  const short = names.map(shorten);
  return new Set(short).size === short.length ? short : [...names];
}
