/**
 * The schema of a study file (`*.study.yaml`), written with zod: what every key means, its type,
 * its default and its limits. Values come out normalised (ranges as [min, max], k-weights as a
 * list); the checks that need other parts of the study (parameter names in expressions, shell
 * ids of a structure, files on disk) are made later in ./compile.ts.
 *
 * Layout (every key documented in the README's study section):
 *   version, title, provider, fit {starts, seed, maxIterations},
 *   parameters {NAME: number | "expression" | {value, state, expression, bounds, from}},
 *   defaults {any data-set key except name}, datasets [{name, data, structure, ..., shells}],
 *   output {json, report}, rank (reserved for the ranking stage, ./rank-section.ts).
 * Limits (radius, ranges, k-weights, starts) keep a mistyped number from starting a computation
 * that cannot finish; they are generous for real work.
 */
import { z } from 'zod';
import { EDGE_NAMES } from '../../elements/index';
import { WINDOW_SHAPES } from '../../numeric/window';
import { FIT_DOMAINS } from '../exafs/problem';
import { rankSectionSchema } from './rank-section';

/** Largest cluster radius accepted, Å. */
export const MAX_STUDY_RADIUS = 30;
/** Largest k accepted in a k range, 1/Å. */
export const MAX_STUDY_K = 40;
/** Largest R accepted in an R range, Å. */
export const MAX_STUDY_R = 15;
/** Most starts of a refinement. */
export const MAX_STUDY_STARTS = 100;
/** Most Levenberg-Marquardt iterations. */
export const MAX_STUDY_ITERATIONS = 10_000;

const NUMBER_TEXT = '[-+]?(?:\\d+\\.?\\d*|\\.\\d+)(?:[eE][-+]?\\d+)?';
const RANGE_TEXT = new RegExp(`^\\s*(${NUMBER_TEXT})\\s*:\\s*(${NUMBER_TEXT})\\s*$`);

const RANGE_MESSAGE = 'expected MIN:MAX or [min, max]';

/** `MIN:MAX` or `[min, max]` with min < max inside [lowest, highest]. */
function rangeSchema(unit: string, lowest: number, highest: number) {
  return z
    .union([z.string().regex(RANGE_TEXT, { error: RANGE_MESSAGE }), z.tuple([z.number(), z.number()], { error: RANGE_MESSAGE })], { error: RANGE_MESSAGE })
    .transform((value): [number, number] => {
      if (typeof value !== 'string') return [value[0], value[1]];
      const m = RANGE_TEXT.exec(value)!;
      return [Number(m[1]), Number(m[2])];
    })
    .superRefine((range, context) => {
      if (!(range[0] < range[1])) context.addIssue({ code: 'custom', message: `the range must increase, got ${range[0]}:${range[1]}` });
      else if (range[0] < lowest || range[1] > highest) context.addIssue({ code: 'custom', message: `the range must lie within ${lowest}:${highest} ${unit}, got ${range[0]}:${range[1]}` });
    });
}

/** A number, or an expression text. */
const numberOrExpression = z.union([z.number(), z.string().trim().min(1)], { error: 'expected a number or an expression' });

/** A path relative to the study file's folder. */
const filePath = z.string().trim().min(1, { error: 'expected a file path' });

/** Bounds of a free parameter: [lower, upper], either may be null (none). */
const boundsSchema = z.tuple([z.number().nullable(), z.number().nullable()], { error: 'expected [lower, upper] (use null for no bound)' });

/** A parameter declaration in `parameters:`. */
export const parameterObjectSchema = z.strictObject({
  /** Start value (free) or value (fixed). */
  value: z.number().optional(),
  /** free (default without expression), fixed, or tied (default with expression). */
  state: z.enum(['free', 'fixed', 'tied']).optional(),
  /** Expression of other parameters, for a tied parameter. */
  expression: z.string().trim().min(1).optional(),
  bounds: boundsSchema.optional(),
  /** Take the value from an earlier fit's JSON (params.NAME.value): a path or {file, parameter}. */
  from: z.union([filePath, z.strictObject({ file: filePath, parameter: z.string().trim().min(1).optional() })], { error: 'expected a fit JSON path or {file, parameter}' }).optional(),
});
export const parameterSchema = z.union([z.number(), z.string().trim().min(1), parameterObjectSchema], {
  error: 'expected a number (fixed), an expression (tied) or a mapping {value, state, expression, bounds, from}',
});

/** Options of a per-shell parameter (`each`). */
export const eachSchema = z.strictObject({
  /** Start value: a number or an expression of the shell's r0 and n0. */
  value: numberOrExpression.optional(),
  /** Bounds, numbers or expressions of r0 and n0; null for none. */
  bounds: z.tuple([numberOrExpression.nullable(), numberOrExpression.nullable()], { error: 'expected [lower, upper] (use null for no bound)' }).optional(),
  state: z.enum(['free', 'fixed']).optional(),
  /** Name prefix: the parameters are called PREFIX_<shell> (default: the quantity, r_Cu_1). */
  name: z.string().trim().min(1).optional(),
  /** One parameter per shell and data set (PREFIX_<shell>_<data set>) instead of one per shell id shared by the data sets. */
  perDataset: z.boolean().optional(),
});

/** The mapping forms of a shell quantity: {each}, {expand}, {einstein, static}. */
export const quantityObjectSchema = z
  .strictObject({
    each: eachSchema.optional(),
    expand: numberOrExpression.optional(),
    einstein: numberOrExpression.optional(),
    static: numberOrExpression.optional(),
  })
  .superRefine((value, context) => {
    const forms = (['each', 'expand', 'einstein'] as const).filter((k) => value[k] !== undefined);
    if (forms.length !== 1) {
      context.addIssue({ code: 'custom', message: forms.length === 0 ? 'expected one of each, expand or einstein' : `give only one of ${forms.join(', ')}` });
    }
    if (value.static !== undefined && value.einstein === undefined) context.addIssue({ code: 'custom', path: ['static'], message: 'static goes with einstein only' });
  });
export const quantitySchema = z.union([z.number(), z.string().trim().min(1), quantityObjectSchema], {
  error: 'expected a number, a parameter name or expression, "each", or a mapping {each | expand | einstein}',
});

/** Which shells a rule covers. */
export const includeSchema = z.union([
  z.string().trim().min(1),
  z.array(z.string().trim().min(1)).min(1),
  z.strictObject({
    species: z.union([z.string().trim().min(1), z.array(z.string().trim().min(1)).min(1)]).optional(),
    distance: rangeSchema('Å', 0, MAX_STUDY_RADIUS).optional(),
  }),
], { error: 'expected "auto", a shell id such as Cu.1, a list of ids, or {species, distance}' });

export const shellRuleSchema = z.strictObject({
  include: includeSchema,
  n: quantitySchema.optional(),
  r: quantitySchema.optional(),
  msrd: quantitySchema.optional(),
  c3: quantitySchema.optional(),
  c4: quantitySchema.optional(),
});

export const windowSchema = z.strictObject({
  shape: z.enum(WINDOW_SHAPES as [string, ...string[]]).optional(),
  taper: z.number().min(0).max(10).optional(),
});

/** Every data-set key; all optional here, `data`, `structure` and `absorber` are required after merging defaults. */
const datasetFields = {
  data: filePath.optional(),
  structure: filePath.optional(),
  format: z.string().trim().min(1).optional(),
  frame: z.number().int().min(0).optional(),
  absorber: z.union([z.string().trim().min(1), z.number().int().min(0).transform((i) => `#${i}`)], { error: 'expected an element (Cu), an index (#12) or a site label (label:Cu1)' }).optional(),
  edge: z.enum(EDGE_NAMES as [string, ...string[]]).optional(),
  radius: z.number().gt(0).max(MAX_STUDY_RADIUS).optional(),
  tolerance: z.number().min(0).max(1).optional(),
  /** Sample temperature, K (needed by einstein). */
  temperature: z.number().gt(0).max(5000).optional(),
  k: rangeSchema('1/Å', 0, MAX_STUDY_K).optional(),
  r: rangeSchema('Å', 0, MAX_STUDY_R).optional(),
  kWeightings: z.union([z.number().min(0).max(4), z.array(z.number().min(0).max(4)).min(1).max(8)], { error: 'expected a k-weight (0-4) or a list of them' })
    .transform((w) => (typeof w === 'number' ? [w] : w)).optional(),
  fitIn: z.enum(FIT_DOMAINS as [string, ...string[]]).optional(),
  kTaper: windowSchema.optional(),
  rTaper: windowSchema.optional(),
  /** Expressions for this data set's S0^2 and E0 shift (default the parameters s0sq and e0). */
  s0sq: numberOrExpression.optional(),
  e0: numberOrExpression.optional(),
  shells: z.array(shellRuleSchema).min(1).optional(),
};

export const defaultsSchema = z.strictObject(datasetFields);
export const datasetSchema = z.strictObject({ name: z.string().trim().min(1).optional(), ...datasetFields });

export const studySchema = z.strictObject({
  version: z.literal(1, { error: 'the only study version is 1' }).optional(),
  title: z.string().optional(),
  provider: z.string().trim().min(1).optional(),
  fit: z.strictObject({
    starts: z.number().int().min(1).max(MAX_STUDY_STARTS).optional(),
    seed: z.number().int().min(0).optional(),
    maxIterations: z.number().int().min(1).max(MAX_STUDY_ITERATIONS).optional(),
  }).optional(),
  parameters: z.record(z.string(), parameterSchema).optional(),
  defaults: defaultsSchema.optional(),
  datasets: z.array(datasetSchema).min(1, { error: 'a study needs at least one data set' }),
  output: z.strictObject({ json: filePath.optional(), report: filePath.optional() }).optional(),
  rank: rankSectionSchema.optional(),
});

export type StudyInput = z.output<typeof studySchema>;
export type DatasetInput = z.output<typeof datasetSchema>;
export type ParameterInput = z.output<typeof parameterSchema>;
export type ShellRuleInput = z.output<typeof shellRuleSchema>;
export type QuantityInput = z.output<typeof quantitySchema>;
export type EachInput = z.output<typeof eachSchema>;
export type WindowInput = z.output<typeof windowSchema>;
