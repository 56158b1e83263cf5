/** `shellrank run STUDY.yaml`: run the refinement a study file describes (ranking to follow). */
import type { Command } from 'commander';
import { relative, resolve } from 'node:path';
import { ComputationError } from '../../core/errors';
import { defaultProviders } from '../../scatter/registry';
import { prepareStudy, type PreparedStudy } from '../../fit/study/compile';
import { readStudyFile } from '../../fit/study/load';
import { runStudy, studyDocument, type StudyFitResult } from '../../fit/study/run';
import type { CliIo } from '../io';
import { emit, textTable, toJson } from '../output';
import { fitResultLines, fmt } from '../fit-text';

export interface RunCliOptions {
  json?: boolean;
  out?: string;
  report?: string;
  provider?: string;
  cache: boolean;
  check?: boolean;
}

/**
 * The text summary of a study fit, in the layout of the `fit` command: header, status, statistics,
 * the parameters declared in the study, the shells (with their data set when there are several),
 * warnings and what the rules expanded to.
 */
export function studyFitText(result: StudyFitResult, prepared: PreparedStudy, display: (path: string) => string = (p) => p): string {
  const several = prepared.datasets.length > 1;
  const perShell = new Set(prepared.eachParameters);
  const lines: string[] = [`study ${prepared.study.file}${prepared.study.input.title ? `: ${prepared.study.input.title}` : ''} (${prepared.provider.name} scattering functions)`];
  for (const ds of prepared.datasets) {
    const d = ds.settings;
    lines.push(`${several ? `${d.name}: ` : ''}fit of ${display(d.structure)} to ${display(d.data)} (${ds.pathSet.absorber} ${ds.pathSet.edge} edge, ${d.fitIn} space, k ${d.kRange.join('-')} 1/Å, R ${d.rRange.join('-')} Å, k-weight ${d.kWeightings.join(',')}${d.temperature !== undefined ? `, ${d.temperature} K` : ''})`);
    lines.push(`${several ? `${d.name}: ` : ''}${ds.data.reducedHere ? `data reduced here with default settings: E0 = ${ds.data.chi.e0.toFixed(2)} eV, edge step ${ds.data.chi.edgeStep.toPrecision(4)}` : 'data: saved reduction'}`);
  }
  lines.push(...fitResultLines(result, { showParameter: (n) => !perShell.has(n), datasetColumn: several, recipe: result.recipe }));
  return lines.join('\n') + '\n';
}

/** What `--check` prints: every parameter and every shell's expressions, nothing fitted. */
export function studyPlanText(prepared: PreparedStudy): string {
  const lines = [`study ${prepared.study.file}: ${prepared.datasets.length} data set${prepared.datasets.length === 1 ? '' : 's'}, ${prepared.parameters.length} parameters, ${prepared.problem.parameters.freeNames.length} free, ${prepared.problem.nIndependent.toFixed(1)} independent points`, ''];
  lines.push(textTable(['parameter', 'state', 'value', 'bounds / expression', 'line'], prepared.parameters.map((p) => [
    p.name, p.state ?? (p.expression !== undefined ? 'tied' : 'free'), p.value === undefined ? '' : String(p.value),
    p.expression ?? (p.lower !== undefined || p.upper !== undefined ? `[${p.lower ?? ''}, ${p.upper ?? ''}]` : ''), String(p.where?.line ?? ''),
  ])));
  for (const ds of prepared.datasets) {
    lines.push(textTable(['data set', 'shell', 'r0 (Å)', 'n', 'r', 'msrd', 'c3', 'c4'], ds.shells.map((s) => [
      ds.settings.name, s.path.id, s.path.r.toFixed(4), s.expressions.n, s.expressions.r, s.expressions.msrd, s.expressions.c3, s.expressions.c4])));
  }
  lines.push(...prepared.warnings.map((w) => `warning: ${w}`), ...prepared.description.map((r) => `recipe: ${r}`));
  return lines.join('\n') + '\n';
}

export function registerRun(program: Command, io: CliIo): void {
  program.command('run')
    .description('run the refinement described by a study file (*.study.yaml)')
    .argument('<study>', 'study file (YAML); relative paths inside it resolve against its folder')
    .option('--json', 'write the fit as JSON')
    .option('--out <file>', 'write to this file instead of the terminal')
    .option('--report <dir>', 'also write the HTML report, tables and plots into this folder')
    .option('--provider <name>', "scattering provider, overriding the study's")
    .option('--no-cache', 'recompute scattering functions instead of reading the on-disk cache')
    .option('--check', 'validate the study and load its inputs, print the expanded rules, fit nothing')
    .action(async (studyFile: string, raw: RunCliOptions) => {
      const study = readStudyFile(resolve(io.cwd, studyFile), studyFile);
      const prepared = prepareStudy(study, { providers: defaultProviders({ cache: raw.cache }), provider: raw.provider });
      const inputs = [resolve(io.cwd, studyFile), ...prepared.datasets.flatMap((d) => [resolve(io.cwd, d.settings.data), resolve(io.cwd, d.settings.structure)])];
      if (raw.check) {
        emit(io, studyPlanText(prepared), raw.out, inputs);
        return;
      }
      const result = runStudy(prepared);
      const doc = studyDocument(result, prepared);
      const json = toJson(doc, 10);
      if (study.input.output?.json !== undefined) {
        emit(io, json, resolve(io.cwd, study.resolvePath(study.input.output.json)), inputs);
      }
      emit(io, raw.json ? json : studyFitText(result, prepared, (p) => relative(io.cwd, p) || p), raw.out, inputs);
      const reportDir = raw.report !== undefined ? resolve(io.cwd, raw.report) : study.input.output?.report !== undefined ? resolve(io.cwd, study.resolvePath(study.input.output.report)) : undefined;
      if (reportDir !== undefined) {
        // the plotting libraries load only when a report is asked for
        const { writeReport } = await import('../../report/index');
        const written = await writeReport(JSON.parse(json), reportDir, { protectedInputs: inputs, title: study.input.title });
        io.stderr(`wrote ${written.html}\n`);
      }
      if (!result.status.converged) {
        throw new ComputationError(`the fit of study ${studyFile} did not converge: ${result.status.message}${raw.out ? ` (result written to ${raw.out})` : ''}`);
      }
    });
}
