/**
 * A ranking run, end to end: pre-screen every candidate of this shard, refine the best N of them
 * by pre-screen score, both stages streamed to disk and resumable; then assemble the ranking from
 * the stream files of one or more shards (the same code serves `rank`, `screen` and `merge`).
 *
 * Sharding: candidate i (0-based, stable order) belongs to shard (i mod N) + 1. Each shard refines
 * its own best N by pre-screen reduced chi-square (ties by order). Any candidate among the best N
 * of all candidates has fewer than N better candidates overall, hence fewer than N in its shard,
 * so it is among its shard's best N: merging the shards and refining the global best N needs no
 * refinement that the shards have not done, and gives the same ranking as one unsharded run.
 *
 * The final list: the refined candidates ranked among themselves (their refined statistics and
 * verdicts), each followed by the candidates left out of the refinement that are equivalent to it
 * within resolution (they share its rank and verdict, 'best' becoming 'not distinguishable from
 * the best'); then the others in pre-screen order with their pre-screen verdicts (tested against
 * the pre-screen best). Ranks of the last part continue after the first.
 */
import { join } from 'node:path';
import { InputError } from '../core/errors';
import { hashOf } from '../core/hash';
import { SHELLRANK_VERSION } from '../core/provenance';
import type { FitStats } from '../fit/exafs/refine';
import type { Candidate } from './candidates';
import type { CandidateRecord, RankJob, Stage } from './evaluate';
import { CandidatePool } from './pool';
import { forEachRecord, StreamWriter, writerLock, type RecordRef, type StreamHeader } from './stream';
import {
  equivalentSignatures, rankCandidates, VERDICT_BEST, VERDICT_INDISTINGUISHABLE,
  type RankedCandidate, type RankingOptions, type ResolvedShell, type ScoredCandidate, type SignificanceTest,
} from './verdicts';

export interface Shard {
  /** 1-based. */
  index: number;
  count: number;
}

/** Parse "I/N" (1 <= I <= N). */
export function parseShard(text: string): Shard {
  const m = /^\s*(\d+)\s*\/\s*(\d+)\s*$/.exec(text);
  if (!m) throw new InputError(`expected I/N (e.g. 2/8), got '${text}'`, { key: '--shard' });
  const index = Number(m[1]);
  const count = Number(m[2]);
  if (!(count >= 1) || !(index >= 1 && index <= count)) throw new InputError(`shard ${index} of ${count} does not exist (1 <= I <= N)`, { key: '--shard' });
  return { index, count };
}

/** Progress of a run, reported after every candidate. */
export interface ProgressEvent {
  stage: Stage;
  /** Candidates finished in this stage (including those found in the stream). */
  done: number;
  total: number;
  /** Of `done`, how many came from an earlier run. */
  resumed: number;
}

export interface RunInput {
  job: RankJob;
  /** All candidates, in the stable order (a shard picks its own). */
  candidates: readonly Candidate[];
  /** Folder of the stream files. */
  streamDir: string;
  refineTop: number;
  /** Verdict options, recorded in the stream headers for `merge`. */
  ranking?: RankingOptions;
  shard: Shard | null;
  workers: number;
  onProgress?: (event: ProgressEvent) => void;
  signal?: AbortSignal;
}

export interface RunOutcome {
  prescreenStream: string;
  refineStream: string;
  /** Candidates of this shard. */
  candidates: number;
  computed: { prescreen: number; refine: number };
  resumed: { prescreen: number; refine: number };
}

/** Identity of a candidate list (all shards share it): hash of the keys in order. */
export function candidateListId(candidates: readonly Candidate[]): string {
  return hashOf(candidates.map((c) => c.key)).slice(0, 8);
}

/**
 * File name of a stage's stream: settings hash, candidate list and shard in the name, so runs of
 * other settings or other candidates never mix with this one's results in a shared folder.
 */
export function streamPath(dir: string, settingsHash: string, listId: string, stage: Stage, shard: Shard | null): string {
  const suffix = shard && shard.count > 1 ? `.shard-${shard.index}-of-${shard.count}` : '';
  return join(dir, `rank-${settingsHash}-${listId}${suffix}.${stage}.jsonl`);
}

function headerFor(input: RunInput, stage: Stage, count: number): StreamHeader {
  const { job, shard } = input;
  return {
    candidateList: candidateListId(input.candidates),
    allCandidates: input.candidates.length,
    ranking: { refineTop: input.refineTop, ...(input.ranking ?? {}) },
    format: 'shellrank-rank-stream', version: 1, stage, settingsHash: job.settingsHash, shard, candidates: count,
    settings: job.settings, data: { file: job.data.file, sha256: job.data.sha256 }, tool: { name: 'shellrank', version: SHELLRANK_VERSION },
  };
}

/** Reduced chi-square for ordering (failed fits last). */
function scoreOf(record: { ok: boolean; stats: FitStats | null }): number {
  const v = record.ok && record.stats ? record.stats.reducedChiSquare : NaN;
  return Number.isFinite(v) && v >= 0 ? v : Infinity;
}

/** The best `n` records by score, ties by candidate order. */
function bestByScore<T extends { index: number; ok: boolean; stats: FitStats | null }>(records: T[], n: number): T[] {
  return [...records].sort((a, b) => scoreOf(a) - scoreOf(b) || a.index - b.index).slice(0, Math.max(0, n));
}

async function runStage(input: RunInput, pool: CandidatePool, stage: Stage, mine: readonly Candidate[], path: string, total: number): Promise<{ computed: number; resumed: number }> {
  const writer = StreamWriter.open(path, headerFor(input, stage, total));
  try {
    const todo = mine.filter((c) => !writer.done.has(c.key));
    const resumed = mine.length - todo.length;
    let done = resumed;
    input.onProgress?.({ stage, done, total: mine.length, resumed });
    await pool.score(todo.map((candidate) => ({ candidate, stage })), {
      signal: input.signal,
      onRecord: (record) => {
        writer.write(record);
        done++;
        input.onProgress?.({ stage, done, total: mine.length, resumed });
      },
    });
    return { computed: todo.length, resumed };
  } finally {
    writer.close();
  }
}

/** Run (or resume) both stages for this shard. */
export async function runRanking(input: RunInput): Promise<RunOutcome> {
  const shard = input.shard;
  const mine: Candidate[] = shard ? input.candidates.filter((c) => c.index % shard.count === shard.index - 1) : [...input.candidates];
  const listId = candidateListId(input.candidates);
  const prescreenStream = streamPath(input.streamDir, input.job.settingsHash, listId, 'prescreen', shard);
  const refineStream = streamPath(input.streamDir, input.job.settingsHash, listId, 'refine', shard);
  // one writer per folder (per shard when shards share a folder)
  const lock = writerLock(input.streamDir, shard && shard.count > 1 ? `shellrank.shard-${shard.index}-of-${shard.count}.lock` : 'shellrank.lock');
  try {
    const pool = new CandidatePool(input.job, input.workers);
    try {
      return await runStages(input, pool, mine, prescreenStream, refineStream);
    } finally {
      await pool.close();
    }
  } finally {
    lock.release();
  }
}

async function runStages(input: RunInput, pool: CandidatePool, mine: Candidate[], prescreenStream: string, refineStream: string): Promise<RunOutcome> {
  const pre = await runStage(input, pool, 'prescreen', mine, prescreenStream, mine.length);
  // the best N of this shard by pre-screen score
  const compact: { key: string; index: number; ok: boolean; stats: FitStats | null }[] = [];
  const byKey = new Map(mine.map((c) => [c.key, c]));
  forEachRecord(prescreenStream, (r) => {
    if (byKey.has(r.key)) compact.push({ key: r.key, index: r.index, ok: r.ok, stats: r.stats });
  });
  const chosen = bestByScore(compact, input.refineTop).map((r) => byKey.get(r.key) as Candidate).sort((a, b) => a.index - b.index);
  const ref = await runStage(input, pool, 'refine', chosen, refineStream, chosen.length);
  return {
    prescreenStream, refineStream, candidates: mine.length,
    computed: { prescreen: pre.computed, refine: ref.computed },
    resumed: { prescreen: pre.resumed, refine: ref.resumed },
  };
}

/** One candidate of the assembled ranking, with where its full record lives. */
export interface RankingEntry {
  key: string;
  index: number;
  name: string;
  file: string;
  frame?: number;
  rank: number;
  verdict: string;
  /** The stage whose statistics rank it. */
  stage: Stage;
  test: SignificanceTest | null;
  equivalentTo?: string;
  ok: boolean;
  error?: string;
  stats: FitStats | null;
  /** Pre-screen statistics (also for refined candidates). */
  prescreenStats: FitStats | null;
  /** Full records (fit summaries) in the stream files. */
  records: { prescreen: RecordRef; refine?: RecordRef };
}

export interface AssembledRanking {
  entries: RankingEntry[];
  header: StreamHeader;
  /** Candidates seen / expected from the shard headers. */
  candidates: number;
  refined: number;
  shards: number;
}

interface Compact extends ScoredCandidate {
  name: string;
  file: string;
  frame?: number;
  error?: string;
  ref: RecordRef;
}

function compactOf(r: CandidateRecord, ref: RecordRef): Compact {
  const c: Compact = { key: r.key, index: r.index, ok: r.ok, stats: r.stats, signature: r.signature, name: r.name, file: r.file, ref };
  if (r.contains) c.contains = r.contains;
  if (r.frame !== undefined) c.frame = r.frame;
  if (r.error) c.error = r.error;
  return c;
}

/**
 * Assemble the final ranking from stream files (one run, or the shards of one). Checks that all
 * files share one settings hash, that every shard of the set is present and complete, and that
 * every one of the best N has been refined.
 * @throws InputError naming the file and the problem.
 */
export function assembleRanking(prescreenFiles: readonly string[], refineFiles: readonly string[], refineTop: number, options: RankingOptions = {}): AssembledRanking {
  if (prescreenFiles.length === 0) throw new InputError('no pre-screen stream files to assemble');
  const pre = new Map<string, Compact>();
  let header: StreamHeader | null = null;
  const shardsSeen = new Map<number, { count: number; expected: number; file: string }>();
  for (const file of prescreenFiles) {
    let count = 0;
    const h = forEachRecord(file, (r, ref) => {
      count++;
      if (!pre.has(r.key)) pre.set(r.key, compactOf(r, ref));
    });
    if (h.stage !== 'prescreen') throw new InputError(`holds ${h.stage} results where pre-screen results were expected`, { file });
    if (header && h.settingsHash !== header.settingsHash) throw new InputError(`was made with settings ${h.settingsHash}, the others with ${header.settingsHash}`, { file });
    if (header && h.candidateList !== header.candidateList) throw new InputError(`holds candidate list ${h.candidateList}, the others ${header.candidateList}: they are not shards of one run`, { file });
    header ??= h;
    const shardCount = h.shard?.count ?? 1;
    if (header.shard && h.shard && header.shard.count !== shardCount) throw new InputError(`belongs to a split into ${shardCount} shards, the others to ${header.shard.count}`, { file });
    const index = h.shard?.index ?? 1;
    if (shardsSeen.has(index)) throw new InputError(`shard ${index} is given twice (also ${shardsSeen.get(index)!.file})`, { file });
    shardsSeen.set(index, { count, expected: h.candidates, file });
    if (count < h.candidates) throw new InputError(`holds ${count} of its ${h.candidates} candidates: the run is unfinished (run it again to resume)`, { file });
  }
  const head = header as StreamHeader;
  const shardCount = head.shard?.count ?? 1;
  for (let i = 1; i <= shardCount; i++) {
    if (!shardsSeen.has(i)) throw new InputError(`shard ${i} of ${shardCount} is missing`, { key: 'merge' });
  }
  const refined = new Map<string, Compact>();
  for (const file of refineFiles) {
    const h = forEachRecord(file, (r, ref) => {
      if (!refined.has(r.key)) refined.set(r.key, compactOf(r, ref));
    });
    if (h.stage !== 'refine') throw new InputError(`holds ${h.stage} results where refinement results were expected`, { file });
    if (h.settingsHash !== head.settingsHash) throw new InputError(`was made with settings ${h.settingsHash}, the pre-screen with ${head.settingsHash}`, { file });
  }
  const all = [...pre.values()];
  const top = bestByScore(all, refineTop);
  for (const c of top) {
    if (!refined.has(c.key)) throw new InputError(`the refinement of '${c.name}' is missing (is a run or shard unfinished?)`, { key: 'merge' });
  }
  const topKeys = new Set(top.map((c) => c.key));
  const entries: RankingEntry[] = [];
  const entryOf = (c: Compact, r: RankedCandidate, stage: Stage, rank: number): RankingEntry => {
    const p = pre.get(c.key) as Compact;
    const e: RankingEntry = {
      key: c.key, index: c.index, name: c.name, file: c.file, rank, verdict: r.verdict, stage, test: r.test, ok: c.ok, stats: c.stats,
      prescreenStats: p.stats, records: { prescreen: p.ref },
    };
    if (c.frame !== undefined) e.frame = c.frame;
    if (r.equivalentTo) e.equivalentTo = r.equivalentTo;
    if (c.error) e.error = c.error;
    if (stage === 'refine') e.records.refine = c.ref;
    return e;
  };
  const refinedRanked = rankCandidates(top.map((c) => refined.get(c.key) as Compact), options);
  // a candidate left out of the refinement but equivalent within resolution to a refined one
  // shares that one's rank and standing (the data cannot tell them apart)
  const sameWithin = options.sameWithin ?? 0.01;
  const nTolerance = options.nTolerance ?? 0.05;
  const followers = new Map<string, Compact[]>();
  const followed = new Set<string>();
  const preRanked = rankCandidates(all, options);
  for (const r of preRanked) {
    if (topKeys.has(r.key)) continue;
    const c = pre.get(r.key) as Compact;
    if (!c.ok || !c.signature) continue;
    const leader = refinedRanked.find((e) => {
      const f = refined.get(e.key) as Compact;
      return f.signature !== null && equivalentSignatures(f.signature, c.signature as ResolvedShell[], sameWithin, nTolerance);
    });
    if (!leader) continue;
    followers.set(leader.key, [...(followers.get(leader.key) ?? []), c]);
    followed.add(c.key);
  }
  for (const r of refinedRanked) {
    entries.push(entryOf(refined.get(r.key) as Compact, r, 'refine', r.rank));
    for (const c of followers.get(r.key) ?? []) {
      const verdict = r.verdict === VERDICT_BEST ? VERDICT_INDISTINGUISHABLE : r.verdict;
      entries.push(entryOf(c, { key: c.key, index: c.index, rank: r.rank, position: 0, verdict, test: null, equivalentTo: r.key }, 'prescreen', r.rank));
    }
  }
  const rankOfKey = new Map<string, number>();
  let position = entries.length;
  for (const r of preRanked) {
    if (topKeys.has(r.key) || followed.has(r.key)) continue;
    position++;
    const leaderRank = r.equivalentTo ? rankOfKey.get(r.equivalentTo) : undefined;
    const rank = leaderRank ?? position;
    rankOfKey.set(r.key, rank);
    entries.push(entryOf(pre.get(r.key) as Compact, r, 'prescreen', rank));
  }
  return { entries, header: head, candidates: all.length, refined: top.length, shards: shardCount };
}
