/**
 * The Chi type: a reduced spectrum, chi(k) on a uniform k grid (0.05 1/Å from 0), with E0, the
 * edge step, a noise estimate, the normalised mu(E) it came from and the full record of the
 * reduction (every choice, with defaults filled in) and its provenance. This is what fits consume.
 *
 * Saved as our own JSON document ("shellrank-chi", version 1), written and read without loss
 * (JavaScript numbers print in their shortest round-trip form):
 *
 *     {
 *       "format": "shellrank-chi", "formatVersion": 1,
 *       "element": "Cu" | null, "edge": "K" | null,
 *       "e0": eV, "edgeStep": mu units,
 *       "k": [1/Å, uniform], "chi": [dimensionless, same length],
 *       "noise": { "k": rms of chi per point, "r": rms |chi(R)| (Å^-(w+1)), "kWeighting": w,
 *                  "kRange": [1/Å, 1/Å], "rRange": [Å, Å], "windowShape": "hann", "windowTaper": 1/Å },
 *       "normalised": null | { "energy": [eV], "mu": [], "preEdge": [], "postEdge": [],
 *                  "normalised": [], "detrended": [], "background": [mu units; pre-edge line below E0] },
 *       "reduction": { ... every reduction choice and result, see ReductionReport ... },
 *       "source": { "file", "sha256", "format", "signal", "muFormula", "energyAxis", "history" },
 *       "warnings": [ "one line each" ],
 *       "provenance": { "tool", "version", "settings", "inputs", "id" }
 *     }
 */
import { z } from 'zod';
import { InputError } from '../core/errors';
import type { Provenance } from '../core/provenance';
import { EDGE_NAMES, type EdgeName } from '../elements/index';
import type { NoiseEstimate } from './noise';

/** Step of the chi(k) grid, 1/Å. */
export const CHI_K_STEP = 0.05;
/** Grid points per 1/Å (1 / CHI_K_STEP); k_i = i / 20 is the double nearest to i * 0.05. */
export const CHI_K_PER_INVERSE_A = 20;

export interface NormalisedSpectrum {
  /** Photon energy, eV. */
  energy: Float64Array;
  mu: Float64Array;
  preEdge: Float64Array;
  postEdge: Float64Array;
  normalised: Float64Array;
  detrended: Float64Array;
  /** mu0(E) in mu units: pre-edge line + step * spline above E0, the pre-edge line below. */
  background: Float64Array;
}

/** Where the reduced data came from. */
export interface ChiSource {
  file: string | null;
  sha256: string | null;
  format: string;
  signal: string;
  muFormula: string;
  energyAxis: unknown;
  history: unknown[];
  /** Metadata fields of the source file. */
  fields: Record<string, string>;
}

export interface Chi {
  /** k grid, 1/Å, uniform (step 0.05) and starting at a multiple of the step. */
  readonly k: Float64Array;
  /** chi(k), dimensionless, same length as k. */
  readonly chi: Float64Array;
  /** E0, eV. */
  readonly e0: number;
  /** Edge step in mu units (> 0). */
  readonly edgeStep: number;
  readonly noise: Readonly<NoiseEstimate>;
  readonly element: string | null;
  readonly edge: EdgeName | null;
  readonly normalised: Readonly<NormalisedSpectrum> | null;
  readonly info: Readonly<{
    /** Every reduction choice and fitted quantity (plain JSON). */
    reduction: Record<string, unknown>;
    source: ChiSource | null;
    warnings: readonly string[];
    provenance: Provenance | null;
  }>;
}

export interface ChiInit {
  k: ArrayLike<number>;
  chi: ArrayLike<number>;
  e0: number;
  edgeStep: number;
  noise: NoiseEstimate;
  element?: string | null;
  edge?: EdgeName | null;
  normalised?: { [K in keyof NormalisedSpectrum]: ArrayLike<number> } | null;
  reduction?: Record<string, unknown>;
  source?: ChiSource | null;
  warnings?: readonly string[];
  provenance?: Provenance | null;
}

/**
 * Validating factory: equal lengths, finite values, uniform k grid, positive edge step.
 * @throws InputError naming the array (and `file` when given).
 */
export function makeChi(init: ChiInit, file?: string): Chi {
  const where = (key: string) => ({ file, key });
  const k = Float64Array.from(init.k);
  const chi = Float64Array.from(init.chi);
  if (k.length < 2) throw new InputError(`k needs at least 2 points, got ${k.length}`, where('k'));
  if (chi.length !== k.length) throw new InputError(`chi has ${chi.length} values but k has ${k.length}`, where('chi'));
  const step = k[1] - k[0];
  for (let i = 0; i < k.length; i++) {
    if (!Number.isFinite(k[i])) throw new InputError(`k[${i}] is not finite`, where('k'));
    if (!Number.isFinite(chi[i])) throw new InputError(`chi[${i}] is not finite`, where('chi'));
    if (i > 0 && Math.abs(k[i] - k[i - 1] - step) > 1e-6 * Math.abs(step)) throw new InputError(`k is not uniform at index ${i}`, where('k'));
  }
  if (!(step > 0)) throw new InputError('k must increase', where('k'));
  if (!Number.isFinite(init.e0)) throw new InputError('e0 must be a finite energy (eV)', where('e0'));
  if (!(init.edgeStep > 0) || !Number.isFinite(init.edgeStep)) throw new InputError(`edgeStep must be positive, got ${init.edgeStep}`, where('edgeStep'));
  let normalised: NormalisedSpectrum | null = null;
  if (init.normalised) {
    const n = init.normalised.energy.length;
    const entries = Object.entries(init.normalised) as [keyof NormalisedSpectrum, ArrayLike<number>][];
    const out = {} as NormalisedSpectrum;
    for (const [name, values] of entries) {
      if (values.length !== n) throw new InputError(`normalised.${name} has ${values.length} values but normalised.energy has ${n}`, where(`normalised.${name}`));
      out[name] = Float64Array.from(values);
    }
    normalised = Object.freeze(out);
  }
  return Object.freeze({
    k,
    chi,
    e0: init.e0,
    edgeStep: init.edgeStep,
    noise: Object.freeze({ ...init.noise }),
    element: init.element ?? null,
    edge: init.edge ?? null,
    normalised,
    info: Object.freeze({
      reduction: init.reduction ?? {},
      source: init.source ?? null,
      warnings: Object.freeze([...(init.warnings ?? [])]),
      provenance: init.provenance ?? null,
    }),
  });
}

export const CHI_FORMAT = 'shellrank-chi';
export const CHI_FORMAT_VERSION = 1;

/**
 * Render a Chi as the documented JSON document. With `indent`, objects are indented and each
 * array of numbers is kept on one line.
 */
export function chiToJson(chi: Chi, indent?: number): string {
  const text = chiJsonText(chi, indent);
  if (indent === undefined) return text;
  // JSON strings never hold raw newlines, so a bracketed run of numbers spanning lines is an array
  return text.replace(/\[(\s*-?[\d.eE+-]+(?:,\s*-?[\d.eE+-]+)*\s*)\]/g, (match, inner: string) =>
    match.includes('\n') ? `[${inner.replace(/\s+/g, '')}]` : match,
  );
}

function chiJsonText(chi: Chi, indent?: number): string {
  const arrays = (o: NormalisedSpectrum) => Object.fromEntries(Object.entries(o).map(([k, v]) => [k, Array.from(v as Float64Array)]));
  return JSON.stringify(
    {
      format: CHI_FORMAT,
      formatVersion: CHI_FORMAT_VERSION,
      element: chi.element,
      edge: chi.edge,
      e0: chi.e0,
      edgeStep: chi.edgeStep,
      k: Array.from(chi.k),
      chi: Array.from(chi.chi),
      noise: chi.noise,
      normalised: chi.normalised ? arrays(chi.normalised) : null,
      reduction: chi.info.reduction,
      source: chi.info.source,
      warnings: chi.info.warnings,
      provenance: chi.info.provenance,
    },
    null,
    indent,
  );
}

const numbers = z.array(z.number());
const CHI_SCHEMA = z.object({
  format: z.literal(CHI_FORMAT),
  formatVersion: z.literal(CHI_FORMAT_VERSION),
  element: z.string().nullable(),
  edge: z.enum(EDGE_NAMES as unknown as [EdgeName, ...EdgeName[]]).nullable(),
  e0: z.number(),
  edgeStep: z.number(),
  k: numbers,
  chi: numbers,
  noise: z.object({
    k: z.number().nullable(),
    r: z.number(),
    kWeighting: z.number(),
    kRange: z.tuple([z.number(), z.number()]),
    rRange: z.tuple([z.number(), z.number()]),
    windowShape: z.enum(['hann', 'box', 'kaiser', 'welch']),
    windowTaper: z.number(),
  }),
  normalised: z
    .object({ energy: numbers, mu: numbers, preEdge: numbers, postEdge: numbers, normalised: numbers, detrended: numbers, background: numbers })
    .nullable(),
  reduction: z.record(z.string(), z.unknown()),
  source: z
    .object({
      file: z.string().nullable(),
      sha256: z.string().nullable(),
      format: z.string(),
      signal: z.string(),
      muFormula: z.string(),
      energyAxis: z.unknown(),
      history: z.array(z.unknown()),
      fields: z.record(z.string(), z.string()),
    })
    .nullable(),
  warnings: z.array(z.string()),
  provenance: z.record(z.string(), z.unknown()).nullable(),
});

/**
 * Read a Chi from its JSON document.
 * @throws InputError naming the file and the first offending key.
 */
export function chiFromJson(text: string, file: string): Chi {
  let raw: unknown;
  try {
    raw = JSON.parse(text);
  } catch (e) {
    throw new InputError(`not valid JSON (${(e as Error).message.split('\n')[0]})`, { file });
  }
  const parsed = CHI_SCHEMA.safeParse(raw);
  if (!parsed.success) {
    const issue = parsed.error.issues[0];
    const key = issue.path.map(String).join('.') || '(document)';
    throw new InputError(`not a ${CHI_FORMAT} document: ${issue.message}`, { file, key });
  }
  const d = parsed.data;
  return makeChi(
    {
      k: d.k,
      chi: d.chi,
      e0: d.e0,
      edgeStep: d.edgeStep,
      noise: { ...d.noise, k: d.noise.k ?? NaN },
      element: d.element,
      edge: d.edge,
      normalised: d.normalised,
      reduction: d.reduction,
      source: d.source,
      warnings: d.warnings,
      provenance: d.provenance as unknown as Provenance | null,
    },
    file,
  );
}
