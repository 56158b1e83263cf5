/**
 * Reading a study file: YAML with lines (./yaml-source.ts), schema validation (./schema.ts,
 * ./validate.ts), and the data sets with their `defaults` merged in. Each merged key remembers
 * where it was written (the data set or the defaults), so later errors point at the right line.
 * Relative paths in the study resolve against the study file's folder.
 */
import { dirname, isAbsolute, join } from 'node:path';
import { InputError, type InputLocation } from '../../core/errors';
import { readTextFile } from '../../core/files';
import { sha256 } from '../../core/hash';
import { DEFAULT_FIT_SETTINGS } from '../exafs/fit-structure';
import type { FitDomain } from '../exafs/problem';
import type { WindowShape } from '../../numeric/window';
import type { EdgeName } from '../../elements/index';
import { studySchema, type DatasetInput, type ShellRuleInput, type StudyInput } from './schema';
import { validateSource } from './validate';
import { formatKeyPath, parseYamlSource, type KeyPath, type YamlSource } from './yaml-source';

/** A validated study file. */
export interface StudyFile {
  /** The study file as the user named it (used in every message). */
  file: string;
  /** Its folder: relative paths inside resolve against it. */
  folder: string;
  sha256: string;
  input: StudyInput;
  source: YamlSource;
  /** File, line and key path of an entry of the study. */
  where(path: KeyPath): InputLocation;
  /** A path written in the study, resolved against its folder. */
  resolvePath(path: string): string;
  datasets: StudyDataset[];
}

/** Data set settings after merging `defaults`, with defaults of the fit command filled in. */
export interface StudyDataset {
  index: number;
  /** Unique name (explicit, or the data file's base name, made unique). */
  name: string;
  data: string;
  structure: string;
  format?: string;
  frame: number;
  /** Undefined: the element the data file names. */
  absorber?: string;
  /** Undefined: the data file's edge (else K). */
  edge?: EdgeName;
  radius: number;
  tolerance: number;
  temperature?: number;
  kRange: [number, number];
  rRange: [number, number];
  kWeightings: number[];
  fitIn: FitDomain;
  kTaper: { shape: WindowShape; taper: number };
  rTaper: { shape: WindowShape; taper: number };
  s0sq: string;
  e0: string;
  /** Shell rules; undefined means the fit command's default recipe. */
  shells?: ShellRuleInput[];
  /** Where each key came from (`datasets[i].key` or `defaults.key`); for keys not written, the data set itself. */
  origin(key: keyof DatasetInput | 'shells'): KeyPath;
}

/** Default cluster radius and shell tolerance, as the `fit` command (Å). */
export const STUDY_DEFAULT_RADIUS = 6;
export const STUDY_DEFAULT_TOLERANCE = 0.01;

/** Parse and validate study text. `file` names it in messages; `folder` resolves its paths (default: the file's folder). */
export function parseStudyText(text: string, file: string, folder: string = dirname(file)): StudyFile {
  const source = parseYamlSource(text, file);
  if (source.value === null) throw new InputError('the study file is empty (it needs at least a datasets list)', { file, line: 1 });
  if (typeof source.value !== 'object' || Array.isArray(source.value)) {
    throw new InputError('a study file is a mapping of keys (title, parameters, datasets, ...), not a single value or a list', { file, line: source.lineOf([]) });
  }
  const input = validateSource(studySchema, source);
  const where = (path: KeyPath): InputLocation => ({ file, line: source.lineOf(path), key: formatKeyPath(path) || undefined });
  const resolvePath = (p: string): string => (isAbsolute(p) ? p : join(folder, p));
  const datasets = mergeDatasets(input, where, resolvePath);
  return { file, folder, sha256: sha256(text), input, source, where, resolvePath, datasets };
}

/** Read and validate a study file. */
export function readStudyFile(path: string, displayName: string = path): StudyFile {
  let text: string;
  try {
    text = readTextFile(path);
  } catch (error) {
    if (error instanceof InputError) throw new InputError(error.reason, { file: displayName });
    throw error;
  }
  return parseStudyText(text, displayName, dirname(path));
}

function baseName(path: string): string {
  const parts = path.split(/[\\/]/);
  return parts[parts.length - 1] || path;
}

function mergeDatasets(input: StudyInput, where: (path: KeyPath) => InputLocation, resolvePath: (p: string) => string): StudyDataset[] {
  const defaults = input.defaults ?? {};
  const used = new Map<string, number>();
  const explicit = new Set<string>();
  input.datasets.forEach((d, i) => {
    if (d.name === undefined) return;
    if (explicit.has(d.name)) throw new InputError(`the data set name '${d.name}' is used twice`, where(['datasets', i, 'name']));
    explicit.add(d.name);
  });
  return input.datasets.map((d, index) => {
    const origin = (key: keyof DatasetInput | 'shells'): KeyPath => {
      if ((d as Record<string, unknown>)[key] !== undefined) return ['datasets', index, key];
      if ((defaults as Record<string, unknown>)[key] !== undefined) return ['defaults', key];
      return ['datasets', index];
    };
    const pick = <K extends keyof typeof defaults>(key: K): (typeof defaults)[K] => (d[key] !== undefined ? d[key] : defaults[key]);
    const need = (key: 'data' | 'structure'): string => {
      const v = pick(key);
      if (v === undefined) throw new InputError(`needs '${key}' (here or under defaults)`, where(['datasets', index]));
      return v;
    };
    const data = need('data');
    const structure = need('structure');
    const absorber = pick('absorber');
    let name = d.name;
    if (name === undefined) {
      const base = baseName(data);
      let candidate = base;
      for (let n = 2; explicit.has(candidate) || used.has(candidate); n++) candidate = `${base}#${n}`;
      name = candidate;
    }
    used.set(name, index);
    const kTaper = pick('kTaper') ?? {};
    const rTaper = pick('rTaper') ?? {};
    const s0sq = pick('s0sq');
    const e0 = pick('e0');
    return {
      index,
      name,
      data: resolvePath(data),
      structure: resolvePath(structure),
      format: pick('format'),
      frame: pick('frame') ?? 0,
      absorber,
      edge: pick('edge') as EdgeName | undefined,
      radius: pick('radius') ?? STUDY_DEFAULT_RADIUS,
      tolerance: pick('tolerance') ?? STUDY_DEFAULT_TOLERANCE,
      temperature: pick('temperature'),
      kRange: pick('k') ?? [...DEFAULT_FIT_SETTINGS.kRange],
      rRange: pick('r') ?? [...DEFAULT_FIT_SETTINGS.rRange],
      kWeightings: pick('kWeightings') ?? [...DEFAULT_FIT_SETTINGS.kWeightings],
      fitIn: (pick('fitIn') ?? DEFAULT_FIT_SETTINGS.fitIn) as FitDomain,
      kTaper: { shape: (kTaper.shape ?? DEFAULT_FIT_SETTINGS.kTaper.shape) as WindowShape, taper: kTaper.taper ?? DEFAULT_FIT_SETTINGS.kTaper.taper },
      rTaper: { shape: (rTaper.shape ?? DEFAULT_FIT_SETTINGS.rTaper.shape) as WindowShape, taper: rTaper.taper ?? DEFAULT_FIT_SETTINGS.rTaper.taper },
      s0sq: s0sq === undefined ? 's0sq' : String(s0sq),
      e0: e0 === undefined ? 'e0' : String(e0),
      shells: pick('shells'),
      origin,
    };
  });
}
