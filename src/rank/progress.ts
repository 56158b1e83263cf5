/**
 * The progress line of a long ranking: stage, a bar, counts, rate and time left, e.g.
 *   "prescreen [##########----------]  512/1024  84.2/s  left 6s".
 * A pure formatter; the command line decides where (and whether) it is shown.
 */

export interface ProgressState {
  stage: string;
  done: number;
  total: number;
  /** Of `done`, how many were found finished from an earlier run (they do not count in the rate). */
  resumed: number;
  /** Milliseconds since this stage started computing. */
  elapsedMs: number;
}

/** "1h02m", "3m05s", "12s". */
export function formatDuration(seconds: number): string {
  if (!Number.isFinite(seconds) || seconds < 0) return '?';
  const s = Math.round(seconds);
  if (s >= 3600) return `${Math.floor(s / 3600)}h${String(Math.floor((s % 3600) / 60)).padStart(2, '0')}m`;
  if (s >= 60) return `${Math.floor(s / 60)}m${String(s % 60).padStart(2, '0')}s`;
  return `${s}s`;
}

/** One progress line of at most about `width` characters (bar width adapts). */
export function formatProgress(state: ProgressState, width = 80): string {
  const { stage, done, total, resumed, elapsedMs } = state;
  const computed = done - resumed;
  const rate = elapsedMs > 0 ? computed / (elapsedMs / 1000) : 0;
  const left = rate > 0 ? (total - done) / rate : NaN;
  const counts = `${String(done).padStart(String(total).length)}/${total}`;
  const tail = `${counts}  ${rate > 0 ? rate.toFixed(rate >= 100 ? 0 : 1) : '-'}/s  left ${done >= total ? '0s' : formatDuration(left)}${resumed > 0 ? `  (${resumed} resumed)` : ''}`;
  const barWidth = Math.max(10, Math.min(40, width - stage.length - tail.length - 5));
  const filled = total > 0 ? Math.round((barWidth * done) / total) : barWidth;
  return `${stage} [${'#'.repeat(filled)}${'-'.repeat(barWidth - filled)}] ${tail}`;
}
