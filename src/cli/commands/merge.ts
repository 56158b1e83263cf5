/**
 * `shellrank merge STREAMS...`: combine the stream files of the shards of one ranking
 * (`rank`/`screen` with --shard I/N, e.g. one per job of a batch array) into the final ranking.
 */
import { readdirSync, statSync } from 'node:fs';
import { join, resolve } from 'node:path';
import type { Command } from 'commander';
import { InputError } from '../../core/errors';
import { assembleRanking } from '../../rank/run';
import { readStreamHeader } from '../../rank/stream';
import type { CliIo } from '../io';
import { parseInteger, parseNumber } from '../options';
import { presentRanking } from './rank';

interface MergeCliOptions {
  refineTop?: string;
  alpha?: string;
  rejectAlpha?: string;
  sameWithin?: string;
  out?: string;
  json?: boolean;
  markdown?: boolean;
  csv?: boolean;
  limit: string;
}

/** Stream files from the arguments: files as given, folders searched for *.prescreen/refine.jsonl. */
export function collectStreams(inputs: readonly string[], cwd: string): { prescreen: string[]; refine: string[] } {
  const prescreen: string[] = [];
  const refine: string[] = [];
  for (const input of inputs) {
    const path = resolve(cwd, input);
    let stat;
    try {
      stat = statSync(path);
    } catch {
      throw new InputError('no such file or folder', { file: input });
    }
    const files = stat.isDirectory() ? readdirSync(path).filter((n) => n.endsWith('.jsonl')).sort().map((n) => join(path, n)) : [path];
    for (const f of files) {
      if (f.endsWith('.prescreen.jsonl')) prescreen.push(f);
      else if (f.endsWith('.refine.jsonl')) refine.push(f);
      else if (!stat.isDirectory()) throw new InputError('is not a stream file (*.prescreen.jsonl or *.refine.jsonl)', { file: input });
    }
  }
  if (prescreen.length === 0) throw new InputError('no pre-screen stream files (*.prescreen.jsonl) found', { file: inputs.join(', ') });
  const runs = new Set(prescreen.map((f) => { const h = readStreamHeader(f); return `${h.settingsHash}-${h.candidateList}`; }));
  if (runs.size > 1) throw new InputError(`the streams come from ${runs.size} different runs (settings and candidates ${[...runs].join(', ')}); merge one run at a time`, { file: inputs.join(', ') });
  return { prescreen, refine };
}

export function registerMerge(program: Command, io: CliIo): void {
  program.command('merge')
    .description('combine the stream files of the shards of a rank or screen run into the final ranking')
    .argument('<streams...>', 'stream files or folders holding them')
    .option('--refine-top <n>', 'the N of --refine-top (default: as recorded in the streams)')
    .option('--alpha <p>', "significance level of 'worse' (default: as recorded)")
    .option('--reject-alpha <p>', "level below which a candidate is 'rejected' (default: as recorded)")
    .option('--same-within <angstrom>', 'equivalence tolerance of resolved shells, Å (default: as recorded)')
    .option('--out <dir>', 'write ranking.json, ranking.md and ranking.csv into this folder')
    .option('--json', 'print the ranking as JSON')
    .option('--markdown', 'print the ranked table as Markdown')
    .option('--csv', 'print the ranked table as CSV')
    .option('--limit <n>', 'rows of the terminal table', '30')
    .action((inputs: string[], raw: MergeCliOptions) => {
      const streams = collectStreams(inputs, io.cwd);
      const header = readStreamHeader(streams.prescreen[0]);
      const recorded = header.ranking ?? { refineTop: 0 };
      const ranking = {
        refineTop: raw.refineTop !== undefined ? parseInteger('--refine-top', raw.refineTop, 0) : recorded.refineTop,
        alpha: raw.alpha !== undefined ? parseNumber('--alpha', raw.alpha, { min: 0, exclusiveMin: true, max: 1 }) : recorded.alpha,
        rejectAlpha: raw.rejectAlpha !== undefined ? parseNumber('--reject-alpha', raw.rejectAlpha, { min: 0, exclusiveMin: true, max: 1 }) : recorded.rejectAlpha,
        sameWithin: raw.sameWithin !== undefined ? parseNumber('--same-within', raw.sameWithin, { min: 0 }) : recorded.sameWithin,
      };
      const assembled = assembleRanking(streams.prescreen, streams.refine, ranking.refineTop, ranking);
      presentRanking(io, assembled, raw, {
        settings: { ...header.settings, ranking, merged: [...streams.prescreen, ...streams.refine].map((f) => f.replace(`${io.cwd}/`, '')), provider: header.settings.provider },
        inputs: [{ role: 'data', file: header.data.file ?? undefined, sha256: header.data.sha256 ?? '' }],
        protectedInputs: [...streams.prescreen, ...streams.refine],
      });
    });
}
