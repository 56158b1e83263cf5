/**
 * The ranking worker thread: builds its own evaluation context from the job in `workerData`
 * (compiled window, provider, table memo, frame cache), then scores the candidates the pool sends
 * and posts each record back. A candidate that fails is a record with ok = false; anything else
 * that goes wrong is reported to the pool as fatal.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { ComputationError, InputError } from '../core/errors';
import { evaluateCandidate, makeContext, type RankJob } from './evaluate';
import type { WorkerReply, WorkerTask } from './pool';

const port = parentPort;
if (!port) throw new Error('src/rank/worker.ts must run in a worker thread');
let context: ReturnType<typeof makeContext> | null = null;
port.on('message', (message: WorkerTask) => {
  try {
    context ??= makeContext(workerData as RankJob);
    const record = evaluateCandidate(context, message.candidate, message.stage);
    port.postMessage({ type: 'result', seq: message.seq, record } satisfies WorkerReply);
  } catch (error) {
    const e = error instanceof Error ? error : new Error(String(error));
    const reply: WorkerReply = { type: 'fatal', seq: message.seq, message: e.message, stack: e.stack ?? '' };
    if (e instanceof InputError) Object.assign(reply, { kind: 'input', reason: e.reason, where: { file: e.file, line: e.line, key: e.key } });
    else if (e instanceof ComputationError) Object.assign(reply, { kind: 'computation' });
    port.postMessage(reply);
  }
});
