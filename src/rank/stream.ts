/**
 * Stream files: the results of a ranking stage written to disk as JSON lines while it runs, so
 * memory stays flat in the number of candidates, an interrupted run resumes where it stopped, and
 * the shards of a batch job can be merged.
 *
 * Layout (one JSON object per line, UTF-8):
 *   line 1: the header {"format": "shellrank-rank-stream", "version": 1, "stage", "settingsHash",
 *           "candidateList", "allCandidates", "shard": {"index", "count"} | null, "candidates",
 *           "settings", "data", "tool", "ranking"}
 *   then:   one CandidateRecord per line ("key", "index", "settingsHash", "stats", "fit", ...).
 * Each record is written with one write call as soon as it is known (in candidate order), so a
 * killed run leaves complete lines plus at most one cut line, which the next run drops. A record
 * is identified by its candidate key and the settings hash; a run with other settings refuses to
 * append to the file. Resuming always recovers: lines that are not complete records of this
 * stream (a cut line, a damaged line, a record of other settings) and repeated records of a
 * candidate are dropped, the file rewritten atomically when anything was dropped.
 *
 * One writer at a time: a run holds a lock file in the folder (`writerLock`) naming its process
 * id, host and start time; a lock left by a process that no longer runs on this host is taken
 * over, a live one (or one from another host, which cannot be checked) is refused.
 */
import { closeSync, existsSync, fsyncSync, ftruncateSync, fstatSync, mkdirSync, openSync, readFileSync, readSync, renameSync, unlinkSync, writeSync } from 'node:fs';
import { hostname } from 'node:os';
import { dirname, join } from 'node:path';
import { InputError } from '../core/errors';
import type { CandidateRecord, CandidateSettings, Stage } from './evaluate';

export const STREAM_FORMAT = 'shellrank-rank-stream';

export interface StreamHeader {
  format: typeof STREAM_FORMAT;
  version: 1;
  stage: Stage;
  settingsHash: string;
  shard: { index: number; count: number } | null;
  /** Identity of the whole candidate list (shared by the shards of one run). */
  candidateList: string;
  /** Candidates of the whole run (all shards). */
  allCandidates: number;
  /** Number of candidates this stream is meant to hold when complete. */
  candidates: number;
  settings: CandidateSettings;
  data: { file: string | null; sha256: string | null };
  tool: { name: 'shellrank'; version: string };
  /** How the run ranks (not part of the settings hash: results do not depend on it). */
  ranking?: { refineTop: number; alpha?: number; rejectAlpha?: number; sameWithin?: number; nTolerance?: number };
}

/** Where a record sits in a stream file. */
export interface RecordRef {
  path: string;
  offset: number;
  length: number;
}

/**
 * Call `visit(text, start, end)` for every line of a file (without its newline), reading in
 * 1 MiB chunks: constant memory whatever the file size. `end` is the offset after the newline.
 * A last line without a newline is passed with `complete` false.
 */
export function forEachLine(path: string, visit: (text: string, start: number, end: number, complete: boolean) => void): void {
  const fd = openSync(path, 'r');
  const chunk = Buffer.alloc(1 << 20);
  let carry = Buffer.alloc(0);
  let offset = 0;
  try {
    for (;;) {
      const n = readSync(fd, chunk, 0, chunk.length, null);
      const data = n > 0 ? Buffer.concat([carry, chunk.subarray(0, n)]) : carry;
      let from = 0;
      for (;;) {
        const nl = data.indexOf(10, from);
        if (nl < 0) break;
        visit(data.toString('utf8', from, nl), offset + from, offset + nl + 1, true);
        from = nl + 1;
      }
      if (n === 0) {
        if (from < data.length) visit(data.toString('utf8', from), offset + from, offset + data.length, false);
        return;
      }
      carry = Buffer.from(data.subarray(from));
      offset += from;
    }
  } finally {
    closeSync(fd);
  }
}

/** Read and check the header of a stream file. */
export function readStreamHeader(path: string): StreamHeader {
  let header: StreamHeader | null = null;
  let first = true;
  try {
    forEachLine(path, (text) => {
      if (!first) return;
      first = false;
      header = JSON.parse(text) as StreamHeader;
    });
  } catch (error) {
    if (error instanceof SyntaxError) throw new InputError('the first line is not a stream header (JSON)', { file: path, line: 1 });
    throw new InputError(`cannot read (${(error as NodeJS.ErrnoException).code ?? 'error'})`, { file: path });
  }
  const h = header as StreamHeader | null;
  if (!h || h.format !== STREAM_FORMAT) throw new InputError(`not a shellrank stream file (the header lacks "format": "${STREAM_FORMAT}")`, { file: path, line: 1 });
  if (h.version !== 1) throw new InputError(`stream version ${String(h.version)} is not supported (expected 1)`, { file: path, line: 1 });
  return h;
}

/**
 * Visit every complete record of a stream file with its byte range. Records with another
 * settings hash than the header's are refused (InputError naming the line).
 */
export function forEachRecord(path: string, visit: (record: CandidateRecord, ref: RecordRef) => void): StreamHeader {
  const header = readStreamHeader(path);
  let line = 0;
  forEachLine(path, (text, start, end, complete) => {
    line++;
    if (line === 1 || !complete || text.trim() === '') return;
    let record: CandidateRecord;
    try {
      record = JSON.parse(text) as CandidateRecord;
    } catch {
      throw new InputError('a record line is not valid JSON', { file: path, line });
    }
    if (record.settingsHash !== header.settingsHash) {
      throw new InputError(`record of settings ${record.settingsHash} in a stream of settings ${header.settingsHash}`, { file: path, line });
    }
    visit(record, { path, offset: start, length: end - start });
  });
  return header;
}

/** Read one record back by its byte range. */
export function readRecordAt(ref: RecordRef): CandidateRecord {
  const fd = openSync(ref.path, 'r');
  try {
    const buffer = Buffer.alloc(ref.length);
    readSync(fd, buffer, 0, ref.length, ref.offset);
    return JSON.parse(buffer.toString('utf8')) as CandidateRecord;
  } finally {
    closeSync(fd);
  }
}

/** An open stream file being appended to. */
export class StreamWriter {
  /**
   * @param dropped lines dropped when resuming (damaged, of other settings, or repeating a
   *   candidate already recorded).
   */
  private constructor(private fd: number, readonly path: string, readonly done: ReadonlySet<string>, readonly dropped: number) {}

  /**
   * Open a stream for appending: a new file gets the header; an existing one must have the same
   * stage and settings hash (else InputError), its cut last line (if any) is dropped, and the keys
   * of its records are returned in `done` so the run can skip them.
   */
  static open(path: string, header: StreamHeader): StreamWriter {
    mkdirSync(dirname(path), { recursive: true });
    const done = new Set<string>();
    if (existsSync(path)) {
      const existing = readStreamHeader(path);
      if (existing.stage !== header.stage || existing.settingsHash !== header.settingsHash || existing.candidateList !== header.candidateList) {
        throw new InputError(`holds ${existing.stage} results of settings ${existing.settingsHash} for candidates ${existing.candidateList}, not ${header.stage} of ${header.settingsHash} for ${header.candidateList}; use another output folder`, { file: path });
      }
      // keep the header and the first complete record of each candidate; drop everything else
      const kept: { start: number; end: number }[] = [];
      let dropped = 0;
      let keep = 0;
      let line = 0;
      forEachLine(path, (text, start, end, complete) => {
        line++;
        if (line === 1) {
          if (complete) kept.push({ start, end });
          keep = end;
          return;
        }
        if (text.trim() === '') {
          if (complete) dropped++;
          return;
        }
        let record: CandidateRecord | null = null;
        try {
          record = complete ? (JSON.parse(text) as CandidateRecord) : null;
        } catch {
          record = null;
        }
        const fits = record !== null && typeof record === 'object' && typeof record.key === 'string' && record.settingsHash === existing.settingsHash;
        if (!fits || done.has((record as CandidateRecord).key)) {
          if (complete) dropped++;
          return;
        }
        done.add((record as CandidateRecord).key);
        kept.push({ start, end });
        if (dropped === 0) keep = end;
      });
      if (kept.length === 0) throw new InputError('the header line is cut short; remove the file to start over', { file: path, line: 1 });
      if (dropped > 0) rewriteLines(path, kept);
      else {
        const fd = openSync(path, 'r+');
        if (fstatSync(fd).size > keep) ftruncateSync(fd, keep);
        closeSync(fd);
      }
      return new StreamWriter(openSync(path, 'a'), path, done, dropped);
    }
    const fd = openSync(path, 'a');
    writeSync(fd, `${JSON.stringify(header)}\n`);
    return new StreamWriter(fd, path, done, 0);
  }

  /** Append one record as one line (one write call). */
  write(record: CandidateRecord): void {
    writeSync(this.fd, `${JSON.stringify(record)}\n`);
  }

  close(): void {
    if (this.fd >= 0) {
      closeSync(this.fd);
      this.fd = -1;
    }
  }
}

/** Rewrite a file keeping only the given byte ranges (temporary file, fsync, rename). */
function rewriteLines(path: string, ranges: readonly { start: number; end: number }[]): void {
  const temporary = `${path}.repair-${process.pid}`;
  const input = openSync(path, 'r');
  const output = openSync(temporary, 'w');
  try {
    for (const r of ranges) {
      const buffer = Buffer.alloc(r.end - r.start);
      readSync(input, buffer, 0, buffer.length, r.start);
      writeSync(output, buffer);
    }
    fsyncSync(output);
  } finally {
    closeSync(input);
    closeSync(output);
  }
  renameSync(temporary, path);
}

/** Who holds a writer lock. */
export interface LockHolder {
  pid: number;
  host: string;
  started: string;
}

/** A held writer lock; `release` removes it (once). */
export interface WriterLock {
  path: string;
  release(): void;
}

function processRuns(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (error) {
    // EPERM: the process exists but belongs to someone else
    return (error as NodeJS.ErrnoException).code === 'EPERM';
  }
}

function readHolder(path: string): LockHolder | null {
  try {
    const h = JSON.parse(readFileSync(path, 'utf8')) as LockHolder;
    return Number.isInteger(h.pid) && typeof h.host === 'string' ? h : null;
  } catch {
    return null;
  }
}

/**
 * Take the writer lock `name` of a folder (created exclusively, holding this process's id, host
 * and start time). A lock whose holder no longer runs on this host (or that cannot be read) is
 * stale and taken over.
 * @throws InputError naming the holder when another live run (or a run on another host) holds it.
 */
export function writerLock(dir: string, name = 'shellrank.lock'): WriterLock {
  mkdirSync(dir, { recursive: true });
  const path = join(dir, name);
  const me: LockHolder = { pid: process.pid, host: hostname(), started: new Date().toISOString() };
  for (let attempt = 0; attempt < 5; attempt++) {
    try {
      const fd = openSync(path, 'wx');
      try {
        writeSync(fd, `${JSON.stringify(me)}\n`);
      } finally {
        closeSync(fd);
      }
      let released = false;
      return {
        path,
        release() {
          if (released) return;
          released = true;
          const h = readHolder(path);
          if (h && h.pid === me.pid && h.host === me.host && h.started === me.started) unlinkSync(path);
        },
      };
    } catch (error) {
      if ((error as NodeJS.ErrnoException).code !== 'EEXIST') throw error;
    }
    const holder = readHolder(path);
    if (holder && holder.host !== me.host) {
      throw new InputError(`is being written by process ${holder.pid} on host ${holder.host} (since ${holder.started}); if that run has ended, remove ${path}`, { file: dir });
    }
    if (holder && processRuns(holder.pid)) {
      throw new InputError(`is being written by process ${holder.pid} on this host (since ${holder.started}); wait for it or use another output folder`, { file: dir });
    }
    // stale: move it aside under a name of our own, so two runs recovering it do not both win
    const aside = `${path}.stale-${process.pid}`;
    try {
      renameSync(path, aside);
      unlinkSync(aside);
    } catch (error) {
      if ((error as NodeJS.ErrnoException).code !== 'ENOENT') throw error;
    }
  }
  throw new InputError(`cannot take the writer lock ${path} (it keeps changing hands)`, { file: dir });
}
