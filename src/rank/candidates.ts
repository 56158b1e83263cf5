/**
 * Candidates of a ranking: what they are (a frame of a structure file, optionally with changes
 * from a screen; an ensemble of frames averaged into one; a mixture of two), how they are found
 * (files, folders, the frames of multi-frame files), and how a worker turns one into shells.
 *
 * Candidates are small plain descriptors (a file, its content hash, a frame and, for multi-frame
 * XYZ files, the byte range of the frame), so thousands of them cost little memory and a worker
 * reads only the frame it needs. Multi-frame XYZ and extended-XYZ files are indexed by one
 * streaming pass over their lines; other formats are read whole (they are rarely large).
 *
 * Ensembles (configurational average): the clusters of every frame join one shell grouping, each
 * frame's absorber sites weighted by occupancy, so degeneracies are frame averages and the spread
 * of distances inside a shell is the structural disorder of the ensemble (../paths/pathset.ts).
 * Inequivalent absorber sites of one frame are averaged the same way (occupancy weights).
 */
import { closeSync, existsSync, openSync, readdirSync, readSync, statSync } from 'node:fs';
import { createHash } from 'node:crypto';
import { join } from 'node:path';
import { InputError } from '../core/errors';
import { hashOf } from '../core/hash';
import { loadStructureFile } from '../read/load-structure';
import { detectStructureFormat, readStructureText, STRUCTURE_FORMATS } from '../read/structure/index';
import { buildClusters, type AbsorberSelector, type Cluster } from '../structure/cluster';
import { cellVolume, makeStructure, type Structure } from '../structure/structure';
import { buildPathSet, neighbourSpecs, type PathSet, type ScatteringPath } from '../paths/pathset';
import { shellsOfStructure } from '../paths/index';
import type { EdgeName } from '../elements/index';

/** Where one frame lives. */
export interface FrameRef {
  /** Path as the user gave it (resolved against the working directory by the caller). */
  file: string;
  /** SHA-256 of the whole file. */
  sha256: string;
  /** 0-based frame index. */
  frame: number;
  /** Format name (detected once for the whole file). */
  format?: string;
  /** Byte range and first line of the frame inside the file (indexed XYZ files only). */
  slice?: { start: number; length: number; line: number };
  /** Number of frames in the file (when known). */
  frames?: number;
}

/** A change a screen applies to the shells of a base structure. */
export type Change =
  /** `count` neighbours of shell `shell` become species `to`. */
  | { kind: 'substitute'; shell: string; to: string; count: number }
  /** `count` neighbours of shell `shell` are removed. */
  | { kind: 'remove'; shell: string; count: number }
  /** Every distance scaled by 1 + percent / 100. */
  | { kind: 'strain'; percent: number }
  /** Only this absorber site (0-based atom index) instead of the average over all. */
  | { kind: 'site'; index: number; label: string };

export type CandidateSpec =
  | { kind: 'structure'; name: string; source: FrameRef; changes?: Change[] }
  | { kind: 'ensemble'; name: string; sources: FrameRef[] }
  | { kind: 'mixture'; name: string; parts: [CandidateSpec, CandidateSpec] };

/** A candidate with its place in the stable order and its identity. */
export interface Candidate {
  /** 0-based position in the stable order. */
  index: number;
  /** Identity for resume and merge: hash of the descriptor (name, content hashes, frame, changes). */
  key: string;
  spec: CandidateSpec;
}

/** Identity of a candidate descriptor (byte ranges excluded: they follow from the content hash). */
export function candidateKey(spec: CandidateSpec): string {
  const strip = (s: CandidateSpec): unknown => {
    if (s.kind === 'structure') return { kind: s.kind, name: s.name, sha256: s.source.sha256, frame: s.source.frame, changes: s.changes ?? [] };
    if (s.kind === 'ensemble') return { kind: s.kind, name: s.name, frames: s.sources.map((f) => [f.sha256, f.frame]) };
    return { kind: s.kind, name: s.name, parts: s.parts.map(strip) };
  };
  return hashOf(strip(spec)).slice(0, 24);
}

/** Number the specs in order and give them keys. */
export function makeCandidates(specs: readonly CandidateSpec[]): Candidate[] {
  return specs.map((spec, index) => ({ index, key: candidateKey(spec), spec }));
}

const STRUCTURE_EXTENSIONS = new Set(STRUCTURE_FORMATS.flatMap((f) => f.extensions));
const XYZ_FAMILY = new Set(['xyz', 'extxyz']);

/** Extension of a path, lower case with the dot. */
function extensionOf(file: string): string {
  const base = file.replace(/^.*[\\/]/, '');
  const dot = base.lastIndexOf('.');
  return dot > 0 ? base.slice(dot).toLowerCase() : '';
}

/** Read the first bytes of a file as text (format detection). */
function readHead(path: string, bytes = 8192): string {
  const fd = openSync(path, 'r');
  try {
    const buffer = Buffer.alloc(bytes);
    const n = readSync(fd, buffer, 0, bytes, 0);
    return buffer.subarray(0, n).toString('utf8');
  } finally {
    closeSync(fd);
  }
}

/**
 * Index the frames of an XYZ-family file in one streaming pass (constant memory): byte range and
 * first line of every frame, and the SHA-256 of the file. Only the atom counts are checked here;
 * each frame is parsed when it is used.
 * @throws InputError with file and line when a count line is not a whole number.
 */
export function indexXyzFrames(path: string): { sha256: string; frames: { start: number; length: number; line: number }[] } {
  const hash = createHash('sha256');
  const frames: { start: number; length: number; line: number }[] = [];
  const fd = openSync(path, 'r');
  const chunk = Buffer.alloc(1 << 20);
  let carry = Buffer.alloc(0);
  let offset = 0; // byte offset of carry[0] in the file
  let line = 0;
  // state: how many lines remain in the current frame (after its count line), -1 = expecting a count
  let remaining = -1;
  let frameStart = 0;
  const finishFrame = (end: number) => {
    const last = frames[frames.length - 1];
    last.length = end - last.start;
  };
  const handleLine = (text: string, start: number, end: number) => {
    line++;
    if (remaining > 0) {
      remaining--;
      if (remaining === 0) { finishFrame(end); remaining = -1; }
      return;
    }
    const trimmed = text.trim();
    if (trimmed === '') return;
    if (!/^\d+$/.test(trimmed)) throw new InputError(`expected an atom count (one whole number), found '${trimmed.slice(0, 40)}'`, { file: path, line });
    frameStart = start;
    frames.push({ start: frameStart, length: 0, line });
    remaining = Number(trimmed) + 1; // comment line + atoms
  };
  try {
    for (;;) {
      const n = readSync(fd, chunk, 0, chunk.length, null);
      const data = n > 0 ? Buffer.concat([carry, chunk.subarray(0, n)]) : carry;
      if (n > 0) hash.update(chunk.subarray(0, n));
      let from = 0;
      for (;;) {
        const nl = data.indexOf(10, from);
        if (nl < 0) break;
        handleLine(data.toString('utf8', from, nl), offset + from, offset + nl + 1);
        from = nl + 1;
      }
      if (n === 0) {
        if (from < data.length) handleLine(data.toString('utf8', from), offset + from, offset + data.length);
        break;
      }
      carry = Buffer.from(data.subarray(from));
      offset += from;
    }
  } finally {
    closeSync(fd);
  }
  if (remaining > 0) {
    throw new InputError(`the file ends inside frame ${frames.length} (${remaining} line${remaining === 1 ? '' : 's'} short)`, { file: path, line });
  }
  if (remaining === 0 && frames.length > 0) finishFrame(offset);
  if (frames.length === 0) throw new InputError('holds no frames', { file: path });
  return { sha256: hash.digest('hex'), frames };
}

/** The frames of one structure file, as references. */
export function frameRefsOfFile(path: string, displayName: string, options: { format?: string } = {}): FrameRef[] {
  const head = readHead(path);
  const format = detectStructureFormat(head, path, options.format).name;
  if (XYZ_FAMILY.has(format)) {
    const { sha256, frames } = indexXyzFrames(path);
    return frames.map((slice, frame) => ({ file: displayName, sha256, frame, format, slice: frames.length > 1 ? slice : undefined, frames: frames.length }));
  }
  const loaded = loadStructureFile(path, { format });
  return loaded.frames.map((_, frame) => ({ file: displayName, sha256: loaded.sha256, frame, format, frames: loaded.frames.length }));
}

export interface DiscoverOptions {
  /** Structure format for every file (detected per file when absent). */
  format?: string;
  /** Average the frames of each multi-frame file into one candidate. */
  ensemble?: boolean;
  /** Resolve a user path to a readable path (default identity). */
  resolvePath?: (path: string) => string;
}

/**
 * Candidates from the command line: files (every frame of a multi-frame file is a candidate,
 * named `file#frame`), folders (their structure files, by extension, sorted by name; not
 * recursive). With `ensemble`, a multi-frame file is one candidate (its frames averaged).
 * @throws InputError for missing paths, folders without structure files, unreadable files.
 */
export function discoverCandidates(inputs: readonly string[], options: DiscoverOptions = {}): CandidateSpec[] {
  const resolvePath = options.resolvePath ?? ((p: string) => p);
  const specs: CandidateSpec[] = [];
  const addFile = (display: string) => {
    const refs = frameRefsOfFile(resolvePath(display), display, { format: options.format });
    if (options.ensemble && refs.length > 1) {
      specs.push({ kind: 'ensemble', name: `${display} (${refs.length} frames averaged)`, sources: refs });
      return;
    }
    for (const ref of refs) specs.push({ kind: 'structure', name: refs.length > 1 ? `${display}#${ref.frame}` : display, source: ref });
  };
  for (const input of inputs) {
    let stat;
    try {
      stat = statSync(resolvePath(input));
    } catch {
      // `file#frame`: one frame of a multi-frame file (a real file of that name wins)
      const m = /^(.+)#(\d+)$/.exec(input);
      if (m && existsSync(resolvePath(m[1]))) {
        const refs = frameRefsOfFile(resolvePath(m[1]), m[1], { format: options.format });
        const frame = Number(m[2]);
        if (frame >= refs.length) throw new InputError(`frame ${frame} does not exist (the file has ${refs.length} frame${refs.length === 1 ? '' : 's'}, numbered from 0)`, { file: m[1] });
        specs.push({ kind: 'structure', name: input, source: refs[frame] });
        continue;
      }
      throw new InputError('no such file or folder', { file: input });
    }
    if (stat.isDirectory()) {
      const names = readdirSync(resolvePath(input)).filter((n) => STRUCTURE_EXTENSIONS.has(extensionOf(n))).sort();
      if (names.length === 0) throw new InputError(`the folder holds no structure files (${[...STRUCTURE_EXTENSIONS].join(', ')})`, { file: input });
      for (const n of names) addFile(join(input, n));
    } else {
      addFile(input);
    }
  }
  return specs;
}

/** Read one frame (the byte range only, for indexed files). */
export function readFrame(ref: FrameRef, resolvePath: (p: string) => string = (p) => p): Structure {
  const path = resolvePath(ref.file);
  if (ref.slice) {
    const fd = openSync(path, 'r');
    let text: string;
    try {
      const buffer = Buffer.alloc(ref.slice.length);
      readSync(fd, buffer, 0, ref.slice.length, ref.slice.start);
      text = buffer.toString('utf8');
    } finally {
      closeSync(fd);
    }
    let frames: Structure[];
    try {
      frames = readStructureText(text, ref.file, { format: ref.format });
    } catch (error) {
      if (error instanceof InputError && error.line !== undefined) {
        throw new InputError(error.reason, { file: ref.file, line: error.line + ref.slice.line - 1, key: error.key });
      }
      throw error;
    }
    const s = frames[0];
    return makeStructure({ species: s.species, positions: s.positions, occupancy: s.occupancy, labels: s.labels, lattice: s.lattice, info: { ...s.info, frame: ref.frame } });
  }
  const loaded = loadStructureFile(path, { format: ref.format });
  if (ref.frame >= loaded.frames.length) throw new InputError(`frame ${ref.frame} does not exist (the file has ${loaded.frames.length})`, { file: ref.file });
  return loaded.frames[ref.frame];
}

/**
 * A small most-recently-used cache of frames (per worker), so variants of one base read it once;
 * files without a frame index (CIF, PDB) are kept whole, a few at a time.
 */
export class FrameCache {
  private readonly frames = new Map<string, Structure>();
  private readonly files = new Map<string, Structure[]>();
  constructor(private readonly resolvePath: (p: string) => string = (p) => p, private readonly capacity = 8) {}
  get(ref: FrameRef): Structure {
    if (!ref.slice) {
      const fileKey = `${ref.sha256}|${ref.file}`;
      let frames = this.files.get(fileKey);
      if (!frames) {
        frames = loadStructureFile(this.resolvePath(ref.file), { format: ref.format }).frames.map((s) => (s.info.file === ref.file ? s : makeStructure({ ...s, info: { ...s.info, file: ref.file } })));
        this.files.set(fileKey, frames);
        if (this.files.size > 2) this.files.delete(this.files.keys().next().value as string);
      }
      if (ref.frame >= frames.length) throw new InputError(`frame ${ref.frame} does not exist (the file has ${frames.length})`, { file: ref.file });
      return frames[ref.frame];
    }
    const key = `${ref.sha256}|${ref.frame}|${ref.file}`;
    const hit = this.frames.get(key);
    if (hit) {
      this.frames.delete(key);
      this.frames.set(key, hit);
      return hit;
    }
    const s = readFrame(ref, this.resolvePath);
    this.frames.set(key, s);
    if (this.frames.size > this.capacity) this.frames.delete(this.frames.keys().next().value as string);
    return s;
  }
}

/** Shell settings of a ranking (the parts that decide a candidate's shells). */
export interface ShellSettings {
  absorber: AbsorberSelector;
  edge: EdgeName;
  /** Cluster radius, Å. */
  radius: number;
  /** Shell width, Å. */
  tolerance: number;
}

/** One component's shells, environment and the atomic density for the correlated Debye model. */
export interface ComponentShells {
  pathSet: PathSet;
  /** Atoms per Å^3 (cell for periodic structures, cluster sphere otherwise). */
  density: number;
}

/**
 * Atomic number density: occupancy-weighted atoms per cell volume for a periodic structure,
 * otherwise the atoms inside the cluster sphere (absorber included) over its volume (an estimate).
 */
export function densityOf(structure: Structure, set: PathSet): number {
  if (structure.lattice) return structure.occupancy.reduce((s, x) => s + x, 0) / Math.abs(cellVolume(structure.lattice));
  const atoms = 1 + set.paths.reduce((s, p) => s + p.degeneracy, 0);
  return atoms / ((4 / 3) * Math.PI * set.radius ** 3);
}

/** Merge shells of one species at the same distance, sort by r, and number them per species. */
export function renumberShells(paths: readonly Omit<ScatteringPath, 'id'>[]): ScatteringPath[] {
  const sorted = [...paths].filter((p) => p.degeneracy > 1e-12)
    .sort((a, b) => a.r - b.r || (a.scatterer < b.scatterer ? -1 : a.scatterer > b.scatterer ? 1 : 0));
  const merged: Omit<ScatteringPath, 'id'>[] = [];
  for (const p of sorted) {
    const last = merged[merged.length - 1];
    if (last && last.scatterer === p.scatterer && Math.abs(last.r - p.r) < 1e-9) {
      merged[merged.length - 1] = { ...last, degeneracy: last.degeneracy + p.degeneracy, spread: Math.max(last.spread, p.spread) };
    } else {
      merged.push({ ...p });
    }
  }
  const counters = new Map<string, number>();
  return merged.map((p) => {
    const c = (counters.get(p.scatterer) ?? 0) + 1;
    counters.set(p.scatterer, c);
    return { ...p, id: `${p.scatterer}.${c}` };
  });
}

/**
 * Apply shell changes (substitute, remove, strain; 'site' is handled when the shells are built)
 * to the shells of a base. Substitution and removal of part of a shell split it; ids are renumbered.
 * @throws InputError when a named shell does not exist or holds fewer neighbours than asked.
 */
export function applyChanges(paths: readonly ScatteringPath[], changes: readonly Change[]): ScatteringPath[] {
  type Shell = Omit<ScatteringPath, 'id'> & { id: string | null };
  let work: Shell[] = paths.map((p) => ({ ...p }));
  const find = (shell: string) => {
    const i = work.findIndex((p) => p.id === shell);
    if (i < 0) throw new InputError(`no shell '${shell}' (shells: ${work.map((p) => p.id).filter(Boolean).join(', ')})`, { key: '--vary' });
    return i;
  };
  for (const change of changes) {
    if (change.kind === 'substitute' || change.kind === 'remove') {
      const i = find(change.shell);
      const p = work[i];
      if (change.count > p.degeneracy + 1e-9) {
        throw new InputError(`shell ${change.shell} holds ${p.degeneracy} neighbours, fewer than ${change.count}`, { key: '--vary' });
      }
      const parts: Shell[] = [{ ...p, degeneracy: p.degeneracy - change.count }];
      if (change.kind === 'substitute') parts.push({ ...p, id: null, scatterer: change.to, degeneracy: change.count });
      work = [...work.slice(0, i), ...parts, ...work.slice(i + 1)];
    } else if (change.kind === 'strain') {
      const f = 1 + change.percent / 100;
      work = work.map((p) => ({ ...p, r: p.r * f, spread: p.spread * f }));
    }
  }
  return renumberShells(work.map(({ id: _id, ...rest }) => rest));
}

/** The shells of one frame (optionally a single site and shell changes). */
export function shellsOfFrame(structure: Structure, ref: FrameRef, settings: ShellSettings, changes: readonly Change[] = []): ComponentShells {
  const site = changes.find((c) => c.kind === 'site') as Extract<Change, { kind: 'site' }> | undefined;
  const absorber: AbsorberSelector = site ? { index: site.index } : settings.absorber;
  const base = shellsOfStructure(structure, { absorber, radius: settings.radius, tolerance: settings.tolerance, edge: settings.edge, structureHash: ref.sha256 });
  const density = densityOf(structure, base);
  const shellChanges = changes.filter((c) => c.kind !== 'site');
  if (shellChanges.length === 0) return { pathSet: base, density };
  const paths = applyChanges(base.paths, shellChanges);
  const environmentRadius = 5;
  return {
    pathSet: { ...base, paths, environment: { absorber: neighbourSpecs(paths, environmentRadius), scatterers: base.environment.scatterers } },
    density,
  };
}

/** The shells of an ensemble: every frame's clusters averaged into one shell grouping. */
export function shellsOfEnsemble(frames: readonly { structure: Structure; ref: FrameRef }[], settings: ShellSettings): ComponentShells {
  if (frames.length === 0) throw new InputError('an ensemble needs at least one frame');
  const clusters: Cluster[] = [];
  let density = 0;
  let scattererClusters: Record<string, Cluster> = {};
  frames.forEach(({ structure }, i) => {
    const own = buildClusters(structure, { absorber: settings.absorber, radius: settings.radius });
    clusters.push(...own);
    if (i === 0) {
      const seen = new Set<string>();
      const first = own[0];
      scattererClusters = {};
      for (let j = 0; j < first.species.length; j++) {
        const s = first.species[j];
        if (seen.has(s)) continue;
        seen.add(s);
        scattererClusters[s] = buildClusters(structure, { absorber: { index: first.sourceIndex[j] }, radius: 5 })[0];
      }
    }
  });
  const pathSet = buildPathSet(
    { clusters, scattererClusters, structureHash: hashOf(frames.map((f) => [f.ref.sha256, f.ref.frame])), structureFile: frames[0].ref.file },
    { tolerance: settings.tolerance, edge: settings.edge, environmentRadius: 5 },
  );
  for (const { structure } of frames) density += densityOf(structure, pathSet) / frames.length;
  return { pathSet, density };
}

/** The components (one, or two for a mixture) of a candidate, read through a frame cache. */
export function componentsOf(spec: CandidateSpec, settings: ShellSettings, cache: FrameCache): ComponentShells[] {
  if (spec.kind === 'structure') return [shellsOfFrame(cache.get(spec.source), spec.source, settings, spec.changes ?? [])];
  if (spec.kind === 'ensemble') return [shellsOfEnsemble(spec.sources.map((ref) => ({ structure: cache.get(ref), ref })), settings)];
  const parts = spec.parts.map((p) => {
    const c = componentsOf(p, settings, cache);
    if (c.length !== 1) throw new InputError(`a mixture part must be a single candidate, not a mixture (${p.name})`);
    return c[0];
  });
  return parts;
}
