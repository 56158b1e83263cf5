/**
 * `shellrank rank DATA CANDIDATE... --absorber EL`: rank candidate structures against one
 * spectrum (src/rank). Also the options and the run/print flow shared with `screen` and `merge`.
 */
import { mkdirSync } from 'node:fs';
import { availableParallelism, tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import type { Command } from 'commander';
import { ComputationError, InputError } from '../../core/errors';
import { makeProvenance, type InputRecord } from '../../core/provenance';
import { absorberAndEdgeFromData } from '../../fit/exafs/absorber-from-data';
import { loadChiOrReduce } from '../../fit/exafs/data';
import { FIT_DOMAINS, type FitDomain } from '../../fit/exafs/problem';
import { WINDOW_SHAPES, type WindowShape } from '../../numeric/window';
import { DEFAULT_PROVIDER } from '../../scatter/registry';
import type { Chi } from '../../reduce/chi';
import { parseAbsorberSelector, type AbsorberSelector } from '../../structure/cluster';
import { discoverCandidates, frameRefsOfFile, type CandidateSpec } from '../../rank/candidates';
import type { PrescreenDisorder } from '../../rank/evaluate';
import { rankingTable, rankingWarnings, writeFileInPieces, writeRankingJson, type TableFormat } from '../../rank/output';
import { RankInterrupted } from '../../rank/pool';
import { readRecordAt } from '../../rank/stream';
import { formatProgress } from '../../rank/progress';
import { assembleRanking, parseShard, runRanking, type AssembledRanking, type ProgressEvent, type Shard } from '../../rank/run';
import { prepareRanking, type PreparedRanking, type RankOptions } from '../../rank/setup';
import type { RankingOptions } from '../../rank/verdicts';
import type { CliIo } from '../io';
import { parseInteger, parseNumber, parseRange } from '../options';
import { s0sqFromFit, reductionWarnings } from './fit';
import { parseEdgeOption } from './structure-options';

/** Raw option values shared by rank and screen (commander's camel-case names). */
export interface RankCliOptions {
  absorber?: string;
  edge?: string;
  radius?: string;
  tolerance: string;
  format?: string;
  k?: string;
  r: string;
  kw: string;
  fitIn: string;
  window: string;
  taper: string;
  rTaper: string;
  margin: string;
  band: string;
  s0sq?: string;
  s0sqFrom?: string;
  s0sqBounds: string;
  distances?: string;
  maxFree?: string;
  debyeTemp?: string;
  einsteinTemp?: string;
  msrd?: string;
  temp: string;
  e0Range: string;
  starts: string;
  provider: string;
  tables: string;
  tableStep?: string;
  cache: boolean;
  refineTop: string;
  alpha: string;
  rejectAlpha: string;
  sameWithin: string;
  workers?: string;
  shard?: string;
  out?: string;
  json?: boolean;
  markdown?: boolean;
  csv?: boolean;
  limit: string;
  quiet?: boolean;
  singleScattering?: boolean;
  msImportance?: string;
}

/** Options of the ranking (window, recipe, pre-screen, scale, output), for rank and screen. */
export function addRankOptions(command: Command): Command {
  return command
    .option('--absorber <which>', 'absorbing atom: an element (Cu), a 0-based index (#12), or a site label (label:Cu1); default: the element the data file names')
    .option('--edge <edge>', "absorption edge: K, L1, L2 or L3; default: the data file's edge (else K)")
    .option('--radius <angstrom>', 'cluster radius in Å (default: R max + margin + 0.5)')
    .option('--tolerance <angstrom>', 'maximum width of one shell in Å', '0.01')
    .option('--format <name>', 'structure format (xyz, extxyz, cif, pdb); detected when omitted')
    .option('--k <min:max>', 'k range of the fit, 1/Å (default 3:14, or 3 to the end of the data)')
    .option('--r <min:max>', 'R range of the fit, Å', '1.2:3.6')
    .option('--kw <weights>', 'k-weight, or several separated by commas', '2')
    .option('--fit-in <domain>', `fit in: ${FIT_DOMAINS.join(', ')}`, 'R')
    .option('--window <shape>', `k and R window shape (${WINDOW_SHAPES.join(', ')})`, 'hann')
    .option('--taper <width>', 'k window taper, 1/Å', '1')
    .option('--r-taper <width>', 'R window taper, Å', '0.5')
    .option('--margin <angstrom>', 'include shells up to R max + this', '0.5')
    .option('--band <angstrom>', 'shells of one species within this of a group\'s nearest shell share one msrd', '0.3')
    .option('--s0sq <value>', "S0^2: 'free' (within --s0sq-bounds) or a fixed value (default free)")
    .option('--s0sq-from <fit.json>', 'fix S0^2 at the value of an earlier fit of a reference compound')
    .option('--s0sq-bounds <min:max>', 'bounds of a free S0^2', '0.5:1.5')
    .option('--distances <how>', "'expand' (one free expansion factor) or 'fixed' (structure distances)")
    .option('--max-free <n>', 'most free parameters of a refinement (default: half the independent points)')
    .option('--debye-temp <kelvin>', 'pre-screen sigma^2 from the correlated Debye model with this Debye temperature (default 300)')
    .option('--einstein-temp <kelvin>', 'pre-screen sigma^2 from the Einstein model with this Einstein temperature')
    .option('--msrd <a2>', 'pre-screen sigma^2 of every shell, Å^2')
    .option('--temp <kelvin>', 'sample temperature for the pre-screen disorder model', '300')
    .option('--e0-range <min:max>', 'pre-screen search range of the E0 shift, eV', '-15:15')
    .option('--starts <n>', 'starts of each refinement (more than 1 adds seeded random starts)', '1')
    .option('--provider <name>', 'scattering provider (firstPrinciples, or parametric: approximate, for tests)', DEFAULT_PROVIDER)
    .option('--tables <policy>', "scattering tables: 'own' (each candidate's environment and exact distances), 'shared' (each candidate's environment and the table distances rounded, so similar candidates share tables), or 'auto' (= own)", 'auto')
    .option('--table-step <angstrom>', 'distance rounding of shared tables, Å (default 0.02)')
    .option('--single-scattering', 'leave out the multiple-scattering paths (3- and 4-leg) that the refinement adds by default when the model range reaches them')
    .option('--ms-importance <fraction>', 'keep multiple-scattering paths at least this fraction of the strongest shell', '0.04')
    .option('--no-cache', 'recompute scattering functions instead of reading the on-disk cache')
    .option('--refine-top <n>', 'fully refine the best N of the pre-screen', '20')
    .option('--alpha <p>', "significance level of 'worse'", '0.05')
    .option('--reject-alpha <p>', "level below which a candidate is 'rejected'", '0.001')
    .option('--same-within <angstrom>', 'resolved shells of candidates equivalent within resolution agree in r within this', '0.01')
    .option('--workers <n>', 'worker threads (default: all cores; 0 or 1 = this thread)')
    .option('--shard <i/n>', 'run only shard I of N (candidates I, I+N, ...); combine the shards with `shellrank merge`')
    .option('--out <dir>', 'folder for the ranking (ranking.json, .md, .csv) and the stream files; a run into the same folder resumes')
    .option('--json', 'print the ranking as JSON')
    .option('--markdown', 'print the ranked table as Markdown')
    .option('--csv', 'print the ranked table as CSV')
    .option('--limit <n>', 'rows of the terminal table', '30')
    .option('--quiet', 'no progress bar');
}

/** Ranking options before the data are read: the absorber may still be missing (the data name it). */
export type RankOptionsBeforeData = Omit<RankOptions, 'absorber'> & { absorber?: AbsorberSelector };

/** The absorber and edge given, else those the data file names (src/fit/exafs/absorber-from-data.ts). */
export function withDataAbsorber(options: RankOptionsBeforeData, chi: Chi, dataFile: string): RankOptions {
  const { absorber, edge } = absorberAndEdgeFromData(chi, options, dataFile);
  return { ...options, absorber, edge };
}

/** The ranking options in library form. */
export function parseRankOptions(raw: RankCliOptions, io: CliIo): { options: RankOptionsBeforeData; ranking: RankingOptions & { refineTop: number } } {
  if (!(WINDOW_SHAPES as readonly string[]).includes(raw.window)) throw new InputError(`unknown window '${raw.window}' (expected one of ${WINDOW_SHAPES.join(', ')})`, { key: '--window' });
  if ([raw.json, raw.markdown, raw.csv].filter(Boolean).length > 1) throw new InputError('give one of them only', { key: '--json, --markdown, --csv' });
  if (!(FIT_DOMAINS as readonly string[]).includes(raw.fitIn)) throw new InputError(`unknown fit space '${raw.fitIn}' (expected one of ${FIT_DOMAINS.join(', ')})`, { key: '--fit-in' });
  const shape = raw.window as WindowShape;
  const disorderGiven = [raw.debyeTemp, raw.einsteinTemp, raw.msrd].filter((x) => x !== undefined).length;
  if (disorderGiven > 1) throw new InputError('give only one of --debye-temp, --einstein-temp and --msrd', { key: '--debye-temp' });
  const temperature = parseNumber('--temp', raw.temp, { min: 0 });
  let disorder: PrescreenDisorder | undefined;
  if (raw.einsteinTemp !== undefined) disorder = { kind: 'einstein', einsteinTemperature: parseNumber('--einstein-temp', raw.einsteinTemp, { min: 0, exclusiveMin: true }), temperature };
  else if (raw.msrd !== undefined) disorder = { kind: 'fixed', msrd: parseNumber('--msrd', raw.msrd, { min: 0 }) };
  else disorder = { kind: 'debye', debyeTemperature: parseNumber('--debye-temp', raw.debyeTemp ?? '300', { min: 0, exclusiveMin: true }), temperature };
  if (raw.s0sq !== undefined && raw.s0sqFrom !== undefined) throw new InputError('give --s0sq or --s0sq-from, not both', { key: '--s0sq' });
  let s0sq: number | 'free' = 'free';
  if (raw.s0sqFrom !== undefined) s0sq = s0sqFromFit(resolve(io.cwd, raw.s0sqFrom));
  else if (raw.s0sq !== undefined && raw.s0sq !== 'free') s0sq = parseNumber('--s0sq', raw.s0sq, { min: 0, exclusiveMin: true });
  if (raw.distances !== undefined && raw.distances !== 'expand' && raw.distances !== 'fixed') throw new InputError(`expected 'expand' or 'fixed', got '${raw.distances}'`, { key: '--distances' });
  if (!['auto', 'own', 'shared'].includes(raw.tables)) throw new InputError(`expected 'auto', 'own' or 'shared', got '${raw.tables}'`, { key: '--tables' });
  const kWeightings = raw.kw.split(',').map((w) => parseNumber('--kw', w, { min: 0, max: 4 }));
  const options: RankOptionsBeforeData = {
    absorber: raw.absorber !== undefined ? parseAbsorberSelector(raw.absorber) : undefined,
    edge: raw.edge !== undefined ? parseEdgeOption(raw.edge) : undefined,
    tolerance: parseNumber('--tolerance', raw.tolerance, { min: 0 }),
    rRange: parseRange('--r', raw.r),
    kWeightings,
    fitIn: raw.fitIn as FitDomain,
    kTaper: { shape, taper: parseNumber('--taper', raw.taper, { min: 0 }) },
    rTaper: { shape, taper: parseNumber('--r-taper', raw.rTaper, { min: 0 }) },
    pathMargin: parseNumber('--margin', raw.margin, { min: 0 }),
    bandWidth: parseNumber('--band', raw.band, { min: 0 }),
    s0sq,
    s0sqBounds: parseRange('--s0sq-bounds', raw.s0sqBounds),
    disorder,
    e0Range: parseRange('--e0-range', raw.e0Range),
    starts: parseInteger('--starts', raw.starts, 1),
    provider: raw.provider,
    tables: raw.tables as RankOptions['tables'],
  };
  if (raw.radius !== undefined) options.radius = parseNumber('--radius', raw.radius, { min: 0, exclusiveMin: true });
  if (raw.k !== undefined) options.kRange = parseRange('--k', raw.k);
  if (raw.distances !== undefined) options.distances = raw.distances as 'expand' | 'fixed';
  if (raw.maxFree !== undefined) options.maxFree = parseInteger('--max-free', raw.maxFree, 1);
  options.multipleScattering = raw.singleScattering ? false : { minImportance: parseNumber('--ms-importance', raw.msImportance ?? '0.04', { min: 0 }) };
  if (raw.tableStep !== undefined) options.tableStep = parseNumber('--table-step', raw.tableStep, { min: 0 });
  const ranking = {
    refineTop: parseInteger('--refine-top', raw.refineTop, 0),
    alpha: parseNumber('--alpha', raw.alpha, { min: 0, exclusiveMin: true, max: 1 }),
    rejectAlpha: parseNumber('--reject-alpha', raw.rejectAlpha, { min: 0, exclusiveMin: true, max: 1 }),
    sameWithin: parseNumber('--same-within', raw.sameWithin, { min: 0 }),
  };
  if (ranking.rejectAlpha > ranking.alpha) throw new InputError(`must not exceed --alpha (${ranking.alpha})`, { key: '--reject-alpha' });
  return { options, ranking };
}

/** A progress bar on stderr when it is a terminal (and not --quiet); nothing otherwise. */
function progressWriter(io: CliIo, quiet: boolean): ((event: ProgressEvent) => void) | undefined {
  const tty = Boolean(process.stderr.isTTY) && io.isTty;
  if (quiet || !tty) return undefined;
  let stageStart = 0;
  let stage = '';
  let lastDraw = 0;
  return (event) => {
    const now = performance.now();
    if (event.stage !== stage) {
      if (stage !== '') io.stderr('\n');
      stage = event.stage;
      stageStart = now;
    }
    const finished = event.done >= event.total;
    if (!finished && now - lastDraw < 100) return;
    lastDraw = now;
    const width = process.stderr.columns ?? 80;
    io.stderr(`\r${formatProgress({ ...event, elapsedMs: now - stageStart }, width - 1)}`);
    if (finished && event.stage === 'refine') io.stderr('\n');
  };
}

/** Print or write the assembled ranking (shared with merge). */
export function presentRanking(io: CliIo, ranking: AssembledRanking, raw: { out?: string; json?: boolean; markdown?: boolean; csv?: boolean; limit: string }, extra: { settings: Record<string, unknown>; inputs: InputRecord[]; protectedInputs: string[] }): void {
  const settings: Record<string, unknown> = { ...extra.settings, settingsHash: ranking.header.settingsHash, candidates: ranking.candidates, refined: ranking.refined, shards: ranking.shards };
  if (ranking.entries.length > 0 && ranking.entries.every((e) => !e.ok)) {
    const first = ranking.entries.find((e) => e.error !== undefined);
    throw new InputError(`no candidate could be ranked (all ${ranking.entries.length} failed${first ? `; ${first.name}: ${first.error}` : ''})`);
  }
  const provenance = makeProvenance({ stage: 'rank', ...settings }, extra.inputs);
  if (raw.out !== undefined) {
    const dir = resolve(io.cwd, raw.out);
    writeFileInPieces(join(dir, 'ranking.json'), (write) => writeRankingJson(ranking, settings, provenance, write), extra.protectedInputs);
    writeFileInPieces(join(dir, 'ranking.md'), (write) => write(rankingTable(ranking, 'markdown')), extra.protectedInputs);
    writeFileInPieces(join(dir, 'ranking.csv'), (write) => write(rankingTable(ranking, 'csv')), extra.protectedInputs);
  }
  for (const warning of rankingWarnings(settings)) io.stderr(`warning: ${warning}\n`);
  if (raw.json) {
    writeRankingJson(ranking, settings, provenance, (text) => io.stdout(text));
    return;
  }
  const format: TableFormat = raw.markdown ? 'markdown' : raw.csv ? 'csv' : 'text';
  const limit = parseInteger('--limit', raw.limit, 1);
  io.stdout(rankingTable(ranking, format, limit));
  if (format === 'text') {
    const best = ranking.entries[0];
    if (best?.records.refine) {
      const fit = readRecordAt(best.records.refine).fit as { recipe?: string[] } | null;
      if (fit?.recipe) io.stdout(`\nrecipe (same for every candidate; as applied to ${best.name}):\n${fit.recipe.map((line) => `  ${line}`).join('\n')}\n`);
    }
    const approximate = settings.provider === 'parametric' ? ' (parametric provider: approximate, not for real data)' : '';
    io.stdout(`\n${ranking.candidates} candidate${ranking.candidates === 1 ? '' : 's'}, ${ranking.refined} refined; scattering ${String(settings.provider)}${approximate}\n`);
  }
}

/** Run a prepared ranking with progress, interruption and output (shared by rank and screen). */
export async function executeRanking(io: CliIo, prepared: PreparedRanking, raw: RankCliOptions, ranking: RankingOptions & { refineTop: number }, inputs: InputRecord[], protectedInputs: string[], notes: string[] = []): Promise<void> {
  const shard: Shard | null = raw.shard !== undefined ? parseShard(raw.shard) : null;
  const workers = raw.workers !== undefined ? parseInteger('--workers', raw.workers, 0) : availableParallelism();
  const streamDir = raw.out !== undefined ? resolve(io.cwd, raw.out) : join(tmpdir(), `shellrank-rank-${prepared.job.settingsHash}`);
  try {
    mkdirSync(streamDir, { recursive: true });
  } catch {
    throw new InputError('cannot create the output folder', { file: raw.out ?? streamDir, key: '--out' });
  }
  const controller = new AbortController();
  const onSignal = () => controller.abort();
  process.once('SIGINT', onSignal);
  process.once('SIGTERM', onSignal);
  let outcome;
  try {
    outcome = await runRanking({
      job: prepared.job, candidates: prepared.candidates, streamDir, refineTop: ranking.refineTop, ranking, shard, workers,
      onProgress: progressWriter(io, Boolean(raw.quiet)), signal: controller.signal,
    });
  } catch (error) {
    if (error instanceof RankInterrupted) {
      throw new ComputationError(`interrupted; the finished candidates are kept in ${streamDir}: run the same command again to resume`);
    }
    throw error;
  } finally {
    process.off('SIGINT', onSignal);
    process.off('SIGTERM', onSignal);
  }
  if (!raw.quiet) {
    for (const note of notes) io.stderr(`note: ${note}\n`);
    const r = outcome.resumed;
    if (r.prescreen + r.refine > 0) io.stderr(`resumed: ${r.prescreen} pre-screened and ${r.refine} refined candidates were already done\n`);
  }
  if (shard && shard.count > 1) {
    io.stdout(`shard ${shard.index}/${shard.count}: ${outcome.candidates} candidates done; streams in ${streamDir}\ncombine all shards with: shellrank merge ${raw.out ?? streamDir}\n`);
    return;
  }
  const assembled = assembleRanking([outcome.prescreenStream], [outcome.refineStream], ranking.refineTop, ranking);
  const s = prepared.job.settings;
  presentRanking(io, assembled, raw, {
    settings: { ...s, ranking, workers, streamDir: raw.out !== undefined ? raw.out : null, provider: s.provider },
    inputs,
    protectedInputs,
  });
}

/** "file" or "file#frame" -> a candidate spec (for --mixture parts). */
function mixturePart(text: string, io: CliIo, format?: string): Extract<CandidateSpec, { kind: 'structure' }> {
  const hash = text.lastIndexOf('#');
  const file = hash > 0 && /^\d+$/.test(text.slice(hash + 1)) ? text.slice(0, hash) : text;
  const refs = frameRefsOfFile(resolve(io.cwd, file), file, { format });
  const frame = hash > 0 && file !== text ? Number(text.slice(hash + 1)) : 0;
  if (frame >= refs.length) throw new InputError(`frame ${frame} does not exist (the file has ${refs.length})`, { file, key: '--mixture' });
  return { kind: 'structure', name: refs.length > 1 ? `${file}#${frame}` : file, source: refs[frame] };
}

interface RankCommandOptions extends RankCliOptions {
  ensemble?: boolean;
  mixture?: string[];
}

export function registerRank(program: Command, io: CliIo): void {
  addRankOptions(
    program.command('rank')
      .description('rank candidate structures against one spectrum: pre-screen all, refine the best, test each against the best')
      .argument('<data>', 'measured spectrum (XDI or columns, reduced with default settings) or a saved chi(k) JSON')
      .argument('<candidates...>', 'structure files, folders of them, or multi-frame files (each frame a candidate)'),
  )
    .option('--ensemble', 'average the frames of each multi-frame file into one candidate (configurational average)')
    .option('--mixture <a,b>', 'add a two-candidate mixture with a fitted fraction (files, or file#frame); repeatable', (v: string, all: string[] = []) => [...all, v])
    .action(async (dataFile: string, inputs: string[], raw: RankCommandOptions) => {
      const parsed = parseRankOptions(raw, io);
      const data = loadChiOrReduce(resolve(io.cwd, dataFile));
      const options = withDataAbsorber(parsed.options, data.chi, dataFile);
      const { ranking } = parsed;
      const specs = discoverCandidates(inputs, { format: raw.format, ensemble: Boolean(raw.ensemble), resolvePath: (p) => resolve(io.cwd, p) });
      for (const pair of raw.mixture ?? []) {
        const parts = pair.split(',');
        if (parts.length !== 2) throw new InputError(`expected two candidates separated by a comma, got '${pair}'`, { key: '--mixture' });
        const [a, b] = parts.map((p) => mixturePart(p.trim(), io, raw.format)) as Extract<CandidateSpec, { kind: 'structure' }>[];
        for (const part of [a, b]) {
          if (!specs.some((s) => s.kind === 'structure' && s.name === part.name)) specs.push(part);
        }
        specs.push({ kind: 'mixture', name: `mixture of ${a.name} and ${b.name}`, parts: [a, b] });
      }
      const prepared = prepareRanking({ name: dataFile, file: dataFile, sha256: data.sha256, chi: data.chi }, specs, options, { cwd: io.cwd, cache: raw.cache });
      const inputsRecord: InputRecord[] = [{ role: 'data', file: dataFile, sha256: data.sha256 }];
      const notes = data.reducedHere ? [`${dataFile} was reduced here with default settings (run \`shellrank reduce\` to choose them)`, ...reductionWarnings(data)] : [];
      await executeRanking(io, prepared, raw, ranking, inputsRecord, [resolve(io.cwd, dataFile), ...inputs.map((p) => resolve(io.cwd, p))], notes);
    });
}
