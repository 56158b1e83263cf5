/**
 * Scoring many candidates on all cores: a pool of worker threads (node:worker_threads), each with
 * its own evaluation context, fed candidates in the stable order and two at a time (so a worker
 * never waits for its next task). Results are handed to the caller strictly in task order
 * through a reorder buffer; dispatch stops while the buffer holds `window` results, so memory is
 * bounded whatever the number of candidates. With one worker (or `workers: 0`) the candidates
 * are scored on the calling thread, with the same code.
 *
 * Workers run TypeScript through tsx: ./worker-bootstrap.mjs registers tsx's loader in the
 * thread, then imports ./worker.ts.
 */
import { Worker } from 'node:worker_threads';
import { ComputationError, InputError, type InputLocation } from '../core/errors';
import type { Candidate } from './candidates';
import { evaluateCandidate, makeContext, type CandidateRecord, type RankJob, type Stage } from './evaluate';

/** Message from the pool to a worker. */
export interface WorkerTask {
  seq: number;
  candidate: Candidate;
  stage: Stage;
}

/** Message from a worker to the pool. */
export type WorkerReply =
  | { type: 'result'; seq: number; record: CandidateRecord }
  | { type: 'fatal'; seq: number; message: string; stack: string; kind?: 'input' | 'computation'; reason?: string; where?: InputLocation };

export interface PoolOptions {
  /** Number of worker threads (<= 1: score on the calling thread). */
  workers: number;
  /** Called once per task, in task order. */
  onRecord(record: CandidateRecord): void;
  /** Aborting terminates the workers; the promise then rejects with {@link RankInterrupted}. */
  signal?: AbortSignal;
  /** Most results held back waiting for an earlier one (default 64 per worker). */
  window?: number;
}

/** The run was interrupted (the results written so far stay valid for a resume). */
export class RankInterrupted extends Error {
  constructor() {
    super('interrupted');
    this.name = 'RankInterrupted';
  }
}

const BOOTSTRAP = new URL('./worker-bootstrap.mjs', import.meta.url);

interface Batch {
  tasks: readonly { candidate: Candidate; stage: Stage }[];
  options: Omit<PoolOptions, 'workers'>;
  buffer: Map<number, CandidateRecord>;
  nextSeq: number;
  nextEmit: number;
  window: number;
  resolve(): void;
  reject(error: Error): void;
}

/**
 * Worker threads kept alive across batches (the two stages of a run share them, so the start-up
 * of the threads, which compile the TypeScript sources, is paid once). One batch at a time.
 */
export class CandidatePool {
  private workers: Worker[] = [];
  private inFlight: number[] = [];
  private batch: Batch | null = null;
  private context: ReturnType<typeof makeContext> | null = null;
  private broken: Error | null = null;

  /** @param workers threads to use (<= 1: score on the calling thread). */
  constructor(private readonly job: RankJob, private readonly workerCount: number) {}

  /** Score `tasks`; `onRecord` sees every record in task order. */
  async score(tasks: readonly { candidate: Candidate; stage: Stage }[], options: Omit<PoolOptions, 'workers'>): Promise<void> {
    if (tasks.length === 0) return;
    if (options.signal?.aborted) throw new RankInterrupted();
    if (this.broken) throw this.broken;
    const threads = Math.min(Math.max(0, Math.floor(this.workerCount)), Math.max(tasks.length, this.workers.length));
    if (threads <= 1 && this.workers.length === 0) {
      this.context ??= makeContext(this.job);
      for (const task of tasks) {
        if (options.signal?.aborted) throw new RankInterrupted();
        options.onRecord(evaluateCandidate(this.context, task.candidate, task.stage));
        // let signal handlers and timers run between candidates
        await new Promise<void>((resolve) => setImmediate(resolve));
      }
      if (options.signal?.aborted) throw new RankInterrupted();
      return;
    }
    while (this.workers.length < threads) this.spawn();
    await new Promise<void>((resolve, reject) => {
      const onAbort = () => this.fail(new RankInterrupted());
      options.signal?.addEventListener('abort', onAbort, { once: true });
      this.batch = {
        tasks, options, buffer: new Map(), nextSeq: 0, nextEmit: 0, window: options.window ?? 64 * this.workers.length,
        resolve: () => { options.signal?.removeEventListener('abort', onAbort); this.batch = null; resolve(); },
        reject: (error) => { options.signal?.removeEventListener('abort', onAbort); this.batch = null; reject(error); },
      };
      for (let w = 0; w < this.workers.length; w++) this.feed(w);
    });
  }

  /** Stop the threads. */
  async close(): Promise<void> {
    const workers = this.workers;
    this.workers = [];
    await Promise.all(workers.map((w) => w.terminate()));
  }

  private spawn(): void {
    const w = this.workers.length;
    const worker = new Worker(BOOTSTRAP, { workerData: this.job });
    this.workers.push(worker);
    this.inFlight.push(0);
    worker.on('message', (reply: WorkerReply) => this.onReply(w, reply));
    worker.on('error', (error) => this.fail(error));
    worker.on('exit', (code) => {
      if (this.workers.includes(worker)) this.fail(new Error(`a worker thread stopped (exit code ${code}) before the run was complete`));
    });
  }

  private feed(w: number): void {
    const b = this.batch;
    if (!b) return;
    while (this.inFlight[w] < 2 && b.nextSeq < b.tasks.length && b.nextSeq - b.nextEmit < b.window) {
      const seq = b.nextSeq++;
      this.inFlight[w]++;
      this.workers[w].postMessage({ seq, candidate: b.tasks[seq].candidate, stage: b.tasks[seq].stage } satisfies WorkerTask);
    }
  }

  private onReply(w: number, reply: WorkerReply): void {
    this.inFlight[w]--;
    const b = this.batch;
    if (!b) return;
    if (reply.type === 'fatal') {
      // an input or computation error keeps its class across the thread boundary, so the exit
      // code is the same with and without workers
      if (reply.kind === 'input') return this.fail(new InputError(reply.reason ?? reply.message, reply.where ?? {}));
      if (reply.kind === 'computation') return this.fail(new ComputationError(reply.message));
      this.fail(new Error(`worker failed on candidate ${b.tasks[reply.seq]?.candidate.spec.name ?? reply.seq}: ${reply.message}\n${reply.stack}`));
      return;
    }
    b.buffer.set(reply.seq, reply.record);
    try {
      while (b.buffer.has(b.nextEmit)) {
        const record = b.buffer.get(b.nextEmit) as CandidateRecord;
        b.buffer.delete(b.nextEmit);
        b.nextEmit++;
        b.options.onRecord(record);
      }
    } catch (error) {
      this.fail(error instanceof Error ? error : new Error(String(error)));
      return;
    }
    if (b.nextEmit === b.tasks.length) {
      b.resolve();
      return;
    }
    for (let v = 0; v < this.workers.length; v++) this.feed(v);
  }

  /** Stop everything and reject the running batch; the pool cannot be used afterwards. */
  private fail(error: Error): void {
    if (this.broken) return;
    this.broken = error;
    const b = this.batch;
    void this.close().finally(() => b?.reject(error));
  }
}

/** Score `tasks` (candidate + stage) with a pool used once. Resolves when every record was handed over. */
export async function scoreCandidates(job: RankJob, tasks: readonly { candidate: Candidate; stage: Stage }[], options: PoolOptions): Promise<void> {
  const pool = new CandidatePool(job, options.workers);
  try {
    await pool.score(tasks, options);
  } finally {
    await pool.close();
  }
}
