/**
 * `shellrank screen DATA BASE --absorber EL --vary ...`: generate hypotheses from one base
 * structure (src/rank/screen.ts) and rank them like `rank` does.
 */
import { resolve } from 'node:path';
import type { Command } from 'commander';
import { InputError } from '../../core/errors';
import type { InputRecord } from '../../core/provenance';
import { loadChiOrReduce } from '../../fit/exafs/data';
import { FrameCache, frameRefsOfFile } from '../../rank/candidates';
import { generateVariants, parseVary } from '../../rank/screen';
import { prepareRanking } from '../../rank/setup';
import type { CliIo } from '../io';
import { parseInteger } from '../options';
import { reductionWarnings } from './fit';
import { addRankOptions, executeRanking, parseRankOptions, withDataAbsorber, type RankCliOptions } from './rank';

interface ScreenCliOptions extends RankCliOptions {
  vary?: string[];
  frame: string;
}

export function registerScreen(program: Command, io: CliIo): void {
  addRankOptions(
    program.command('screen')
      .description('generate hypotheses from one structure (substitutions, removed neighbours, strain, absorber sites) and rank them')
      .argument('<data>', 'measured spectrum (XDI or columns, reduced with default settings) or a saved chi(k) JSON')
      .argument('<base>', 'base structure file'),
  )
    .option('--vary <what>', 'substitute:SHELL=EL[,EL], remove:SHELL=K[,K] or K1..K2, strain:FROM..TO/STEP (percent), or site; repeatable (combinations of all)', (v: string, all: string[] = []) => [...all, v])
    .option('--frame <n>', '0-based frame of a multi-frame base file', '0')
    .action(async (dataFile: string, baseFile: string, raw: ScreenCliOptions) => {
      if (!raw.vary || raw.vary.length === 0) throw new InputError('say what to vary (e.g. --vary substitute:O.1=N or --vary strain:-2..2/0.5)', { key: '--vary' });
      const parsed = parseRankOptions(raw, io);
      const { ranking } = parsed;
      const dimensions = raw.vary.map(parseVary);
      const notes: string[] = [];
      // strain hypotheses would be undone by a free expansion factor: fix the distances
      if (dimensions.some((d) => d.kind === 'strain') && raw.distances === undefined) {
        parsed.options.distances = 'fixed';
        notes.push('strain is varied: the refinement keeps every hypothesis\'s distances (no expansion factor); give --distances expand to override');
      }
      // removed neighbours would be absorbed by a free S0^2 for a single shell: fix it
      if (dimensions.some((d) => d.kind === 'remove') && raw.s0sq === undefined && raw.s0sqFrom === undefined) {
        parsed.options.s0sq = 0.9;
        notes.push('coordination numbers are varied: S0^2 is fixed at 0.9 (common practice; give --s0sq VALUE or --s0sq-from FIT.json for your sample)');
      }
      const data = loadChiOrReduce(resolve(io.cwd, dataFile));
      const options = withDataAbsorber(parsed.options, data.chi, dataFile);
      notes.push(...reductionWarnings(data));
      const frame = parseInteger('--frame', raw.frame, 0);
      const refs = frameRefsOfFile(resolve(io.cwd, baseFile), baseFile, { format: raw.format });
      if (frame >= refs.length) throw new InputError(`frame ${frame} does not exist (the file has ${refs.length})`, { file: baseFile, key: '--frame' });
      const ref = refs[frame];
      const structure = new FrameCache((p) => resolve(io.cwd, p)).get(ref);
      const probe = prepareRanking({ name: dataFile, file: dataFile, sha256: data.sha256, chi: data.chi }, [{ kind: 'structure', name: 'base', source: ref }], options, { cwd: io.cwd, cache: raw.cache });
      const s = probe.job.settings;
      const generated = generateVariants(structure, ref, dimensions, { absorber: s.absorber, edge: s.edge, radius: s.radius, tolerance: s.tolerance });
      if (!raw.quiet) {
        io.stderr(`screen: ${generated.generated} combinations, ${generated.duplicates} equivalent to an earlier one, ${generated.skipped.length} impossible; ${generated.specs.length} hypotheses\n`);
        for (const s2 of generated.skipped.slice(0, 5)) io.stderr(`  skipped ${s2.name}: ${s2.reason}\n`);
      }
      // screens default to shared tables from the base's environment, whatever their size
      if (raw.tables === 'auto') options.tables = 'shared';
      const prepared = prepareRanking({ name: dataFile, file: dataFile, sha256: data.sha256, chi: data.chi }, generated.specs, options, {
        cwd: io.cwd, cache: raw.cache, reference: { kind: 'structure', name: 'base', source: ref },
      });
      const inputs: InputRecord[] = [{ role: 'data', file: dataFile, sha256: data.sha256 }, { role: 'base structure', file: baseFile, sha256: ref.sha256 }];
      await executeRanking(io, prepared, raw, ranking, inputs, [resolve(io.cwd, dataFile), resolve(io.cwd, baseFile)], notes);
    });
}
